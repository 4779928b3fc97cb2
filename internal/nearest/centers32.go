package nearest

import (
	"math"

	"github.com/centroidlab/centroid/internal/asm/f64"
)

// Centers32 is a set of k centers in d dimensions prepared for the float32
// kernel f32.Best2 (searched with Searcher32): shifted by a common float32
// vector s (their mean, rounded), rounded to float32, with their squared
// norms; and, for the rows whose float32 answer is not certain, the same
// centers prepared in float64 for f64.Best2Row. Pack it once per set of
// centers; afterwards it is read-only and may be shared by concurrent
// Searcher32s. The zero value is empty and ready for Pack.
type Centers32 struct {
	k, d     int
	shift    []float32 // s: the mean of the centers rounded to float32
	c        []float32 // fl32(c_j − s), k×d row-major
	norm2    []float32 // fl32(‖c'_j‖²), the norm summed in float64
	rho2     []float64 // those float64 sums
	maxNorm2 float64   // their maximum
	round    Rounding

	// The float64 recheck: the centers shifted by their float64 mean,
	// packed in panels for f64.Best2Row, and their squared norms (padded
	// lanes +Inf).
	c64            Centers
	packed, norm64 []float64
}

// Pack prepares the k float64 centers in c (k×d row-major), reusing the
// receiver's buffers. It panics if k < 1, d < 1 or len(c) < k·d.
//
// # Rounding bound
//
// Let u₃₂ = 2⁻²⁴ and u = 2⁻⁵³ be the unit roundoffs of float32 and
// float64. A row x (float32) is shifted in float32, x' = fl32(x − s),
// which is the correctly rounded difference: |x'_t − (x_t−s_t)| ≤
// u₃₂·|x_t−s_t|. A center is shifted in float64 and rounded to float32,
// c' = fl32(fl64(c − s)): within u₃₂' = (u₃₂+u)(1+u) of |c_t−s_t|, plus
// 2⁻¹⁵⁰ where the result is below the float32 normal range. Let r = ‖x'‖,
// ρ = ‖c'‖, S = r²+ρ², D = ‖x−c‖² exact, D' = ‖x'−c'‖² exact and
// f = fl64(Σ(x_t−c_t)²) the direct computation in any order. The kernel
// computes v = fl32(n − 2·fl32(x'·c')) with n = fl32(ρ̂²), ρ̂² = ‖c'‖²
// summed in float64; exactly, ρ² − 2x'·c' = D' − r². With γ_d = d·u₃₂/
// (1−d·u₃₂) (Higham 2002, §3.1) and d ≤ 2¹⁶ (γ_d ≤ 2⁻⁸·1.01):
//
//   - the float32 dot product, in any order, fused or not, is within
//     γ_d·Σ|x'_t c'_t| ≤ γ_d·rρ, so 2·dot moves by at most γ_d·S;
//   - n is within (u₃₂ + (d+1)·u)·ρ² ≤ 1.01·u₃₂·S of ρ²;
//   - the last rounding adds at most u₃₂·|n − 2·dot| ≤ u₃₂·(ρ²+2rρ)(1+2⁻⁷)
//     ≤ 2u₃₂·S·(1+2⁻⁷);
//   - shifting and rounding moves each coordinate of x−c by at most
//     u₃₂'·(|x_t−s_t|+|c_t−s_t|), so |D'−D| ≤ (2u₃₂'+u₃₂'²)·R_e² with
//     R_e = ‖x−s‖+‖c−s‖, R_e² ≤ (r+ρ)²(1+3u₃₂) ≤ 2S(1+3u₃₂): at most
//     4.01·u₃₂·S, plus an absolute d·2⁻²⁷⁶ from the subnormal rounding
//     (2ab ≤ u₃₂a² + b²/u₃₂);
//   - |f − D| ≤ (d+2)·u·D ≤ 2⁻¹²·u₃₂·S (as in Centers.Pack).
//
// So |v + r² − f| ≤ (d+8)·u₃₂·S·(1+2⁻⁷)·1.01 for every center of a row,
// with the same r² for every center. The row's norm as PackShift computes
// it in float32, r̂², satisfies r² ≤ r̂²(1+2⁻⁷) + d·2⁻¹⁵⁰, and ρ² ≤
// ρ̂²(1+2⁻⁴⁰), so Rounding.Slack32 returns
// T = 17(d+8)/16 · u₃₂ · (r̂² + ρ̂²_max) + 2⁻¹⁰⁰ (ρ̂²_max the largest
// center norm), which exceeds the bound by more than the rounding of T
// itself and of the float64 subtraction of the two float32 values a
// search compares; 2⁻¹⁰⁰ covers underflow (a float32 product loses at
// most 2⁻¹⁵⁰). The bound of one center j uses its own norm, T_j (ρ̂²_j in
// place of ρ̂²_max), and T_j ≤ T. Searcher32 accepts the kernel's best
// center b when the second best value exceeds the best by more than
// T_b + T: then f_j − f_b ≥ (v_j − T_j) − (v_b + T_b) ≥ v_second − v_b −
// T − T_b > 0 for every other j, so b is the strict argmin of the direct
// computation.
//
// T is +Inf (every row is checked in float64) when d > 2¹⁶ or when
// r̂² + ρ̂²_max > 2¹⁰⁰: below that no value of the kernel can overflow
// float32 (|v| ≤ 2(r²+ρ²)(1+ε) < 2¹²⁸). The bound does not depend on the
// order of the sums, so every kernel (pure Go, AVX2, AVX-512) is covered.
// TestSlack32Bound checks it against exact arithmetic.
func (p *Centers32) Pack(c []float64, k, d int) {
	if k < 1 || d < 1 || len(c) < k*d {
		panic("nearest: Pack needs k ≥ 1, d ≥ 1 and len(c) ≥ k·d")
	}
	p.k, p.d, p.round = k, d, NewRounding(d)
	p.c64.Pack(c, k, d)
	p.shift = grow32(p.shift, d)
	p.c = grow32(p.c, k*d)
	p.norm2 = grow32(p.norm2, k)
	p.rho2 = grow(p.rho2, k)
	for t, v := range p.c64.shift {
		p.shift[t] = float32(v)
	}
	var maxN2 float64
	for j := range k {
		dst := p.c[j*d : (j+1)*d]
		var n2 float64
		for t, v := range c[j*d : (j+1)*d] {
			w := float32(v - float64(p.shift[t]))
			dst[t] = w
			n2 += float64(w) * float64(w)
		}
		p.norm2[j] = float32(n2)
		p.rho2[j] = n2
		maxN2 = math.Max(maxN2, n2)
	}
	p.maxNorm2 = maxN2
	p.packed = grow(p.packed, f64.PackedLen(k, d))
	f64.Pack(p.packed, p.c64.c, k, d, 0)
	p.norm64 = grow(p.norm64, f64.PackedLen(k, 1))
	for j := range p.norm64 {
		p.norm64[j] = math.Inf(1)
	}
	copy(p.norm64, p.c64.norm2)
}

func grow32(s []float32, n int) []float32 {
	if cap(s) < n {
		return make([]float32, n)
	}
	return s[:n]
}
