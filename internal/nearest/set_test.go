package nearest

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/distance"
)

// TestSetMatchesDirect: Set's answers are those of a brute-force scan with
// the distance package's own functions, bit for bit (index, loss and
// runner-up loss), on random and on integer-grid centers (exact ties,
// duplicates) of every d from 1 to 41, k not a multiple of four included.
func TestSetMatchesDirect(t *testing.T) {
	rnd := rand.New(rand.NewPCG(5, 5))
	losses := map[Loss]func(x, y []float64) float64{
		SquaredEuclidean: distance.SqEuclidean,
		Manhattan:        distance.Manhattan{}.Distance,
	}
	for loss, fn := range losses {
		for d := 1; d <= 41; d++ {
			for _, k := range []int{1, 2, 3, 4, 5, 7, 8, 13, 33} {
				grid := (d+k)%2 == 0
				gen := func() float64 {
					if grid {
						return float64(rnd.IntN(4))
					}
					return rnd.NormFloat64() * math.Pow(10, float64(rnd.IntN(8)-4))
				}
				c := make([]float64, k*d)
				for i := range c {
					c[i] = gen()
				}
				s := NewSet(c, k, d, loss)
				scan := *s
				scan.packed = nil // the plain scan, whatever the processor
				z := make([]float64, d)
				for range 20 {
					for i := range z {
						z[i] = gen()
					}
					wj, wl, ws := 0, math.Inf(1), math.Inf(1)
					for j := range k {
						l := fn(z, c[j*d:(j+1)*d])
						switch {
						case l < wl:
							wj, wl, ws = j, l, wl
						case l < ws:
							ws = l
						}
					}
					j, l, l2 := s.Nearest2(z)
					name := fmt.Sprintf("loss %d d=%d k=%d", loss, d, k)
					require.Equal(t, wj, j, name)
					require.Equal(t, math.Float64bits(wl), math.Float64bits(l), name)
					require.Equal(t, math.Float64bits(ws), math.Float64bits(l2), name)
					j, l = s.Nearest(z)
					require.Equal(t, wj, j, name)
					require.Equal(t, math.Float64bits(wl), math.Float64bits(l), name)
					j, l, l2 = scan.Nearest2(z)
					require.Equal(t, wj, j, name)
					require.Equal(t, math.Float64bits(wl), math.Float64bits(l), name)
					require.Equal(t, math.Float64bits(ws), math.Float64bits(l2), name)
				}
			}
		}
	}
}

// TestSetOverflow: when every loss overflows, Nearest reports +Inf.
func TestSetOverflow(t *testing.T) {
	s := NewSet([]float64{-1e300, 1e300}, 1, 2, SquaredEuclidean)
	_, l := s.Nearest([]float64{1e300, -1e300})
	require.True(t, math.IsInf(l, 1))
}

func TestSetAllocs(t *testing.T) {
	s := NewSet(make([]float64, 32*16), 32, 16, SquaredEuclidean)
	z := make([]float64, 16)
	require.Zero(t, testing.AllocsPerRun(100, func() { s.Nearest2(z) }))
}
