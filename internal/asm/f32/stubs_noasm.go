//go:build !amd64 || noasm || purego

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
	best2Generic(idx, best, second, x, d, c, norm2, j0, j1)
}

// PackShift writes the m rows of x (m×d row-major, d = len(shift)) minus
// shift into dst in the packed layout of Pack (padded lanes zero), each
// difference rounded once to float32, and each row's squared norm
// ‖x_i − shift‖² (float32, summed in any order) into r2. It returns dst.
// It panics if len(shift) < 1, len(dst) < PackedLen(m, d), len(r2) < m or
// len(x) < m·d.
func PackShift(dst, r2, x, shift []float32, m int) []float32 {
	checkPackShift(len(dst), len(r2), len(x), len(shift), m)
	packShiftGeneric(dst, r2, x, shift, 0, m)
	return dst[:PackedLen(m, len(shift))]
}

// PeakLoop runs n iterations of twelve independent chains of float32
// multiply-adds in scalar code and returns the floating-point operations
// performed, 2·12·n. Divided by its time it is the one-thread peak rate
// that benchmarks compare the kernels with.
func PeakLoop(n int) float64 {
	peakGeneric(n)
	return 2 * 12 * float64(n)
}

// Kernel names the implementation Best2 runs: "go", the pure-Go code.
func Kernel() string { return "go" }

// AddScaled would set dst[i] += alpha·float64(x[i]) with a kernel; this
// build has none, so it does nothing and returns false (the caller then
// widens the row itself). It panics if len(dst) < len(x).
func AddScaled(dst []float64, alpha float64, x []float32) bool {
	if len(dst) < len(x) {
		panic(panicShort)
	}
	return false
}
