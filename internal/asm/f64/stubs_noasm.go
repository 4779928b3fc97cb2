//go:build !amd64 || noasm || purego

package f64

// Best2 updates, for each of the m = len(idx) rows x_i of x (row-major, d
// columns), the two smallest values of norm2[j] − 2·x_i·c_j over the
// centers j0 ≤ j < j1 of the packed set c, and the index j of the
// smallest. It is
//
//	for i := range idx {
//		xi := x[i*d : (i+1)*d]
//		for j := j0; j < j1; j++ {
//			var dot float64
//			for t, v := range xi {
//				dot += v * c[j/Panel*Panel*d+t*Panel+j%Panel]
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
// Panel p of c holds centers p·Panel … p·Panel+Panel−1, coordinate by
// coordinate: element t of center j is c[p·Panel·d + t·Panel + j−p·Panel].
// Lanes of a panel outside [j0, j1) are read but never recorded. Initialise
// best and second to +Inf to start a search; calls over consecutive ranges
// of centers continue it. On equal values the earlier index stays best, and
// the second best then equals the best; NaN values are never recorded.
//
// It panics if j0 < 0, j1 < j0, d < 1, len(best) or len(second) < m,
// len(x) < m·d, or (for j1 > j0) len(c) < PackedLen(j1, d) or
// len(norm2) < PackedLen(j1, 1).
func Best2(idx []int, best, second, x []float64, d int, c, norm2 []float64, j0, j1 int) {
	best2Generic(idx, best, second, x, d, c, norm2, j0, j1)
}

// Kernel names the implementation Best2 runs: "go", the pure-Go code.
func Kernel() string { return "go" }
