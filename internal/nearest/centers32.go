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
	maxNorm2 float64   // max_j of those float64 sums
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
// c' = fl32(fl64(c − s)): within (u₃₂+u)(1+u)·|c_t−s_t| of c_t − s_t, plus
// 2⁻¹⁵⁰ where the result is below the float32 normal range. Let r = ‖x'‖,
// ρ = ‖c'‖, R = r+ρ, D = ‖x−c‖² exact, D' = ‖x'−c'‖² exact and
// f = fl64(Σ(x_t−c_t)²) the direct computation in any order.
//
//   - Shifting and rounding moves each coordinate of x−c by at most
//     u₃₂'·(|x_t−s_t|+|c_t−s_t|) with u₃₂' = (u₃₂+u)(1+u), so
//     |D' − D| ≤ 2u₃₂'·R_e² + u₃₂'²·R_e² where R_e = ‖x−s‖+‖c−s‖ ≤
//     R/(1−u₃₂') (plus an absolute term d·2⁻²⁷⁶ from the subnormal
//     rounding, by 2ab ≤ u₃₂a² + b²/u₃₂).
//   - The kernel computes v = fl32(n − 2·fl32(x'·c')) with n = fl32(ρ̂²):
//     the dot product in float32, any order, fused or not, is within
//     γ_d(u₃₂)·rρ (Higham 2002, §3.1), n within (u₃₂ + γ_d(u))·ρ², and the
//     last rounding adds u₃₂·(ρ² + 2rρ)(1+ε); with rρ ≤ R²/4 and ρ² ≤ R²,
//     |v − (ρ² − 2x'·c')| ≤ (d/2 + 3)·u₃₂·R²·(1+ε), and
//     ρ² − 2x'·c' = D' − r².
//   - |f − D| ≤ (d+2)·u·D ≤ (d+2)·u·R_e² (as in Centers.Pack).
//
// So |v + r² − f| ≤ (d/2 + 6)·u₃₂·R²·(1+ε) + (d+2)·u·R² + d·2⁻²⁷⁶ for
// every center, with the same r² for every center of a row.
// Rounding.Slack32 uses T = (2d+18)·u₃₂·2(r̂²+ρ̂²_max) + 2⁻¹⁰⁰, where r̂²
// is the row's squared norm as PackShift computes it in float32 (at least
// r²·(1−γ_d(u₃₂)) − d·2⁻¹⁵⁰) and ρ̂²_max the largest center norm summed in
// float64: for d ≤ 2¹⁶ (γ_d(u₃₂) ≤ 2⁻⁷) the factor 2d+18 more than doubles
// what is needed, which absorbs the rounding of r̂², ρ̂² and T themselves,
// the (d+2)·u term (2⁻²⁹ of it) and the float64 subtraction of the two
// float32 values a search compares; 2⁻¹⁰⁰ covers underflow (products in
// float32 lose at most 2⁻¹⁵⁰ each). Searcher32 accepts the kernel's best
// center when the second best value exceeds the best by more than 2T:
// then f_j − f_best ≥ (v_j − T) − (v_best + T) > 0 for every other j, so
// the best center is the strict argmin of the direct computation.
//
// T is +Inf (every row is checked in float64) when d > 2¹⁶ or when
// r̂² + ρ̂²_max > 2¹⁰⁰: below that no value of the kernel can overflow
// float32 (|v| ≤ 2(r²+ρ²)(1+ε) < 2¹²⁸). The bound does not depend on the
// order of the sums, so every kernel (pure Go, AVX2, AVX-512) is covered.
func (p *Centers32) Pack(c []float64, k, d int) {
	if k < 1 || d < 1 || len(c) < k*d {
		panic("nearest: Pack needs k ≥ 1, d ≥ 1 and len(c) ≥ k·d")
	}
	p.k, p.d, p.round = k, d, NewRounding(d)
	p.c64.Pack(c, k, d)
	p.shift = grow32(p.shift, d)
	p.c = grow32(p.c, k*d)
	p.norm2 = grow32(p.norm2, k)
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
