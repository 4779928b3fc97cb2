package f32

import (
	"math"
	"runtime"
)

var inf = float32(math.Inf(1))

// Panel is the number of rows in one panel of the packed layout (see Pack):
// one 512-bit vector of float32.
const Panel = 16

const (
	panicShort = "f32: slice too short"
	panicRange = "f32: center range out of order"
)

// PackedLen returns the length of n rows of dimension d in the packed
// layout: whole panels of Panel rows, d·Panel values each.
func PackedLen(n, d int) int { return (n + Panel - 1) / Panel * Panel * d }

// Pack writes the n rows of src (n×d row-major) into dst in the packed
// layout and returns dst: panel p holds rows p·Panel … p·Panel+Panel−1,
// coordinate by coordinate, so that element t of row i is
// dst[i/Panel·Panel·d + t·Panel + i%Panel]. Lanes of the last panel beyond
// n are set to pad. It panics if len(dst) < PackedLen(n, d) or
// len(src) < n·d.
func Pack(dst, src []float32, n, d int, pad float32) []float32 {
	if len(dst) < PackedLen(n, d) || len(src) < n*d {
		panic(panicShort)
	}
	dst = dst[:PackedLen(n, d)]
	for i := n; i < (n+Panel-1)/Panel*Panel; i++ {
		base := i / Panel * Panel * d
		for t := range d {
			dst[base+t*Panel+i%Panel] = pad
		}
	}
	for i := range n {
		row := src[i*d : (i+1)*d]
		out := dst[i/Panel*Panel*d+i%Panel:]
		for t, v := range row {
			out[t*Panel] = v
		}
	}
	return dst
}

// best2Generic is the pure-Go Best2. Rows are taken four at a time and
// centers two at a time, so that eight independent dot products share
// each load of a row or center element.
func best2Generic(idx []int32, best, second, x []float32, d int, c, norm2 []float32, j0, j1 int) {
	m := len(idx)
	checkBest2(m, len(best), len(second), len(x), d, len(c), len(norm2), j0, j1)
	if m == 0 || j0 == j1 {
		return
	}
	best, second = best[:m], second[:m]
	for i0 := 0; i0 < m; i0 += 4 {
		p, h := i0/Panel, i0%Panel
		panel := x[p*Panel*d : (p+1)*Panel*d]
		rows := min(4, m-i0)
		j := j0
		for ; j+2 <= j1; j += 2 {
			c0 := c[j*d : j*d+d]
			c1 := c[j*d+d : j*d+2*d][:len(c0)]
			var s00, s01, s02, s03, s10, s11, s12, s13 float32
			q := panel[h:]
			for t, b0 := range c0 {
				b1 := c1[t]
				q0, q1, q2, q3 := q[0], q[1], q[2], q[3]
				s00 += q0 * b0
				s01 += q1 * b0
				s02 += q2 * b0
				s03 += q3 * b0
				s10 += q0 * b1
				s11 += q1 * b1
				s12 += q2 * b1
				s13 += q3 * b1
				if len(q) > Panel {
					q = q[Panel:]
				}
			}
			n0, n1 := norm2[j], norm2[j+1]
			r0 := [4]float32{s00, s01, s02, s03}
			r1 := [4]float32{s10, s11, s12, s13}
			for l := range rows {
				push(idx, best, second, i0+l, j, n0-2*r0[l])
				push(idx, best, second, i0+l, j+1, n1-2*r1[l])
			}
		}
		if j < j1 {
			c0 := c[j*d : j*d+d]
			var s0, s1, s2, s3 float32
			q := panel[h:]
			for _, b := range c0 {
				s0 += q[0] * b
				s1 += q[1] * b
				s2 += q[2] * b
				s3 += q[3] * b
				if len(q) > Panel {
					q = q[Panel:]
				}
			}
			r := [4]float32{s0, s1, s2, s3}
			for l := range rows {
				push(idx, best, second, i0+l, j, norm2[j]-2*r[l])
			}
		}
	}
}

// checkBest2 panics unless the lengths suit Best2.
func checkBest2(m, nBest, nSecond, nx, d, nc, nNorm, j0, j1 int) {
	if j0 < 0 || j1 < j0 || d < 1 || j1 > math.MaxInt32 {
		panic(panicRange)
	}
	if nBest < m || nSecond < m || nx < PackedLen(m, d) || nc < j1*d || nNorm < j1 {
		panic(panicShort)
	}
}

// push records value v of center j for row i.
func push(idx []int32, best, second []float32, i, j int, v float32) {
	if v < second[i] {
		if v < best[i] {
			second[i] = best[i]
			best[i] = v
			idx[i] = int32(j)
		} else {
			second[i] = v
		}
	}
}

// packShiftGeneric is the pure-Go PackShift for rows lo ≤ i < m; it also
// zeroes the padded lanes of the last panel.
func packShiftGeneric(dst, r2, x, shift []float32, lo, m int) {
	d := len(shift)
	for i := m; i < (m+Panel-1)/Panel*Panel; i++ {
		for t := range d {
			dst[i/Panel*Panel*d+t*Panel+i%Panel] = 0
		}
	}
	for i := lo; i < m; i++ {
		src := x[i*d : (i+1)*d][:len(shift)]
		out := dst[i/Panel*Panel*d+i%Panel:]
		var s float32
		for t, v := range src {
			w := v - shift[t]
			out[t*Panel] = w
			s += w * w
		}
		r2[i] = s
	}
}

// checkPackShift panics unless the lengths suit PackShift.
func checkPackShift(nDst, nR2, nx, d, m int) {
	if d < 1 || m < 0 {
		panic(panicRange)
	}
	if nDst < PackedLen(m, d) || nR2 < m || nx < m*d {
		panic(panicShort)
	}
}

// peakGeneric is PeakLoop's scalar loop.
func peakGeneric(n int) {
	var s0, s1, s2, s3, s4, s5, s6, s7, s8, s9, s10, s11 float32
	a, b := float32(1.0000001), float32(1e-9)
	for range n {
		s0 += a * b
		s1 += a * b
		s2 += a * b
		s3 += a * b
		s4 += a * b
		s5 += a * b
		s6 += a * b
		s7 += a * b
		s8 += a * b
		s9 += a * b
		s10 += a * b
		s11 += a * b
	}
	runtime.KeepAlive(s0 + s1 + s2 + s3 + s4 + s5 + s6 + s7 + s8 + s9 + s10 + s11) // keeps the chains alive
}
