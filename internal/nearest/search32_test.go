package nearest

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/asm/f32"
)

// set32 is an adversarial problem with float32 rows and float64 centers.
type set32 struct {
	name    string
	x       []float32
	c       []float64
	m, k, d int
}

// narrow rounds to float32.
func narrow(x []float64) []float32 {
	out := make([]float32, len(x))
	for i, v := range x {
		out[i] = float32(v)
	}
	return out
}

// wide converts float32 to float64 (exactly).
func wide(x []float32) []float64 {
	out := make([]float64, len(x))
	for i, v := range x {
		out[i] = float64(v)
	}
	return out
}

// adversarialSets32 converts the float64 adversarial sets to float32 rows
// (their centers stay float64, as the means a pass computes are) and adds
// float32-specific ones: near ties one float32 ulp from midpoints, huge
// and tiny magnitudes of the float32 range, and rows far from the origin
// where float32 keeps few digits of the spread.
func adversarialSets32() []set32 {
	var sets []set32
	for _, s := range adversarialSets() {
		if s.name == "tiny" || s.name == "d1-offset" {
			continue // outside the float32 range or resolution; replaced below
		}
		sets = append(sets, set32{s.name, narrow(s.x), s.c, s.m, s.k, s.d})
	}
	rnd := rand.New(rand.NewPCG(32, 1))
	gauss := func(n int, off, scale float64) []float64 {
		v := make([]float64, n)
		for i := range v {
			v[i] = off + rnd.NormFloat64()*scale
		}
		return v
	}
	// d = 1 and d = 3: centers 2j, rows at the midpoints and one float32 ulp
	// either side, so the float32 kernel's bound is always too wide.
	for _, d := range []int{1, 3} {
		var c []float64
		var x []float32
		for j := range 9 {
			row := make([]float64, d)
			row[0] = float64(2 * j)
			c = append(c, row...)
		}
		for j := range 8 {
			mid := float32(2*j + 1)
			for _, v := range []float32{mid, math.Nextafter32(mid, 0), math.Nextafter32(mid, 100)} {
				row := make([]float32, d)
				row[0] = v
				x = append(x, row...)
			}
		}
		sets = append(sets, set32{fmt.Sprintf("ulp-ties-d%d", d), x, c, len(x) / d, 9, d})
	}
	// Far from the origin: 10⁶ + N(0, 1) in float32 (ulp 1/16).
	sets = append(sets, set32{"offset1e6", narrow(gauss(3000*4, 1e6, 1)), gauss(20*4, 1e6, 1), 3000, 20, 4})
	// Huge: values near 10¹⁴ (squares near 2¹⁰⁰, the largest the float32
	// bound covers) and near 10¹⁸ (squares 10³⁶, close to the float32
	// limit: every row is checked in float64).
	sets = append(sets, set32{"huge", narrow(gauss(400*5, 0, 1e14)), gauss(7*5, 0, 1e14), 400, 7, 5})
	sets = append(sets, set32{"huger", narrow(gauss(400*5, 0, 1e18)), gauss(7*5, 0, 1e18), 400, 7, 5})
	// Tiny: values near 10⁻³⁰, whose products underflow float32.
	sets = append(sets, set32{"tiny", narrow(gauss(400*5, 0, 1e-30)), wide(narrow(gauss(7*5, 0, 1e-30))), 400, 7, 5})
	// Extremes: the largest float32 values (shifted rows overflow float32).
	{
		x := []float32{math.MaxFloat32, -math.MaxFloat32, math.MaxFloat32, math.MaxFloat32, 0, -math.MaxFloat32, 1, 2}
		c := []float64{math.MaxFloat32, 0, -math.MaxFloat32, -math.MaxFloat32, 0, 0}
		sets = append(sets, set32{"max", x, c, 4, 3, 2})
	}
	// Many centers in 33 dimensions, clustered rows: the usual case.
	sets = append(sets, set32{"blobs-d33", narrow(gauss(2000*33, 50, 10)), gauss(70*33, 50, 10), 2000, 70, 33})
	return sets
}

// TestSqDistAbsDist: the row losses of either width give the bits of the
// distance package's functions on the float64 conversion.
func TestSqDistAbsDist(t *testing.T) {
	rnd := rand.New(rand.NewPCG(5, 5))
	for d := 1; d <= 70; d++ {
		for range 20 {
			scale := math.Pow(10, float64(rnd.IntN(60)-30))
			x64, c := make([]float64, d), make([]float64, d)
			for i := range x64 {
				x64[i] = rnd.NormFloat64() * scale
				c[i] = rnd.NormFloat64() * scale
			}
			x32 := narrow(x64)
			require.Equal(t, math.Float64bits(distance.SqEuclidean(x64, c)), math.Float64bits(SqDist(x64, c)))
			require.Equal(t, math.Float64bits(distance.SqEuclidean(wide(x32), c)), math.Float64bits(SqDist(x32, c)))
			man := distance.Manhattan{}
			require.Equal(t, math.Float64bits(man.Distance(x64, c)), math.Float64bits(AbsDist(x64, c)))
			require.Equal(t, math.Float64bits(man.Distance(wide(x32), c)), math.Float64bits(AbsDist(x32, c)))
			require.Equal(t, wide(x32), Widen(make([]float64, d+1), x32))
		}
	}
}

// TestAssign32Exact: on adversarial float32 data the float32 search
// returns exactly the argmin of the direct double-precision computation on
// the float64 values, the lowest index on ties, whatever the tile size.
func TestAssign32Exact(t *testing.T) {
	for _, s := range adversarialSets32() {
		x64 := wide(s.x)
		for _, tile := range []int{1, 7, 64, 4096} {
			t.Run(fmt.Sprintf("%s/tile=%d", s.name, tile), func(t *testing.T) {
				var c Centers32
				c.Pack(s.c, s.k, s.d)
				var sr Searcher32
				got := make([]int, s.m)
				wideRows, rechecked := 0, 0
				for lo := 0; lo < s.m; lo += tile {
					hi := min(s.m, lo+tile)
					w, r := sr.Assign(got[lo:hi], s.x[lo*s.d:hi*s.d], hi-lo, &c, func(i, j int) float64 {
						return directSq(x64[(lo+i)*s.d:(lo+i+1)*s.d], s.c[j*s.d:(j+1)*s.d])
					})
					wideRows += w
					rechecked += r
				}
				for i := range s.m {
					require.Equal(t, bruteArgmin(x64[i*s.d:(i+1)*s.d], s.c, s.k, s.d), got[i], "row %d", i)
				}
				require.LessOrEqual(t, rechecked, wideRows)
				t.Logf("%d of %d rows checked in float64, %d of them directly", wideRows, s.m, rechecked)
			})
		}
	}
}

// TestSlack32Bound: every float32 kernel value plus the exact squared norm
// of the row as shifted in float32 is within Slack32 of the exact squared
// distance (math/big) and of the direct double-precision one, for every
// row and center of the adversarial sets whose slack is finite, as
// Centers32.Pack claims.
func TestSlack32Bound(t *testing.T) {
	for _, s := range adversarialSets32() {
		t.Run(s.name, func(t *testing.T) {
			var c Centers32
			c.Pack(s.c, s.k, s.d)
			m, d := min(s.m, 48), s.d
			x := f32.PackShift(make([]float32, f32.PackedLen(m, d)), make([]float32, m), s.x, c.shift, m)
			r2 := make([]float32, m)
			f32.PackShift(x, r2, s.x, c.shift, m)
			idx, best, second := make([]int32, m), make([]float32, m), make([]float32, m)
			finite := 0
			for j := range s.k {
				for i := range m {
					best[i], second[i] = inf32, inf32
				}
				f32.Best2(idx, best, second, x, d, c.c[:(j+1)*d], c.norm2[:j+1], j, j+1)
				for i := range m {
					slack := c.round.Slack32(float64(r2[i]), c.maxNorm2)
					if math.IsInf(slack, 1) {
						continue
					}
					finite++
					xi, cj := wide(s.x[i*d:(i+1)*d]), s.c[j*d:(j+1)*d]
					// Exact ‖x'‖² of the row shifted in float32.
					shifted := make([]float64, d)
					for q := range d {
						shifted[q] = float64(s.x[i*d+q] - c.shift[q])
					}
					rr, _ := exactSq(shifted, make([]float64, d)).Float64()
					exact, _ := exactSq(xi, cj).Float64()
					approx := float64(best[i]) + rr
					require.LessOrEqual(t, math.Abs(approx-exact), slack, "row %d center %d", i, j)
					require.LessOrEqual(t, math.Abs(approx-directSq(xi, cj)), slack, "row %d center %d", i, j)
				}
			}
			if s.name != "max" && s.name != "huger" {
				require.Positive(t, finite)
			}
		})
	}
}

// TestSlack32Limits: the float32 slack is +Inf where its derivation does
// not hold and grows with the norms and the dimension as documented.
func TestSlack32Limits(t *testing.T) {
	r := NewRounding(16)
	require.True(t, math.IsInf(r.Slack32(math.Inf(1), 1), 1))
	require.True(t, math.IsInf(r.Slack32(math.NaN(), 1), 1))
	require.True(t, math.IsInf(r.Slack32(0x1p101, 1), 1))
	require.True(t, math.IsInf(NewRounding(1<<16+1).Slack32(1, 1), 1))
	require.Equal(t, 17*float64(16+8)/16*0x1p-24*7+0x1p-100, r.Slack32(3, 4))
	// At least the float32 rounding of each coordinate of a squared
	// distance of 7 (a lower bound for any correct slack).
	require.Greater(t, r.Slack32(3, 4), 7*0x1p-24)
}

// BenchmarkSearch32 times Searcher32.Assign on the shapes of
// BenchmarkSearch; flops count 2·m·d·k.
func BenchmarkSearch32(b *testing.B) {
	for _, s := range benchShapes {
		b.Run(fmt.Sprintf("m=%d/d=%d/k=%d", s.m, s.d, s.k), func(b *testing.B) {
			rnd := rand.New(rand.NewPCG(1, 1))
			x := narrow(randRows(rnd, s.m, s.d, 0))
			cs := randRows(rnd, s.k, s.d, 0)
			var c Centers32
			c.Pack(cs, s.k, s.d)
			var sr Searcher32
			dst := make([]int, s.m)
			const tile = 256
			b.ReportAllocs()
			for b.Loop() {
				for lo := 0; lo < s.m; lo += tile {
					hi := min(s.m, lo+tile)
					sr.Assign(dst[lo:hi], x[lo*s.d:hi*s.d], hi-lo, &c, func(i, j int) float64 {
						return SqDist(x[(lo+i)*s.d:(lo+i+1)*s.d], cs[j*s.d:(j+1)*s.d])
					})
				}
			}
			b.ReportMetric(2*float64(s.m*s.d*s.k)*float64(b.N)/b.Elapsed().Seconds()/1e9, "GFLOP/s")
		})
	}
}
