package seeding_test

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/seeding"
)

func TestGiven(t *testing.T) {
	data := mat.NewDense(4, 2, []float64{0, 0, 1, 1, 2, 2, 3, 3})
	centers := mat.NewDense(2, 2, []float64{0.5, 0.5, 2.5, 2.5})
	dst := mat.NewDense(2, 2, nil)
	require.NoError(t, seeding.Given{Centers: centers}.Seed(dst, data, nil, nil, nil))
	assert.Equal(t, centers.RawMatrix().Data, dst.RawMatrix().Data)
	dst.Set(0, 0, 9)
	assert.Equal(t, 0.5, centers.At(0, 0), "the given centers are copied, not shared")

	cases := []struct {
		name    string
		centers mat.Matrix
		dst     *mat.Dense
		metric  distance.Metric
		want    error
	}{
		{"nil centers", nil, mat.NewDense(2, 2, nil), nil, seeding.ErrShape},
		{"other k", centers, mat.NewDense(3, 2, nil), nil, seeding.ErrShape},
		{"other width", mat.NewDense(2, 3, nil), mat.NewDense(2, 3, nil), nil, seeding.ErrShape},
		{"NaN", mat.NewDense(2, 2, []float64{0, math.NaN(), 1, 1}), mat.NewDense(2, 2, nil), nil, seeding.ErrParameter},
		{"repeated", mat.NewDense(2, 2, []float64{1, 1, 1, 1}), mat.NewDense(2, 2, nil), nil, seeding.ErrParameter},
		{"zero under cosine", mat.NewDense(2, 2, []float64{0, 0, 1, 1}), mat.NewDense(2, 2, nil), distance.Cosine{}, seeding.ErrParameter},
		{"dst is the data", centers, data.Slice(0, 2, 0, 2).(*mat.Dense), nil, seeding.ErrShape},
		{"dst is the centers", centers, centers, nil, seeding.ErrShape},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			before := mat.DenseCopyOf(c.dst)
			err := seeding.Given{Centers: c.centers}.Seed(c.dst, data, nil, c.metric, nil)
			require.ErrorIs(t, err, c.want)
			assert.Equal(t, before.RawMatrix().Data, c.dst.RawMatrix().Data, "dst unchanged on error")
		})
	}
}

// A warm start: last month's centers of the Riverton Bikes stations (in the
// clustering space) seed this month's run.
func ExampleGiven() {
	lastMonth := mat.NewDense(2, 2, []float64{110, 20, 290, 35})
	stations := mat.NewDense(4, 2, []float64{100, 18, 120, 22, 280, 30, 300, 40})
	dst := mat.NewDense(2, 2, nil)
	if err := (seeding.Given{Centers: lastMonth}).Seed(dst, stations, nil, nil, nil); err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(mat.Formatted(dst))
	// Output:
	// ⎡110   20⎤
	// ⎣290   35⎦
}

// PlusPlus refuses an absurd number of candidates and stops when its
// context ends, leaving dst unchanged.
func TestPlusPlusLimitsAndContext(t *testing.T) {
	data := mat.NewDense(5000, 2, nil)
	for i := range 5000 {
		data.Set(i, 0, float64(i%97))
		data.Set(i, 1, float64(i%89))
	}
	dst := mat.NewDense(20, 2, nil)
	rnd := rand.New(rand.NewPCG(1, 2))
	err := seeding.PlusPlus{Candidates: seeding.MaxCandidates + 1}.Seed(dst, data, nil, nil, rnd)
	require.ErrorIs(t, err, seeding.ErrParameter)
	require.NoError(t, seeding.PlusPlus{Candidates: seeding.MaxCandidates}.Seed(dst, data, nil, nil, rnd))
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	before := mat.DenseCopyOf(dst)
	err = seeding.PlusPlus{}.SeedContext(ctx, dst, data, nil, nil, rnd)
	require.ErrorIs(t, err, context.Canceled)
	assert.Equal(t, before.RawMatrix().Data, dst.RawMatrix().Data)
}
