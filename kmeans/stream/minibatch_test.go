package stream_test

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/data/synth"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/scale"
)

// costOf is the within-cluster sum of squares of X against centers,
// computed directly.
func costOf(X, centers *mat.Dense) float64 {
	n, _ := X.Dims()
	k, _ := centers.Dims()
	var s float64
	for i := range n {
		best := math.Inf(1)
		for j := range k {
			best = math.Min(best, distance.SqEuclidean(X.RawRowView(i), centers.RawRowView(j)))
		}
		s += best
	}
	return s
}

func chanOf(X *mat.Dense) <-chan []float64 {
	ch := make(chan []float64, 64)
	n, _ := X.Dims()
	go func() {
		defer close(ch)
		for i := range n {
			ch <- X.RawRowView(i)
		}
	}()
	return ch
}

// TestMiniBatchOneFullBatchIsALloydStep checks Sculley's update with the
// per-center rate 1/v against its closed form: when one batch holds every
// row, each center that receives rows ends at their mean (the running mean
// with rate 1/v), whatever their order: one Lloyd step, computed here
// directly. A center that receives no row stays put.
func TestMiniBatchOneFullBatchIsALloydStep(t *testing.T) {
	X := synth.Blobs(2000, 3, 4, 21)
	c0 := mat.NewDense(5, 3, nil)
	for j := range 4 {
		c0.SetRow(j, X.RawRowView(j))
	}
	c0.SetRow(4, []float64{1e5, 1e5, 1e5}) // receives nothing
	src, err := stream.NewChan(chanOf(X), 3, nil)
	require.NoError(t, err)
	res, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: 5, Centers: c0},
		nil, stream.MiniBatch{BatchSize: 2000, BufferRows: 2000, MaxBatches: 1})
	require.NoError(t, err)
	assert.Equal(t, 1, res.Batches)
	assert.Equal(t, kmeans.IterationLimit, res.Status)
	sums := make([][]float64, 5)
	counts := make([]float64, 5)
	for i := range 2000 {
		x := X.RawRowView(i)
		best := 0
		for j := range 5 {
			if distance.SqEuclidean(x, c0.RawRowView(j)) < distance.SqEuclidean(x, c0.RawRowView(best)) {
				best = j
			}
		}
		if sums[best] == nil {
			sums[best] = make([]float64, 3)
		}
		for c, v := range x {
			sums[best][c] += v
		}
		counts[best]++
	}
	got := res.Model.ScaledCenters()
	for j := range 4 {
		for c := range 3 {
			assert.InDelta(t, sums[j][c]/counts[j], got.At(j, c), 1e-9, "center %d", j)
		}
	}
	assert.Equal(t, c0.RawRowView(4), got.RawRowView(4))
	assert.EqualValues(t, 2000, res.Rows)
}

// TestMiniBatchOnePass runs mini-batch on a channel: one pass, seeds from
// the head, reproducible from the seed, and a cost near exact Lloyd's on
// well separated blobs (the paper reports mini-batch within a few percent
// of batch k-means, Sculley 2010 fig. 1, from memory; 3% here).
func TestMiniBatchOnePass(t *testing.T) {
	X := synth.Blobs(40000, 4, 8, 13)
	run := func(workers int) *stream.Result {
		src, err := stream.NewChan(chanOf(X), 4, nil)
		require.NoError(t, err)
		res, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: 8},
			&stream.Settings{Seed: 5, Workers: workers, SampleRows: 5000}, nil)
		require.NoError(t, err)
		return res
	}
	a, b := run(1), run(3)
	assert.Equal(t, a.Model.ScaledCenters().RawMatrix().Data, b.Model.ScaledCenters().RawMatrix().Data, "depends on workers")
	assert.Equal(t, "mini-batch", a.Method)
	assert.Contains(t, a.Seeding, "k-means++ on the first 5000 rows")
	assert.False(t, a.Exact)
	assert.Equal(t, 1, a.Passes)
	best, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: X, K: 8}, &kmeans.Settings{Seed: 1}, nil)
	require.NoError(t, err)
	got := costOf(X, a.Model.ScaledCenters())
	t.Logf("mini-batch %d batches: %.6g, Lloyd best of 10: %.6g (ratio %.4f)", a.Batches, got, best.Cost, got/best.Cost)
	assert.Less(t, got, 1.03*best.Cost)
	var n int64
	for _, s := range a.Sizes {
		n += s
	}
	assert.Equal(t, a.Rows, n)
	require.NotNil(t, a.Model.Training())
}

// TestMiniBatchThenExact ends mini-batch with exact passes on a reopenable
// source: the cost is then exact and at most the mini-batch centers' cost.
func TestMiniBatchThenExact(t *testing.T) {
	X := synth.Blobs(30000, 3, 6, 17)
	src, err := stream.NewMatrix(X, nil)
	require.NoError(t, err)
	res, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: 6, Scaler: scale.ZScore{}},
		&stream.Settings{Seed: 2, BlockRows: 2048}, stream.MiniBatch{ExactPasses: 3})
	require.NoError(t, err)
	assert.True(t, res.Exact)
	assert.LessOrEqual(t, res.Iterations, 4)
	assert.Positive(t, res.Batches)
	assert.Equal(t, 2, res.Stages[stream.StageScale])
	assert.Equal(t, 6, res.Stages[stream.StageSeed], "5 rounds and the weighing pass; the first candidate comes from the scaler pass")
	assert.Equal(t, res.Passes, res.Stages[stream.StageScale]+res.Stages[stream.StageSeed]+res.Stages[stream.StageMiniBatch]+res.Stages[stream.StageLloyd])
	// The reported cost is the model's own cost over the scaled rows.
	n, d := X.Dims()
	Z := mat.NewDense(n, d, nil)
	for i := range n {
		res.Model.Scaler().Apply(Z.RawRowView(i), X.RawRowView(i))
	}
	assert.InEpsilon(t, costOf(Z, res.Model.ScaledCenters()), res.Cost, 1e-9)
}

// TestKMeansParallelStreaming checks the default seeding of a reopenable
// source: deterministic for any workers and block size, 7 passes without a
// scaler (first candidate, 5 rounds, weighing), and a final cost near the
// in-memory best of 10 restarts.
func TestKMeansParallelStreaming(t *testing.T) {
	X := synth.Blobs(20000, 4, 10, 31)
	run := func(s stream.Settings) *stream.Result {
		src, err := stream.NewMatrix(X, nil)
		require.NoError(t, err)
		res, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: 10}, &s, nil)
		require.NoError(t, err)
		return res
	}
	a := run(stream.Settings{Seed: 9, Workers: 1, BlockRows: 700})
	b := run(stream.Settings{Seed: 9, Workers: 3, BlockRows: 8192})
	assert.Equal(t, a.Model.ScaledCenters().RawMatrix().Data, b.Model.ScaledCenters().RawMatrix().Data)
	assert.Equal(t, a.Cost, b.Cost)
	assert.Equal(t, 7, a.Stages[stream.StageSeed])
	assert.Contains(t, a.Seeding, "k-means‖: 5 rounds")
	best, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: X, K: 10}, &kmeans.Settings{Seed: 1}, nil)
	require.NoError(t, err)
	t.Logf("streamed k-means‖ + Lloyd: %.6g; in memory best of 10: %.6g", a.Cost, best.Cost)
	assert.Less(t, a.Cost, 1.01*best.Cost)
}
