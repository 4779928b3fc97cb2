package nearest

import "math"

// unit is the unit roundoff of float64, 2⁻⁵³.
const unit = 0x1p-53

// tiny is an absolute term added to every slack to cover underflow: each of
// the d products or squares of a dot product or norm loses at most 2⁻¹⁰⁷⁴ when
// it underflows, far below tiny for any d < 2¹⁰⁰.
const tiny = 0x1p-900

// panelBytes is the size of the block of centers that Searcher.Scan keeps
// in cache while it passes the loaded rows over it.
const panelBytes = 32 << 10

// Centers is a set of k centers in d dimensions prepared for Best2: shifted
// by a common vector (their mean) and with their squared norms. Pack it
// once per set of centers; afterwards it is read-only and may be shared by
// concurrent Searchers. The zero value is empty and ready for Pack.
type Centers struct {
	K, D int
	// Shift is the vector subtracted from rows and centers: the mean of
	// the centers.
	Shift []float64
	// C holds the shifted centers, K×D row-major, in packed order.
	C []float64
	// Norm2[j] is ‖C_j‖², computed in floating point.
	Norm2 []float64
	// MaxNorm is max_j √Norm2[j].
	MaxNorm float64
	// Order[p] is the caller's index of packed center p, or nil if the
	// centers are packed in the caller's order.
	Order []int
}

// Pack prepares the k centers in c (k×d row-major). If order is not nil,
// packed center p is c's row order[p] (a permutation of 0..k-1, used to
// keep groups of centers contiguous); Searcher results are then packed
// positions, which Order maps back. Pack reuses the receiver's buffers. It
// panics if k < 1, d < 1, len(c) < k·d or len(order) is neither 0 nor k.
//
// # Rounding bound
//
// Let u = 2⁻⁵³, x' = fl(x−s) and c' = fl(c−s) for the shift s, r = ‖x'‖,
// ρ = ‖c'‖ and R = r+ρ. Every dot product or squared norm of length d
// computed in floating point, in any order and with or without fused
// multiply-adds, is within γ_d·Σ|a_t b_t| ≤ d·u·(1+ε) times the product of
// the norms of its vectors of its exact value. Hence, for v = fl(‖c'‖² − 2x'·c')
// and D' = ‖x'−c'‖²:
//
//   - |v + ‖x'‖² − D'| ≤ (d+1)·u·R² (dot product, norm, and the final
//     subtraction), plus d·u·r² for the computed ‖x'‖² when it is added;
//   - the shift rounds each coordinate by at most u of its magnitude, so
//     the exact ‖x−c‖² = D differs from D' by at most 2·u·R² (1+3u);
//   - a direct computation f = fl(Σ(x_t−c_t)²) in any order is within
//     (d+2)·u·D ≤ (d+2)·u·R²(1+2u) of D.
//
// So every quantity the search compares is within (2d+5)·u·R²·(1+ε) of
// the others; Slack uses T = (2d+16)·u·(r+MaxNorm)² + 2⁻⁹⁰⁰, which also
// absorbs the rounding of r and MaxNorm themselves, of T, and of one
// addition and one subtraction of T (|fl(a)−a| ≤ u·R² each) when T is
// turned into bounds, for any d ≪ 1/u. The last term covers underflow.
func (p *Centers) Pack(c []float64, k, d int, order []int) {
	if k < 1 || d < 1 || len(c) < k*d || (order != nil && len(order) != k) {
		panic("nearest: Pack needs k ≥ 1, d ≥ 1, len(c) ≥ k·d and len(order) = k or 0")
	}
	p.K, p.D = k, d
	p.Shift = grow(p.Shift, d)
	p.C = grow(p.C, k*d)
	p.Norm2 = grow(p.Norm2, k)
	if order != nil {
		p.Order = append(p.Order[:0], order...)
	} else {
		p.Order = nil
	}
	clear(p.Shift)
	for j := range k {
		for t, v := range c[j*d : (j+1)*d] {
			p.Shift[t] += v
		}
	}
	for t := range p.Shift {
		p.Shift[t] /= float64(k)
	}
	var maxN2 float64
	for q := range k {
		j := q
		if order != nil {
			j = order[q]
		}
		dst := p.C[q*d : (q+1)*d]
		var n2 float64
		for t, v := range c[j*d : (j+1)*d] {
			w := v - p.Shift[t]
			dst[t] = w
			n2 += w * w
		}
		p.Norm2[q] = n2
		maxN2 = math.Max(maxN2, n2)
	}
	p.MaxNorm = math.Sqrt(maxN2)
}

// Searcher holds the scratch of one goroutine's search over blocks of rows.
// The zero value is ready for use.
type Searcher struct {
	// X holds the loaded rows minus the shift, m×D.
	X []float64
	// R2[i] is ‖X_i‖² and Slack[i] the rounding bound T of row i (see
	// Centers.Pack); +Inf if it cannot be bounded.
	R2, Slack []float64
	// Idx, Best and Second are Best2's outputs of the last Scan.
	Idx          []int
	Best, Second []float64
	m            int
}

// Load copies the m rows of x (m×c.D row-major) minus c.Shift into s.X and
// computes R2 and Slack. It panics if len(x) < m·c.D.
func (s *Searcher) Load(x []float64, m int, c *Centers) {
	d := c.D
	if len(x) < m*d {
		panic(panicShort)
	}
	s.m = m
	s.X = grow(s.X, m*d)
	s.R2 = grow(s.R2, m)
	s.Slack = grow(s.Slack, m)
	s.Idx = growInt(s.Idx, m)
	s.Best = grow(s.Best, m)
	s.Second = grow(s.Second, m)
	shift := c.Shift[:d]
	kappa := float64(2*d+16) * unit
	for i := range m {
		src := x[i*d : (i+1)*d][:len(shift)]
		dst := s.X[i*d : (i+1)*d][:len(shift)]
		var r2 float64
		for t, v := range src {
			w := v - shift[t]
			dst[t] = w
			r2 += w * w
		}
		s.R2[i] = r2
		R := math.Sqrt(r2) + c.MaxNorm
		t := kappa*R*R + tiny
		if !(t <= math.MaxFloat64/4) {
			t = math.Inf(1)
		}
		s.Slack[i] = t
	}
}

// Scan runs Best2 for the loaded rows over the packed centers [j0, j1),
// starting afresh (Best and Second +Inf, Idx j0). Centers are taken in
// panels that fit in the first-level cache. It panics if the range is not
// within [0, c.K).
func (s *Searcher) Scan(c *Centers, j0, j1 int) {
	if j0 < 0 || j1 > c.K || j0 >= j1 {
		panic("nearest: Scan range outside the centers")
	}
	m, d := s.m, c.D
	for i := range m {
		s.Idx[i] = j0
		s.Best[i] = math.Inf(1)
		s.Second[i] = math.Inf(1)
	}
	panel := max(2, panelBytes/(8*d))
	for p := j0; p < j1; p += panel {
		q := min(j1, p+panel)
		Best2(s.Idx[:m], s.Best, s.Second, s.X, d, c.C[p*d:q*d], c.Norm2[p:q], p)
	}
}

// Sure reports whether the last Scan's best center for row i is certainly
// the argmin of the exact and of the directly computed squared distances
// over the scanned range: its value beats the second best by more than
// twice the row's Slack.
func (s *Searcher) Sure(i int) bool {
	return s.Second[i]-s.Best[i] > 2*s.Slack[i]
}

// Bounds returns lower and upper bounds on the exact squared distance
// ‖x_i−c‖² of loaded row i to a center whose Best2 value is v (Best[i] or
// Second[i] after a Scan): v + R2[i] ∓ Slack[i], the lower clamped at zero,
// the upper +Inf if it cannot be bounded.
func (s *Searcher) Bounds(i int, v float64) (lo, hi float64) {
	e := v + s.R2[i]
	lo, hi = e-s.Slack[i], e+s.Slack[i]
	if !(lo > 0) {
		lo = 0
	}
	if !(hi <= math.MaxFloat64) {
		hi = math.Inf(1)
	}
	return lo, hi
}

// Assign sets dst[i], for the m rows of x (m×c.D row-major), to the
// caller's index of the center with the smallest direct(i, j), the lowest
// index on ties; direct(i, j) must return the directly computed squared
// Euclidean distance of row i to the caller's center j (any summation
// order). It runs the kernel over all centers and calls direct only for
// rows whose two best values are within rounding distance (see Sure), where
// it evaluates every center in index order keeping the first strict
// minimum, exactly as a direct search would. It returns the number of such
// rows. It panics if len(dst) < m.
func (s *Searcher) Assign(dst []int, x []float64, m int, c *Centers, direct func(i, j int) float64) (rechecked int) {
	if len(dst) < m {
		panic(panicShort)
	}
	s.Load(x, m, c)
	s.Scan(c, 0, c.K)
	for i := range m {
		if s.Sure(i) {
			dst[i] = c.Index(s.Idx[i])
			continue
		}
		rechecked++
		dst[i] = Direct(c.K, func(j int) float64 { return direct(i, j) })
	}
	return rechecked
}

// Index returns the caller's index of packed center p.
func (p *Centers) Index(q int) int {
	if p.Order == nil {
		return q
	}
	return p.Order[q]
}

// Direct returns the j in [0, k) with the smallest loss(j), the lowest on
// ties, scanning in index order and keeping the first strict minimum (0 if
// no value is below +Inf; NaN never wins).
func Direct(k int, loss func(j int) float64) int {
	best, bl := 0, math.Inf(1)
	for j := range k {
		if l := loss(j); l < bl {
			best, bl = j, l
		}
	}
	return best
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
