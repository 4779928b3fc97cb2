package nearest

import "math"

// unit is the unit roundoff of float64, 2⁻⁵³.
const unit = 0x1p-53

// tiny is the absolute term of every bound: it covers the rounding of
// values that underflow. A product or square that underflows loses at most
// 2⁻¹⁰⁷⁴, so a distance of d such terms loses at most √(d·2⁻¹⁰⁷⁴) ≈
// 2⁻⁵³⁷·√d, far below tiny for any d < 2⁷⁰.
const tiny = 0x1p-500

// Rounding bounds the floating-point error of the distances computed in d
// dimensions, so that searches can skip a center, or accept an
// approximate answer, only when the computed losses certainly compare the
// same way. One argument covers the bound solvers of kmeans (Up, Down,
// Beats), the serving search and the kernel of Searcher (Slack).
//
// # Derivation
//
// With u = 2⁻⁵³ and γₙ = n·u/(1−n·u) (Higham, Accuracy and Stability of
// Numerical Algorithms, 2nd ed., 2002, §3.1), a difference x_t−c_t rounds
// once (relative error ≤ u) and its square or absolute value once more or
// not at all; a sum of d non-negative terms in any order is within γ_{d−1}
// of its exact value. So a computed squared Euclidean distance f̂
// (distance.SqEuclidean, any summation order) satisfies |f̂ − f| ≤ γ_{d+2}·f
// for the exact f, its square root adds u/2, and a computed Manhattan
// distance is within γ_d. Every computed distance is therefore within a
// relative γ_{d+3} ≤ (d+4)·u of the exact one (for d·u ≤ 2⁻¹⁰), plus
// 2⁻⁵⁰⁰ for underflow.
//
// Rounding uses ε = 4·(d+8)·u, more than twice γ_{d+3}/(1−γ_{d+3}) plus
// the one rounding of each addition or subtraction that combines bounds
// (|fl(a±b) − (a±b)| ≤ u·|a±b|) and of the multiplication inside Up and
// Down. Then, for exact distances δ_j ≥ lo and δ_a ≤ hi, Beats(lo, hi)
// implies that the computed losses (distances or their squares) compare
// f̂_j > f̂_a: f̂_j ≥ lo²(1−γ_{d+2}) > hi²(1+ε)²(1−γ_{d+2}) ≥ hi²(1+γ_{d+2}) ≥ f̂_a.
//
// Slack bounds the expansion ‖c‖² − 2x·c of Searcher (see Centers),
// Slack32 that of Searcher32 (see Centers32).
type Rounding struct {
	d   int
	eps float64
}

// NewRounding returns the rounding bounds of dimension d ≥ 1.
func NewRounding(d int) Rounding { return Rounding{d: d, eps: 4 * float64(d+8) * unit} }

// Up returns v rounded outwards to an upper bound: v·(1+ε).
func (r Rounding) Up(v float64) float64 { return v * (1 + r.eps) }

// Down returns v rounded outwards to a lower bound, v·(1−ε), at least 0
// (also for NaN).
func (r Rounding) Down(v float64) float64 {
	v *= 1 - r.eps
	if !(v > 0) {
		return 0
	}
	return v
}

// Beats reports whether the lower bound lo of one distance certainly
// exceeds the upper bound hi of another, lo > hi·(1+ε) + 2⁻⁵⁰⁰, so that
// their computed losses compare strictly the same way. NaN never beats.
func (r Rounding) Beats(lo, hi float64) bool { return lo > hi*(1+r.eps)+tiny }

// Slack returns the bound T of Centers for a shifted row of squared norm
// rowNorm2 and centers of squared norm at most maxNorm2: every value the
// kernel computes, plus the row's computed squared norm, is within T of
// both the exact squared distance and the directly computed one. It is
// +Inf when T would not be finite. It uses (r+ρ)² ≤ 2(r²+ρ²), so that no
// square root is needed.
func (r Rounding) Slack(rowNorm2, maxNorm2 float64) float64 {
	t := float64(2*r.d+16)*unit*2*(rowNorm2+maxNorm2) + 0x1p-900
	if !(t <= math.MaxFloat64/4) {
		return math.Inf(1)
	}
	return t
}

// unit32 is the unit roundoff of float32, 2⁻²⁴.
const unit32 = 0x1p-24

// maxDim32 is the largest dimension the float32 bound covers.
const maxDim32 = 1 << 16

// Slack32 returns the bound T of Centers32 for a row whose shifted squared
// norm, computed in float32, is rowNorm2, and centers of squared norm at
// most maxNorm2: every value the float32 kernel computes, plus the row's
// exact squared norm, is within T of the directly computed squared
// distance (distance.SqEuclidean of the float64 values). It is +Inf when
// the bound does not hold (d > 2¹⁶, or rowNorm2 + maxNorm2 beyond 2¹⁰⁰ or
// not finite, where float32 values could overflow).
func (r Rounding) Slack32(rowNorm2, maxNorm2 float64) float64 {
	s := rowNorm2 + maxNorm2
	if r.d > maxDim32 || !(s <= 0x1p100) {
		return math.Inf(1)
	}
	return 17*float64(r.d+8)/16*unit32*s + 0x1p-100
}
