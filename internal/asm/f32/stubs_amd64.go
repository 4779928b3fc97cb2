//go:build !noasm && !purego

package f32

// Best2 updates, for each of the m = len(idx) rows x_i of x (packed in
// panels of Panel rows, see Pack), the two smallest values of
// norm2[j] − 2·x_i·c_j over the centers j0 ≤ j < j1 of c (row-major, d
// columns), and the index j of the smallest, all in float32. It is
//
//	for i := range idx {
//		for j := j0; j < j1; j++ {
//			var dot float32
//			for t, v := range c[j*d : (j+1)*d] {
//				dot += x[i/Panel*Panel*d+t*Panel+i%Panel] * v
//			}
//			v := norm2[j] - 2*dot
//			if v < best[i] {
//				second[i], best[i], idx[i] = best[i], v, int32(j)
//			} else if v < second[i] {
//				second[i] = v
//			}
//		}
//	}
//
// except that the dot products may be summed in any order and with fused
// multiply-adds (see nearest.Centers32 for the rounding bound this
// allows). Lanes of the last panel of x beyond m are read but never
// written back. Initialise best and second to +Inf to start a search;
// calls over consecutive ranges of centers continue it. On equal values
// the earlier index stays best, and the second best then equals the best;
// NaN values are never recorded.
//
// It panics if j0 < 0, j1 < j0, j1 > MaxInt32, d < 1, len(best) or
// len(second) < m, len(x) < PackedLen(m, d), len(c) < j1·d or
// len(norm2) < j1.
func Best2(idx []int32, best, second, x []float32, d int, c, norm2 []float32, j0, j1 int) {
	m := len(idx)
	checkBest2(m, len(best), len(second), len(x), d, len(c), len(norm2), j0, j1)
	if m == 0 || j0 == j1 {
		return
	}
	switch {
	case hasAVX512:
		best2AVX512(&idx[0], &best[0], &second[0], &x[0], m, d, &c[0], &norm2[0], j0, j1)
	case hasAVX2FMA:
		best2AVX2(&idx[0], &best[0], &second[0], &x[0], m, d, &c[0], &norm2[0], j0, j1)
	default:
		best2Generic(idx, best, second, x, d, c, norm2, j0, j1)
	}
}

// Kernel declarations (assembly in best2_*_amd64.s). Pointers are to the
// first elements of slices whose lengths Best2 and PackShift have checked.

//go:noescape
func best2AVX512(idx *int32, best, second *float32, x *float32, m, d int, c, norm2 *float32, j0, j1 int)

//go:noescape
func best2AVX2(idx *int32, best, second *float32, x *float32, m, d int, c, norm2 *float32, j0, j1 int)

//go:noescape
func packShiftAVX512(dst, r2, x, shift *float32, panels, d int)

//go:noescape
func fmaLoopAVX512(n int)

//go:noescape
func addScaledAVX512(dst *float64, alpha float64, x *float32, n int)

//go:noescape
func fmaLoopAVX2(n int)

// PackShift writes the m rows of x (m×d row-major, d = len(shift)) minus
// shift into dst in the packed layout of Pack (padded lanes zero), each
// difference rounded once to float32, and each row's squared norm
// ‖x_i − shift‖² (float32, summed in any order) into r2. It returns dst.
// It panics if len(shift) < 1, len(dst) < PackedLen(m, d), len(r2) < m or
// len(x) < m·d.
func PackShift(dst, r2, x, shift []float32, m int) []float32 {
	d := len(shift)
	checkPackShift(len(dst), len(r2), len(x), d, m)
	lo := 0
	if hasAVX512 && m >= Panel {
		packShiftAVX512(&dst[0], &r2[0], &x[0], &shift[0], m/Panel, d)
		lo = m / Panel * Panel
	}
	packShiftGeneric(dst, r2, x, shift, lo, m)
	return dst[:PackedLen(m, d)]
}

// PeakLoop runs n iterations of twelve independent chains of float32
// fused multiply-adds on the vectors of the kernel Best2 runs (zmm for
// avx512, ymm for avx2, scalar for go) and returns the floating-point
// operations performed, 2·lanes·12·n. Divided by its time it is the
// one-thread peak rate that benchmarks compare the kernels with.
func PeakLoop(n int) float64 {
	switch {
	case hasAVX512:
		fmaLoopAVX512(n)
		return 2 * 16 * 12 * float64(n)
	case hasAVX2FMA:
		fmaLoopAVX2(n)
		return 2 * 8 * 12 * float64(n)
	}
	peakGeneric(n)
	return 2 * 12 * float64(n)
}

// Kernel names the implementation Best2 runs: "go" for the pure-Go code,
// "avx2" or "avx512" for the assembly chosen from the processor's features.
func Kernel() string {
	switch {
	case hasAVX512:
		return "avx512"
	case hasAVX2FMA:
		return "avx2"
	}
	return "go"
}

// AddScaled sets dst[i] += alpha·float64(x[i]) for i < len(x), with the
// product and the sum each rounded to float64 (a multiplication and an
// addition, never a fused multiply-add): the bits of gonum's
// floats.AddScaled on the widened row where gonum runs its amd64
// assembly. It reports whether it ran; it does nothing and returns false
// where no AVX-512 kernel exists, and the caller then widens the row
// itself. It panics if len(dst) < len(x).
func AddScaled(dst []float64, alpha float64, x []float32) bool {
	if !hasAVX512 {
		return false
	}
	if len(dst) < len(x) {
		panic(panicShort)
	}
	if len(x) > 0 {
		addScaledAVX512(&dst[0], alpha, &x[0], len(x))
	}
	return true
}
