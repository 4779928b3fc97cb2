package seeding_test

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/seeding"
)

// float32Rows returns n×d float32 values with a stride of d+pad (the pad
// holds NaN, which a seeder must never read) and their float64 conversion.
func float32Rows(rnd *rand.Rand, n, d, pad int, integer bool) (blas32.General, *mat.Dense) {
	g := blas32.General{Rows: n, Cols: d, Stride: d + pad, Data: make([]float32, n*(d+pad))}
	x := mat.NewDense(n, d, nil)
	for i := range n {
		for j := range d + pad {
			v := float32(math.NaN())
			if j < d {
				if integer {
					v = float32(rnd.IntN(4))
				} else {
					v = float32(rnd.NormFloat64()*10 + 1)
				}
				x.Set(i, j, float64(v))
			}
			g.Data[i*(d+pad)+j] = v
		}
	}
	return g, x
}

// TestSeedFloat32: every seeder's SeedFloat32 gives exactly the centers
// of Seed on the float64 conversion of the data, from the same generator
// state, under every metric, with and without weights, strided or not,
// for 1 and 3 workers; and the same errors on bad input.
func TestSeedFloat32(t *testing.T) {
	rnd := rand.New(rand.NewPCG(21, 21))
	w := make([]float64, 3000)
	for i := range w {
		w[i] = float64(rnd.IntN(3))
	}
	all := append(seeders[:len(seeders):len(seeders)], struct {
		name string
		s    seeding.Seeder
		rows bool
	}{"PlusPlus3", seeding.PlusPlus{Workers: 3}, true})
	for _, sd := range all {
		for _, m := range []distance.Metric{distance.Euclidean{}, distance.Manhattan{}, distance.Cosine{}} {
			for _, pad := range []int{0, 2} {
				for _, integer := range []bool{false, true} {
					name := fmt.Sprintf("%s/%s/pad=%d/integer=%v", sd.name, m.Name(), pad, integer)
					t.Run(name, func(t *testing.T) {
						g, x := float32Rows(rnd, 3000, 5, pad, integer)
						s32 := sd.s.(seeding.Float32Seeder)
						for _, weights := range [][]float64{nil, w} {
							want, got := mat.NewDense(7, 5, nil), mat.NewDense(7, 5, nil)
							errWant := sd.s.Seed(want, x, weights, m, rand.New(rand.NewPCG(3, 4)))
							errGot := s32.SeedFloat32(context.Background(), got, g, weights, m, rand.New(rand.NewPCG(3, 4)))
							if errWant != nil {
								require.Error(t, errGot)
								continue
							}
							require.NoError(t, errGot)
							require.Equal(t, want.RawMatrix().Data, got.RawMatrix().Data)
						}
					})
				}
			}
		}
	}
	given := seeding.Given{Centers: mat.NewDense(2, 2, []float64{0, 1, 2, 3})}
	dst := mat.NewDense(2, 2, nil)
	require.NoError(t, given.SeedFloat32(context.Background(), dst, blas32.General{Rows: 5, Cols: 2, Stride: 2, Data: make([]float32, 10)}, nil, nil, nil))
	require.Equal(t, []float64{0, 1, 2, 3}, dst.RawMatrix().Data)
	require.ErrorIs(t, given.SeedFloat32(context.Background(), dst, blas32.General{Rows: 5, Cols: 3, Stride: 3, Data: make([]float32, 15)}, nil, nil, nil), seeding.ErrShape)
	// Bad float32 input: storage too short, empty, NaN rows, k too large.
	pp := seeding.PlusPlus{}
	r := rand.New(rand.NewPCG(1, 1))
	require.ErrorIs(t, pp.SeedFloat32(context.Background(), dst, blas32.General{Rows: 5, Cols: 2, Stride: 2, Data: make([]float32, 9)}, nil, nil, r), seeding.ErrShape)
	require.ErrorIs(t, pp.SeedFloat32(context.Background(), dst, blas32.General{}, nil, nil, r), seeding.ErrShape)
	nan := []float32{1, 2, float32(math.NaN()), 4}
	require.ErrorIs(t, pp.SeedFloat32(context.Background(), dst, blas32.General{Rows: 2, Cols: 2, Stride: 2, Data: nan}, nil, nil, r), distance.ErrNotFinite)
	same := []float32{1, 2, 1, 2}
	require.ErrorIs(t, pp.SeedFloat32(context.Background(), dst, blas32.General{Rows: 2, Cols: 2, Stride: 2, Data: same}, nil, nil, r), seeding.ErrK)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	g, _ := float32Rows(rnd, 3000, 5, 0, false)
	require.ErrorIs(t, pp.SeedFloat32(ctx, mat.NewDense(4, 5, nil), g, nil, nil, r), context.Canceled)
}
