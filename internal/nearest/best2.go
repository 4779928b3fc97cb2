package nearest

const panicShort = "nearest: slice too short"

// best2Go is the pure-Go Best2. Rows are taken four at a time and centers
// two at a time, so that eight independent dot products share each load of
// a row or center element (a register tile, as in a matrix product); the
// remainders use smaller tiles.
func best2Go(idx []int, best, second, x []float64, d int, c, norm2 []float64, j0 int) {
	m, k := len(idx), len(norm2)
	if len(best) < m || len(second) < m || len(x) < m*d || len(c) < k*d {
		panic(panicShort)
	}
	if m == 0 || k == 0 {
		return
	}
	best, second = best[:m], second[:m]
	i := 0
	for ; i+4 <= m; i += 4 {
		x0 := x[i*d : i*d+d]
		x1 := x[i*d+d : i*d+2*d][:len(x0)]
		x2 := x[i*d+2*d : i*d+3*d][:len(x0)]
		x3 := x[i*d+3*d : i*d+4*d][:len(x0)]
		j := 0
		for ; j+2 <= k; j += 2 {
			c0 := c[j*d : j*d+d][:len(x0)]
			c1 := c[j*d+d : j*d+2*d][:len(x0)]
			var s00, s01, s10, s11, s20, s21, s30, s31 float64
			for t, a0 := range x0 {
				b0, b1 := c0[t], c1[t]
				a1, a2, a3 := x1[t], x2[t], x3[t]
				s00 += a0 * b0
				s01 += a0 * b1
				s10 += a1 * b0
				s11 += a1 * b1
				s20 += a2 * b0
				s21 += a2 * b1
				s30 += a3 * b0
				s31 += a3 * b1
			}
			n0, n1 := norm2[j], norm2[j+1]
			push(idx, best, second, i, j0+j, n0-2*s00)
			push(idx, best, second, i, j0+j+1, n1-2*s01)
			push(idx, best, second, i+1, j0+j, n0-2*s10)
			push(idx, best, second, i+1, j0+j+1, n1-2*s11)
			push(idx, best, second, i+2, j0+j, n0-2*s20)
			push(idx, best, second, i+2, j0+j+1, n1-2*s21)
			push(idx, best, second, i+3, j0+j, n0-2*s30)
			push(idx, best, second, i+3, j0+j+1, n1-2*s31)
		}
		if j < k {
			c0 := c[j*d : j*d+d][:len(x0)]
			var s0, s1, s2, s3 float64
			for t, b := range c0 {
				s0 += x0[t] * b
				s1 += x1[t] * b
				s2 += x2[t] * b
				s3 += x3[t] * b
			}
			n := norm2[j]
			push(idx, best, second, i, j0+j, n-2*s0)
			push(idx, best, second, i+1, j0+j, n-2*s1)
			push(idx, best, second, i+2, j0+j, n-2*s2)
			push(idx, best, second, i+3, j0+j, n-2*s3)
		}
	}
	for ; i < m; i++ {
		xi := x[i*d : i*d+d]
		for j, n := range norm2 {
			cj := c[j*d : j*d+d][:len(xi)]
			var s0, s1 float64
			t := 0
			for ; t+2 <= len(xi); t += 2 {
				s0 += xi[t] * cj[t]
				s1 += xi[t+1] * cj[t+1]
			}
			if t < len(xi) {
				s0 += xi[t] * cj[t]
			}
			push(idx, best, second, i, j0+j, n-2*(s0+s1))
		}
	}
}

// push records value v of center j for row i.
func push(idx []int, best, second []float64, i, j int, v float64) {
	if v < second[i] { // rarely true once a few centers have been seen
		if v < best[i] {
			second[i] = best[i]
			best[i] = v
			idx[i] = j
		} else {
			second[i] = v
		}
	}
}
