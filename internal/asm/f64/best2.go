package f64

// Panel is the number of centers in one panel of the packed layout that
// Best2 reads.
const Panel = 8

const (
	panicShort = "f64: slice too short"
	panicRange = "f64: center range out of order"
)

// PackedLen returns the length of the packed center slice for k centers of
// dimension d: whole panels of Panel centers, d·Panel values each.
func PackedLen(k, d int) int { return (k + Panel - 1) / Panel * Panel * d }

// best2Generic is the pure-Go Best2. Rows are taken two at a time and
// centers four at a time (half a panel), so that eight independent dot
// products share each load of a row or center element.
func best2Generic(idx []int, best, second, x []float64, d int, c, norm2 []float64, j0, j1 int) {
	m := len(idx)
	checkBest2(m, len(best), len(second), len(x), d, len(c), len(norm2), j0, j1)
	if m == 0 || j0 == j1 {
		return
	}
	best, second = best[:m], second[:m]
	p0, p1 := j0/Panel, (j1+Panel-1)/Panel
	i := 0
	for ; i+2 <= m; i += 2 {
		x0 := x[i*d : i*d+d]
		x1 := x[i*d+d : i*d+2*d][:len(x0)]
		for p := p0; p < p1; p++ {
			panel := c[p*Panel*d : (p+1)*Panel*d]
			for h := 0; h < Panel; h += 4 {
				lo := p*Panel + h
				if lo+4 <= j0 || lo >= j1 {
					continue
				}
				var s00, s01, s02, s03, s10, s11, s12, s13 float64
				q := panel[h:]
				for t, a0 := range x0 {
					a1 := x1[t]
					q0, q1, q2, q3 := q[0], q[1], q[2], q[3]
					s00 += a0 * q0
					s01 += a0 * q1
					s02 += a0 * q2
					s03 += a0 * q3
					s10 += a1 * q0
					s11 += a1 * q1
					s12 += a1 * q2
					s13 += a1 * q3
					if len(q) > Panel {
						q = q[Panel:]
					}
				}
				n := norm2[lo : lo+4 : lo+4]
				if lo >= j0 && lo+4 <= j1 {
					push(idx, best, second, i, lo, n[0]-2*s00)
					push(idx, best, second, i, lo+1, n[1]-2*s01)
					push(idx, best, second, i, lo+2, n[2]-2*s02)
					push(idx, best, second, i, lo+3, n[3]-2*s03)
					push(idx, best, second, i+1, lo, n[0]-2*s10)
					push(idx, best, second, i+1, lo+1, n[1]-2*s11)
					push(idx, best, second, i+1, lo+2, n[2]-2*s12)
					push(idx, best, second, i+1, lo+3, n[3]-2*s13)
					continue
				}
				r0 := [4]float64{s00, s01, s02, s03}
				r1 := [4]float64{s10, s11, s12, s13}
				for l := range 4 {
					if j := lo + l; j >= j0 && j < j1 {
						push(idx, best, second, i, j, n[l]-2*r0[l])
						push(idx, best, second, i+1, j, n[l]-2*r1[l])
					}
				}
			}
		}
	}
	if i < m {
		x0 := x[i*d : i*d+d]
		for p := p0; p < p1; p++ {
			panel := c[p*Panel*d : (p+1)*Panel*d]
			for h := 0; h < Panel; h += 4 {
				lo := p*Panel + h
				if lo+4 <= j0 || lo >= j1 {
					continue
				}
				var s0, s1, s2, s3 float64
				q := panel[h:]
				for _, a := range x0 {
					s0 += a * q[0]
					s1 += a * q[1]
					s2 += a * q[2]
					s3 += a * q[3]
					if len(q) > Panel {
						q = q[Panel:]
					}
				}
				r := [4]float64{s0, s1, s2, s3}
				for l := range 4 {
					if j := lo + l; j >= j0 && j < j1 {
						push(idx, best, second, i, j, norm2[j]-2*r[l])
					}
				}
			}
		}
	}
}

// checkBest2 panics unless the lengths suit Best2.
func checkBest2(m, nBest, nSecond, nx, d, nc, nNorm, j0, j1 int) {
	if j0 < 0 || j1 < j0 || d < 1 {
		panic(panicRange)
	}
	if nBest < m || nSecond < m || nx < m*d || (j1 > j0 && (nc < PackedLen(j1, d) || nNorm < PackedLen(j1, 1))) {
		panic(panicShort)
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
