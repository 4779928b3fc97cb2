package nearest

import "math"

// Centers is a set of k centers in d dimensions prepared for the kernel
// f64.Best2: shifted by a common vector (their mean), with their squared
// norms. Pack it once per set of
// centers; afterwards it is read-only and may be shared by concurrent
// Searchers. The zero value is empty and ready for Pack.
type Centers struct {
	k, d     int
	shift    []float64 // subtracted from rows and centers: the mean of the centers
	c        []float64 // shifted centers, k×d row-major
	norm2    []float64 // ‖c_j‖² in floating point
	maxNorm2 float64   // max_j norm2[j]
	round    Rounding
}

// Pack prepares the k centers in c (k×d row-major), reusing the receiver's
// buffers. It panics if k < 1, d < 1 or len(c) < k·d.
//
// # Rounding bound
//
// Let u = 2⁻⁵³, x' = fl(x−s) and c' = fl(c−s) for the shift s, r = ‖x'‖,
// ρ = ‖c'‖ and R = r+ρ. A dot product or squared norm of length d computed
// in floating point, in any order, with or without fused multiply-adds, is
// within γ_d·Σ|a_t b_t| ≤ γ_d·‖a‖‖b‖ of its exact value (Higham 2002,
// §3.1; a fused multiply-add rounds once where a multiply and an add round
// twice, so the count of roundings on any path only drops). The kernel
// computes v = fl(‖c'‖² − 2·x'·c'), as one fused multiply-add or as a
// multiply and a subtraction, so with D' = ‖x'−c'‖²:
//
//   - |v + ‖x'‖² − D'| ≤ (d+2)·u·R²(1+ε) (dot product, norm, the final
//     subtraction), plus d·u·r² for the computed ‖x'‖² when it is added;
//   - the shift rounds each coordinate by at most u of its magnitude, so
//     the exact ‖x−c‖² = D differs from D' by at most 2·u·R²(1+3u);
//   - a direct computation f = fl(Σ(x_t−c_t)²) in any order is within
//     (d+2)·u·D ≤ (d+2)·u·R²(1+2u) of D.
//
// So every quantity the search compares is within (2d+6)·u·R²·(1+ε) of
// the others; Rounding.Slack uses T = (2d+16)·u·2(r²+ρ_max²) + 2⁻⁹⁰⁰ ≥
// (2d+16)·u·(r+ρ_max)² + 2⁻⁹⁰⁰, which also absorbs the rounding of the
// computed r² and ρ_max² themselves, of T, and of one
// addition and one subtraction of T when T is turned into bounds, for any
// d ≪ 1/u. The last term covers underflow. The proof does not depend on
// the order of the sums, so every kernel (pure Go, AVX2, AVX-512) and
// every register tiling is covered by the same T.
//
// The float32 kernel fits the same argument with u₃₂ = 2⁻²⁴ in place of u
// for the rounding of x', c' and every float32 operation: see
// Centers32.Pack and Rounding.Slack32.
func (p *Centers) Pack(c []float64, k, d int) {
	if k < 1 || d < 1 || len(c) < k*d {
		panic("nearest: Pack needs k ≥ 1, d ≥ 1 and len(c) ≥ k·d")
	}
	p.k, p.d, p.round = k, d, NewRounding(d)
	p.shift = grow(p.shift, d)
	p.c = grow(p.c, k*d)
	p.norm2 = grow(p.norm2, k)
	clear(p.shift)
	for j := range k {
		for t, v := range c[j*d : (j+1)*d] {
			p.shift[t] += v
		}
	}
	for t := range p.shift {
		p.shift[t] /= float64(k)
	}
	var maxN2 float64
	for j := range k {
		dst := p.c[j*d : (j+1)*d]
		var n2 float64
		for t, v := range c[j*d : (j+1)*d] {
			w := v - p.shift[t]
			dst[t] = w
			n2 += w * w
		}
		p.norm2[j] = n2
		maxN2 = math.Max(maxN2, n2)
	}
	p.maxNorm2 = maxN2
}

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

func growInt(s []int, n int) []int {
	if cap(s) < n {
		return make([]int, n)
	}
	return s[:n]
}
