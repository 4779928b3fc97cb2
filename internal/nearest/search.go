package nearest

import (
	"math"

	"github.com/centroidlab/centroid/internal/asm/f64"
)

// panelBytes is the size of the block of packed centers that a scan keeps
// in cache while it passes the loaded rows over it.
const panelBytes = 32 << 10

// Searcher holds the scratch of one goroutine's search over blocks of rows.
// The zero value is ready for use.
type Searcher struct {
	x            []float64 // loaded rows minus the shift, packed (f64.Pack)
	r2, slack    []float64 // ‖x_i‖² and the rounding bound T of row i (+Inf if unbounded)
	idx          []int     // f64.Best2's outputs of the last scan
	best, second []float64
	m            int
}

// load packs the m rows of x (m×c.d row-major) minus c.shift into s.x and
// computes r2 and slack.
func (s *Searcher) load(x []float64, m int, c *Centers) {
	d := c.d
	s.m = m
	s.x = grow(s.x, f64.PackedLen(m, d))
	s.r2 = grow(s.r2, m)
	s.slack = grow(s.slack, m)
	s.idx = growInt(s.idx, m)
	s.best = grow(s.best, m)
	s.second = grow(s.second, m)
	f64.PackShift(s.x, s.r2, x, c.shift[:d], m)
	for i, r2 := range s.r2[:m] {
		s.slack[i] = c.round.Slack(r2, c.maxNorm2)
	}
}

// scan runs f64.Best2 for the loaded rows over the centers [j0, j1),
// starting afresh, in groups of panels that fit in the first-level cache.
func (s *Searcher) scan(c *Centers, j0, j1 int) {
	m, d := s.m, c.d
	for i := range m {
		s.idx[i] = j0
		s.best[i] = math.Inf(1)
		s.second[i] = math.Inf(1)
	}
	step := max(8, panelBytes/(8*d))
	for p := j0; p < j1; p += step {
		q := min(j1, p+step)
		f64.Best2(s.idx[:m], s.best, s.second, s.x, d, c.c[:q*d], c.norm2[:q], p, q)
	}
}

// sure reports whether the last scan's best center for row i is certainly
// the argmin of the exact and of the directly computed squared distances
// over the scanned range: its value beats the second best by more than
// twice the row's slack.
func (s *Searcher) sure(i int) bool {
	return s.second[i]-s.best[i] > 2*s.slack[i]
}

// Assign sets dst[i], for the m rows of x (m×d row-major, d of c), to the
// center with the smallest direct(i, j), the lowest index on ties;
// direct(i, j) must return the directly computed squared Euclidean
// distance of row i to center j (any summation order). It runs the kernel
// over all centers and calls direct only for rows whose two best values
// are within rounding distance (see Centers.Pack), where it evaluates
// every center in index order keeping the first strict minimum, exactly as
// a direct search would. It returns the number of such rows. It panics if
// len(dst) < m or len(x) < m·d.
func (s *Searcher) Assign(dst []int, x []float64, m int, c *Centers, direct func(i, j int) float64) (rechecked int) {
	if len(dst) < m || len(x) < m*c.d {
		panic("nearest: Assign needs len(dst) ≥ m and len(x) ≥ m·d")
	}
	s.load(x, m, c)
	s.scan(c, 0, c.k)
	for i := range m {
		if s.sure(i) {
			dst[i] = s.idx[i]
			continue
		}
		rechecked++
		dst[i] = Direct(c.k, func(j int) float64 { return direct(i, j) })
	}
	return rechecked
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
