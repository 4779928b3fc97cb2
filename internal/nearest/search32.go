package nearest

import (
	"math"

	"github.com/centroidlab/centroid/internal/asm/f32"
	"github.com/centroidlab/centroid/internal/asm/f64"
)

// Searcher32 holds the scratch of one goroutine's search over blocks of
// float32 rows. The zero value is ready for use.
type Searcher32 struct {
	x            []float32 // loaded rows minus the shift, packed (f32.Pack)
	r2           []float32 // ‖x_i‖² in float32
	idx          []int32   // f32.Best2's outputs of the last scan
	best, second []float32
	row          []float64 // one row in float64 for the recheck
}

// Assign sets dst[i], for the m rows of x (m×d row-major float32, d of c),
// to the center with the smallest direct(i, j), the lowest index on ties;
// direct(i, j) must return the directly computed squared Euclidean
// distance of row i (converted to float64) to center j, in any summation
// order. It runs the float32 kernel over all centers and accepts its
// answer for a row when the second best value exceeds the best by more
// than the row's float32 slack of the best center plus that of the
// largest center (see Centers32.Pack). For the other
// rows it runs the float64 one-row kernel f64.Best2Row on the row's
// float64 values, accepted under the float64 slack (see Centers.Pack),
// and where even that is not certain it evaluates direct for every center
// in index order keeping the first strict minimum, exactly as a direct
// search would. It returns the rows that needed the float64 kernel and
// those that needed direct. It panics if len(dst) < m or len(x) < m·d.
func (s *Searcher32) Assign(dst []int, x []float32, m int, c *Centers32, direct func(i, j int) float64) (wide, rechecked int) {
	d := c.d
	if len(dst) < m || len(x) < m*d {
		panic("nearest: Assign needs len(dst) ≥ m and len(x) ≥ m·d")
	}
	if m == 0 {
		return 0, 0
	}
	s.x = grow32(s.x, f32.PackedLen(m, d))
	s.r2 = grow32(s.r2, m)
	s.best = grow32(s.best, m)
	s.second = grow32(s.second, m)
	if cap(s.idx) < m {
		s.idx = make([]int32, m)
	}
	s.idx = s.idx[:m]
	f32.PackShift(s.x, s.r2, x, c.shift, m)
	for i := range m {
		s.idx[i] = 0
		s.best[i] = inf32
		s.second[i] = inf32
	}
	step := max(16, panelBytes/(4*d))
	for p := 0; p < c.k; p += step {
		q := min(c.k, p+step)
		f32.Best2(s.idx, s.best, s.second, s.x, d, c.c[:q*d], c.norm2[:q], p, q)
	}
	for i := range m {
		r2 := float64(s.r2[i])
		t := c.round.Slack32(r2, c.maxNorm2) + c.round.Slack32(r2, c.rho2[s.idx[i]])
		if float64(s.second[i])-float64(s.best[i]) > t {
			dst[i] = int(s.idx[i])
			continue
		}
		wide++
		s.row = grow(s.row, d)
		row := Widen(s.row, x[i*d:(i+1)*d])
		j, v1, v2, r2 := f64.Best2Row(row, c.c64.shift, c.packed, c.norm64, c.k, -1)
		if v2-v1 > 2*c.c64.round.Slack(r2, c.c64.maxNorm2) {
			dst[i] = j
			continue
		}
		rechecked++
		dst[i] = Direct(c.k, func(j int) float64 { return direct(i, j) })
	}
	return wide, rechecked
}

var inf32 = float32(math.Inf(1))
