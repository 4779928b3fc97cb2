package nearest

// Best2 updates, for each of the m = len(idx) rows x_i of x (row-major, d
// columns), the two smallest values of norm2[j] − 2·x_i·c_j over the
// k = len(norm2) centers c_j of c (row-major, d columns), and the index
// j0+j of the smallest. It is
//
//	for i := range idx {
//		xi := x[i*d : (i+1)*d]
//		for j := range norm2 {
//			var dot float64
//			for t, v := range c[j*d : (j+1)*d] {
//				dot += xi[t] * v
//			}
//			v := norm2[j] - 2*dot
//			if v < best[i] {
//				second[i], best[i], idx[i] = best[i], v, j0+j
//			} else if v < second[i] {
//				second[i] = v
//			}
//		}
//	}
//
// except that the dot products may be summed in any order. Initialise best
// and second to +Inf to start a search; calls over consecutive ranges of
// centers (j0 advancing) continue it. On equal values the earlier index
// stays best, and the second best then equals the best.
//
// It panics if len(best) or len(second) < m, len(x) < m·d or len(c) < k·d.
func Best2(idx []int, best, second, x []float64, d int, c, norm2 []float64, j0 int) {
	best2Go(idx, best, second, x, d, c, norm2, j0)
}
