//go:build !amd64 || noasm || purego

package f64

// Best2 updates, for each of the m = len(idx) rows x_i of x (packed in
// panels of Panel rows, see Pack), the two smallest values of
// norm2[j] − 2·x_i·c_j over the centers j0 ≤ j < j1 of c (row-major, d
// columns), and the index j of the smallest. It is
//
//	for i := range idx {
//		for j := j0; j < j1; j++ {
//			var dot float64
//			for t, v := range c[j*d : (j+1)*d] {
//				dot += x[i/Panel*Panel*d+t*Panel+i%Panel] * v
//			}
//			v := norm2[j] - 2*dot
//			if v < best[i] {
//				second[i], best[i], idx[i] = best[i], v, j
//			} else if v < second[i] {
//				second[i] = v
//			}
//		}
//	}
//
// except that the dot products may be summed in any order and with fused
// multiply-adds (see nearest.Centers for the rounding bound this allows).
// Lanes of the last panel of x beyond m are read but never written back.
// Initialise best and second to +Inf to start a search; calls over
// consecutive ranges of centers continue it. On equal values the earlier
// index stays best, and the second best then equals the best; NaN values
// are never recorded.
//
// It panics if j0 < 0, j1 < j0, d < 1, len(best) or len(second) < m,
// len(x) < PackedLen(m, d), len(c) < j1·d or len(norm2) < j1.
func Best2(idx []int, best, second, x []float64, d int, c, norm2 []float64, j0, j1 int) {
	best2Generic(idx, best, second, x, d, c, norm2, j0, j1)
}

// Best2Row returns, for the one row x − shift (d = len(x) values), the
// two smallest values of norm2[j] − 2·(x−shift)·c_j over the k centers of
// c (packed in panels, see Pack) other than exclude, the index of the
// smallest, and ‖x−shift‖² (each summed in any order). It is Best2's loop
// for one row with the roles of the layout swapped: the centers are
// packed, so that one panel of centers is one vector. Pass exclude = −1
// to search all centers. best and second are +Inf (and j is 0) when no
// value is below +Inf. It allocates nothing for d ≤ 64.
//
// It panics if d < 1, k < 1, len(shift) < d, len(c) < PackedLen(k, d) or
// len(norm2) < PackedLen(k, 1).
func Best2Row(x, shift []float64, c, norm2 []float64, k, exclude int) (j int, best, second, r2 float64) {
	return best2RowGeneric(x, shift, c, norm2, k, exclude)
}

// PackShift writes the m rows of x (m×d row-major, d = len(shift)) minus
// shift into dst in the packed layout of Pack (padded lanes zero), and
// each row's squared norm ‖x_i − shift‖² (summed in any order) into r2. It
// returns dst. It panics if len(shift) < 1, len(dst) < PackedLen(m, d),
// len(r2) < m or len(x) < m·d.
func PackShift(dst, r2, x, shift []float64, m int) []float64 {
	checkPackShift(len(dst), len(r2), len(x), len(shift), m)
	packShiftGeneric(dst, r2, x, shift, 0, m)
	return dst[:PackedLen(m, len(shift))]
}

// PeakLoop runs n iterations of twelve independent chains of fused
// multiply-adds on the vectors of the kernel Best2 runs (zmm for avx512,
// ymm for avx2, scalar math.FMA for go) and returns the floating-point
// operations performed, 2·lanes·12·n. Divided by its time it is the
// one-thread peak rate that benchmarks compare the kernels with.
func PeakLoop(n int) float64 {
	peakGeneric(n)
	return 2 * 12 * float64(n)
}

// Affine sets dst[t] = (x[t] − shift[t]) / div[t] for t < len(x), each
// element with exactly these two operations, and returns the first t at
// which dst[t] is not finite (NaN or ±Inf), or −1. dst holds every
// element up to that t. It panics if dst, shift or div is shorter than x.
func Affine(dst, x, shift, div []float64) int {
	return affineGeneric(dst, x, shift, div)
}

// Kernel names the implementation Best2 runs: "go", the pure-Go code.
func Kernel() string { return "go" }
