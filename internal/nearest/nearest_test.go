package nearest

import (
	"fmt"
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/distance"
)

// directSq is the reference: Σ(x_t−c_t)² in plain double precision, summed
// in index order.
func directSq(x, c []float64) float64 {
	var s float64
	for t, v := range x {
		e := v - c[t]
		s += e * e
	}
	return s
}

// exactSq is ‖x−c‖² in exact arithmetic (math/big with enough bits that
// no operation rounds), rounded to float64 at the end.
func exactSq(x, c []float64) *big.Float {
	const prec = 4096
	s := new(big.Float).SetPrec(prec)
	for t, v := range x {
		e := new(big.Float).SetPrec(prec).Sub(big.NewFloat(v).SetPrec(prec), big.NewFloat(c[t]).SetPrec(prec))
		s.Add(s, e.Mul(e, e))
	}
	return s
}

// bruteArgmin is the first strict minimum of directSq over the centers.
func bruteArgmin(x, cs []float64, k, d int) int {
	best, bl := 0, math.Inf(1)
	for j := range k {
		if l := directSq(x, cs[j*d:(j+1)*d]); l < bl {
			best, bl = j, l
		}
	}
	return best
}

type adversarial struct {
	name    string
	x, c    []float64
	m, k, d int
}

// adversarialSets builds rows and centers where the expansion ‖c‖² − 2x·c
// is hard: far from the origin, exact and near ties, d = 1 and d = 1000.
func adversarialSets() []adversarial {
	rnd := rand.New(rand.NewPCG(42, 1))
	var sets []adversarial
	gauss := func(n int, off, scale float64) []float64 {
		v := make([]float64, n)
		for i := range v {
			v[i] = off + rnd.NormFloat64()*scale
		}
		return v
	}
	// Offset 1e8 with spread 1e-3: ‖x‖² ≈ 3e16 cancels all but the last
	// digits of the distances unless rows and centers are shifted.
	sets = append(sets, adversarial{"offset1e8", gauss(2000*3, 1e8, 1e-3), gauss(16*3, 1e8, 1e-3), 2000, 16, 3})
	// Offset 1e8 with unit spread in 1000 dimensions.
	sets = append(sets, adversarial{"offset1e8-d1000", gauss(64*1000, 1e8, 1), gauss(9*1000, 1e8, 1), 64, 9, 1000})
	// d = 1: an integer line; rows at midpoints tie exactly, and rows one
	// ulp either side of the midpoints nearly tie.
	{
		c := []float64{0, 2, 4, 6, 8, 10, 12}
		var x []float64
		for _, mid := range []float64{1, 3, 5, 7, 9, 11} {
			x = append(x, mid, math.Nextafter(mid, 0), math.Nextafter(mid, 20), mid)
		}
		x = append(x, gauss(200, 6, 4)...)
		sets = append(sets, adversarial{"d1-ties", x, c, len(x), len(c), 1})
	}
	// d = 1 far from the origin: centers 1e15 + 2j, rows at and next to the
	// midpoints.
	{
		var c, x []float64
		for j := range 8 {
			c = append(c, 1e15+2*float64(j))
		}
		for j := range 7 {
			mid := 1e15 + 2*float64(j) + 1
			x = append(x, mid, math.Nextafter(mid, 0), math.Nextafter(mid, 2e15))
		}
		sets = append(sets, adversarial{"d1-offset", x, c, len(x), len(c), 1})
	}
	// d = 2 lattice: duplicate rows, many rows equidistant from several
	// centers (which are lattice points too, some duplicated).
	{
		x := make([]float64, 3000*2)
		for i := range x {
			x[i] = float64(rnd.IntN(7))
		}
		c := []float64{0, 0, 2, 2, 4, 4, 2, 2, 6, 0, 0, 6, 3, 3, 5, 1}
		sets = append(sets, adversarial{"lattice", x, c, 3000, 8, 2})
	}
	// d = 1000: unit-scale Gaussian rows and centers, and rows exactly
	// between two centers.
	{
		c := gauss(12*1000, 0, 1)
		x := gauss(50*1000, 0, 1)
		for j := 0; j+1 < 12; j += 2 {
			mid := make([]float64, 1000)
			for t := range mid {
				mid[t] = (c[j*1000+t] + c[(j+1)*1000+t]) / 2
			}
			x = append(x, mid...)
		}
		sets = append(sets, adversarial{"d1000", x, c, len(x) / 1000, 12, 1000})
	}
	// Tiny magnitudes near underflow.
	sets = append(sets, adversarial{"tiny", gauss(500*4, 0, 1e-160), gauss(6*4, 0, 1e-160), 500, 6, 4})
	return sets
}

// TestAssignExact: on adversarial data the kernel search returns exactly
// the argmin of the direct double-precision computation, the lowest index
// on ties, whatever the tile size.
func TestAssignExact(t *testing.T) {
	for _, s := range adversarialSets() {
		for _, tile := range []int{1, 5, 64, 4096} {
			t.Run(fmt.Sprintf("%s/tile=%d", s.name, tile), func(t *testing.T) {
				var c Centers
				c.Pack(s.c, s.k, s.d)
				var sr Searcher
				got := make([]int, s.m)
				rechecked := 0
				for lo := 0; lo < s.m; lo += tile {
					hi := min(s.m, lo+tile)
					rechecked += sr.Assign(got[lo:hi], s.x[lo*s.d:hi*s.d], hi-lo, &c, func(i, j int) float64 {
						return directSq(s.x[(lo+i)*s.d:(lo+i+1)*s.d], s.c[j*s.d:(j+1)*s.d])
					})
				}
				for i := range s.m {
					require.Equal(t, bruteArgmin(s.x[i*s.d:(i+1)*s.d], s.c, s.k, s.d), got[i], "row %d", i)
				}
				t.Logf("%d of %d rows rechecked", rechecked, s.m)
			})
		}
	}
}

// TestSlackBound: the kernel value plus ‖x'‖² is within Slack of the exact
// squared distance (math/big) and of the direct double-precision one, for
// every row and center of the adversarial sets, as Centers.Pack claims.
func TestSlackBound(t *testing.T) {
	for _, s := range adversarialSets() {
		t.Run(s.name, func(t *testing.T) {
			var c Centers
			c.Pack(s.c, s.k, s.d)
			var sr Searcher
			m := min(s.m, 40)
			sr.load(s.x, m, &c)
			for j := range s.k {
				sr.scan(&c, j, j+1)
				for i := range m {
					x, cj := s.x[i*s.d:(i+1)*s.d], s.c[j*s.d:(j+1)*s.d]
					exact, _ := exactSq(x, cj).Float64()
					approx := sr.best[i] + sr.r2[i]
					require.LessOrEqual(t, math.Abs(approx-exact), sr.slack[i], "row %d center %d", i, j)
					require.LessOrEqual(t, math.Abs(approx-directSq(x, cj)), sr.slack[i], "row %d center %d", i, j)
					// The bounds a search derives, rounded as it rounds them.
					require.LessOrEqual(t, approx-sr.slack[i], exact)
					require.GreaterOrEqual(t, approx+sr.slack[i], exact)
				}
			}
		})
	}
}

func TestPanics(t *testing.T) {
	var c Centers
	assert.Panics(t, func() { c.Pack([]float64{1, 2}, 2, 2) })
	assert.Panics(t, func() { c.Pack([]float64{1, 2}, 1, 0) })
	c.Pack([]float64{1, 2}, 1, 2)
	var s Searcher
	assert.Panics(t, func() { s.Assign(make([]int, 1), []float64{1}, 1, &c, nil) })
	assert.Panics(t, func() { s.Assign(nil, []float64{1, 2}, 1, &c, nil) })
	assert.Panics(t, func() { NewSet([]float64{1, 2}, 2, 2, SquaredEuclidean) })
	assert.Panics(t, func() { NewSet([]float64{1, 2}, 1, 2, 0) })
	assert.Panics(t, func() { NewSet([]float64{1, 2}, 1, 2, Manhattan).Nearest([]float64{1}) })
}

// TestPackShift: packed centers are shifted by the mean of the centers,
// with their squared norms.
func TestPackShift(t *testing.T) {
	var c Centers
	c.Pack([]float64{0, 0, 4, 0, 2, 6}, 3, 2)
	assert.Equal(t, []float64{2, 2}, c.shift)
	assert.Equal(t, []float64{-2, -2, 2, -2, 0, 4}, c.c)
	assert.Equal(t, []float64{8, 8, 16}, c.norm2)
	assert.Equal(t, 16.0, c.maxNorm2)
	var s Searcher
	dst := make([]int, 1)
	s.Assign(dst, []float64{4, 1}, 1, &c, nil)
	assert.Equal(t, 1, dst[0]) // (4,1) is nearest to center 1, (4,0)
}

// TestRoundingBrackets: for computed Euclidean and Manhattan distances
// (distance.SqEuclidean's square root, distance.Manhattan's sum) of random
// rows with heavy cancellation, Down and Up bracket the exact distance
// (math/big), and Beats never claims an order that the exact distances
// contradict — the two properties the bound solvers rely on.
func TestRoundingBrackets(t *testing.T) {
	rnd := rand.New(rand.NewPCG(12, 12))
	for d := 1; d <= 64; d++ {
		r := NewRounding(d)
		for range 40 {
			x, c := make([]float64, d), make([]float64, d)
			for i := range x {
				off := math.Pow(10, float64(rnd.IntN(30)-10))
				x[i] = off + rnd.NormFloat64()*off*1e-6
				c[i] = off + rnd.NormFloat64()*off*1e-6
			}
			exact, _ := new(big.Float).Sqrt(exactSq(x, c)).Float64()
			e := math.Sqrt(distance.SqEuclidean(x, c))
			require.LessOrEqual(t, r.Down(e), exact, "d=%d", d)
			require.GreaterOrEqual(t, r.Up(e), exact, "d=%d", d)
			var man big.Float
			man.SetPrec(4096)
			for i := range x {
				var v big.Float
				v.SetPrec(4096).Sub(big.NewFloat(x[i]), big.NewFloat(c[i]))
				man.Add(&man, v.Abs(&v))
			}
			exactMan, _ := man.Float64()
			mh := distance.Manhattan{}.Distance(x, c)
			require.LessOrEqual(t, r.Down(mh), exactMan)
			require.GreaterOrEqual(t, r.Up(mh), exactMan)
			// Beats on the bounds of two distances implies their exact
			// order: a second center, near the first so that the two are
			// often within rounding of each other.
			c2 := append([]float64(nil), c...)
			c2[rnd.IntN(d)] *= 1 + float64(rnd.IntN(3)-1)*0x1p-50
			exact2, _ := new(big.Float).Sqrt(exactSq(x, c2)).Float64()
			e2 := math.Sqrt(distance.SqEuclidean(x, c2))
			if r.Beats(r.Down(e), r.Up(e2)) {
				require.Greater(t, exact, exact2)
			}
			if r.Beats(r.Down(e2), r.Up(e)) {
				require.Greater(t, exact2, exact)
			}
		}
	}
	r := NewRounding(16)
	require.Zero(t, r.Down(math.NaN()))
	require.False(t, r.Beats(math.NaN(), 1))
	require.False(t, r.Beats(1, 1))
	require.True(t, math.IsInf(r.Slack(math.Inf(1), 1), 1))
	require.True(t, math.IsInf(r.Slack(math.NaN(), 1), 1))
	require.Greater(t, r.Slack(3, 4), float64(2*16+16)*0x1p-53*(math.Sqrt(3)+2)*(math.Sqrt(3)+2))
}
