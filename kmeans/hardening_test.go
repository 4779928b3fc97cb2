package kmeans

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"math/rand/v2"
	"sync/atomic"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/scale"
	"github.com/centroidlab/centroid/seeding"
)

// TestAbsurdSettings: settings that would size memory beyond reason are
// refused with an error before any work, not a crash.
func TestAbsurdSettings(t *testing.T) {
	x := blobs(50, 2, 2, 1)
	for _, s := range []Settings{
		{Restarts: 1 << 34}, {Restarts: 1 << 50}, {Restarts: MaxRestarts + 1},
		{Workers: 1 << 40}, {Workers: MaxWorkers + 1},
	} {
		_, err := Cluster(context.Background(), Problem{Data: x, K: 2}, &s, nil)
		require.ErrorIs(t, err, ErrSettings, "%+v", s)
	}
	_, err := Cluster(context.Background(), Problem{Data: x, K: 2, Seeder: seeding.PlusPlus{Candidates: 1 << 40}}, &Settings{Restarts: 1}, nil)
	require.ErrorIs(t, err, ErrSeeding)
	require.ErrorIs(t, err, seeding.ErrParameter)
	_, err = Cluster(context.Background(), Problem{Data: x, K: 2}, &Settings{Restarts: MaxRestarts, MaxIterations: 1, Workers: MaxWorkers}, nil)
	require.NoError(t, err, "the documented maxima themselves are accepted")
}

// scaledBlobs returns the rows of blobs multiplied by 2^e (exact for the
// exponents used here).
func scaledBlobs(n, d, k int, seed uint64, e int) *mat.Dense {
	x := blobs(n, d, k, seed)
	out := mat.NewDense(n, d, nil)
	for i, v := range x.RawMatrix().Data {
		out.RawMatrix().Data[i] = math.Ldexp(v, e)
	}
	return out
}

// TestCosineHugeAndTinyRows: cosine dissimilarity does not depend on the
// length of the rows, so rows multiplied by 2^±600 (|x| up to about 1e182,
// whose squares overflow, or 1e-179, whose squares underflow) give the
// partition of the unscaled rows, and the model saves and loads.
func TestCosineHugeAndTinyRows(t *testing.T) {
	ref, err := Cluster(context.Background(), Problem{Data: scaledBlobs(300, 3, 4, 2, 0), K: 4, Metric: distance.Cosine{}}, &Settings{Seed: 5, Restarts: 3}, nil)
	require.NoError(t, err)
	for _, e := range []int{600, -600} {
		x := scaledBlobs(300, 3, 4, 2, e)
		res, err := Cluster(context.Background(), Problem{Data: x, K: 4, Metric: distance.Cosine{}}, &Settings{Seed: 5, Restarts: 3}, nil)
		require.NoError(t, err, "2^%d", e)
		assert.Equal(t, ref.Assignments, res.Assignments, "2^%d", e)
		assert.Equal(t, ref.Status, res.Status)
		assert.InEpsilon(t, ref.Cost, res.Cost, 1e-12)
		assert.Zero(t, res.Stats.EmptyRepairs)
		doc, err := json.Marshal(res.Model)
		require.NoError(t, err)
		var back Model
		require.NoError(t, json.Unmarshal(doc, &back), "the saved model loads")
		for i := range 300 {
			c, _, err := back.Nearest(x.RawRowView(i))
			require.NoError(t, err)
			require.Equal(t, res.Assignments[i], c)
		}
	}
}

// TestEuclideanOutOfRange: rows whose squared distances overflow or
// underflow float64 are refused with ErrData instead of a cost of +Inf or a
// partition of ties.
func TestEuclideanOutOfRange(t *testing.T) {
	for _, e := range []int{540, -700} { // about 1e162 and 1e-211
		x := scaledBlobs(200, 2, 3, 4, e)
		for _, sd := range []seeding.Seeder{seeding.Random{}, seeding.PlusPlus{}, seeding.Uniform{}} {
			res, err := Cluster(context.Background(), Problem{Data: x, K: 3, Seeder: sd}, &Settings{Restarts: 1}, nil)
			require.ErrorIs(t, err, ErrData, "2^%d %T", e, sd)
			require.Nil(t, res)
		}
	}
	// Manhattan measures absolute differences and takes the larger range.
	res, err := Cluster(context.Background(), Problem{Data: scaledBlobs(200, 2, 3, 4, 540), K: 3, Metric: distance.Manhattan{}}, &Settings{Restarts: 1}, nil)
	require.NoError(t, err)
	require.False(t, math.IsInf(res.Cost, 0))
}

// TestUniformWeightsKeepThePartition: weights that are all equal, however
// large or small, give exactly the partition and centers of no weights,
// and a cost scaled by the weight.
func TestUniformWeightsKeepThePartition(t *testing.T) {
	x := blobs(200, 3, 4, 9)
	for _, metric := range []distance.Objective{distance.Euclidean{}, distance.Cosine{}, distance.Manhattan{}} {
		ref, err := Cluster(context.Background(), Problem{Data: x, K: 4, Metric: metric}, &Settings{Seed: 2, Restarts: 2}, nil)
		require.NoError(t, err)
		for _, w := range []float64{1e200, 1e-200, 5e-324, 3} {
			ws := make([]float64, 200)
			for i := range ws {
				ws[i] = w
			}
			res, err := Cluster(context.Background(), Problem{Data: x, K: 4, Metric: metric, Weights: ws}, &Settings{Seed: 2, Restarts: 2}, nil)
			require.NoError(t, err, "%s w=%g", metric.Name(), w)
			require.Equal(t, ref.Assignments, res.Assignments, "%s w=%g", metric.Name(), w)
			require.Equal(t, ref.Model.ScaledCenters().RawMatrix().Data, res.Model.ScaledCenters().RawMatrix().Data)
			require.Equal(t, ref.Iterations, res.Iterations)
			if want := ref.Cost * w; want > 1e-300 {
				assert.InEpsilon(t, want, res.Cost, 1e-12, "%s w=%g", metric.Name(), w)
			} else { // a subnormal cost keeps only a few digits
				assert.InDelta(t, want, res.Cost, 1e-320, "%s w=%g", metric.Name(), w)
			}
			for j, s := range ref.Sizes {
				assert.InDelta(t, float64(s)*w, res.Weights[j], 1e-12*float64(s)*w)
			}
		}
	}
}

// TestHugeWeightRange: weights spread over 2^±300 are scaled by a power of
// two, which is exact, so the result equals that of the same weights
// scaled into [1/2, 1) by hand, with the cost scaled back.
func TestHugeWeightRange(t *testing.T) {
	x := blobs(200, 2, 3, 3)
	w := make([]float64, 200)
	hand := make([]float64, 200)
	for i := range w {
		hand[i] = 0.25 + float64(i%7)/10
		w[i] = math.Ldexp(hand[i], 300)
	}
	a, err := Cluster(context.Background(), Problem{Data: x, K: 3, Weights: w}, &Settings{Seed: 1}, nil)
	require.NoError(t, err)
	b, err := Cluster(context.Background(), Problem{Data: x, K: 3, Weights: hand}, &Settings{Seed: 1}, nil)
	require.NoError(t, err)
	require.Equal(t, b.Assignments, a.Assignments)
	require.Equal(t, math.Ldexp(b.Cost, 300), a.Cost)
}

func TestDistancesChecksScaledRow(t *testing.T) {
	z, err := scale.ZScore{}.Learn(mat.NewDense(2, 2, []float64{0, 0, 2e-300, 2e-300}), nil)
	require.NoError(t, err)
	m, err := NewModel(mat.NewDense(2, 2, []float64{0, 0, 1, 1}), nil, z, nil)
	require.NoError(t, err)
	_, err = m.Distances(nil, []float64{1e300, 0})
	require.ErrorIs(t, err, ErrNotFinite)
	_, _, err = m.Nearest([]float64{1e300, 0})
	require.ErrorIs(t, err, ErrNotFinite)
	plain, err := NewModel(mat.NewDense(2, 1, []float64{0, 1}), nil, nil, nil)
	require.NoError(t, err)
	_, err = plain.Distances(nil, []float64{math.MaxFloat64})
	require.ErrorIs(t, err, ErrNotFinite, "a distance that overflows is not returned as +Inf")
}

// countingMetric is a Euclidean metric without the built-in arithmetic
// that calls hook after every Loss.
type countingMetric struct {
	distance.Euclidean
	calls *atomic.Int64
	hook  func(n int64)
}

func (countingMetric) Arithmetic() distance.Arithmetic { return distance.Custom }

func (m countingMetric) Loss(x, c []float64) float64 {
	if m.hook != nil {
		m.hook(m.calls.Add(1))
	}
	return distance.SqEuclidean(x, c)
}

// TestCancelInsidePass cancels the context in the middle of an assignment
// pass (from inside the metric, so it is reproducible): Cluster returns
// ctx.Err() with the restart taken at its last complete pass, whose
// assignments are the nearest of its centers.
func TestCancelInsidePass(t *testing.T) {
	x := blobs(20000, 2, 8, 6) // 19 blocks
	const k = 8
	perPass := int64(20000 * k)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var calls atomic.Int64
	metric := countingMetric{calls: &calls, hook: func(n int64) {
		if n == 2*perPass+perPass/3 { // a third into the third pass
			cancel()
		}
	}}
	res, err := Cluster(ctx, Problem{Data: x, K: k, Metric: metric, Seeder: seeding.Random{}}, &Settings{Restarts: 1, Workers: 2, Seed: 3}, Lloyd{})
	require.ErrorIs(t, err, context.Canceled)
	require.NotNil(t, res)
	assert.Equal(t, Canceled, res.Status)
	assert.Equal(t, 2, res.Iterations, "the last complete pass")
	assert.Less(t, calls.Load(), 3*perPass, "the third pass stopped early")
	for i := range 20000 {
		c, _, err := res.Model.Nearest(x.RawRowView(i))
		require.NoError(t, err)
		require.Equal(t, c, res.Assignments[i], "row %d", i)
	}
	var cost float64
	centers := res.Model.ScaledCenters()
	for i, a := range res.Assignments {
		cost += distance.SqEuclidean(x.RawRowView(i), centers.RawRowView(a))
	}
	assert.InEpsilon(t, cost, res.Cost, 1e-12)

	// Cancelled in the first pass: no pass completed, no result.
	ctx2, cancel2 := context.WithCancel(context.Background())
	defer cancel2()
	var calls2 atomic.Int64
	metric2 := countingMetric{calls: &calls2, hook: func(n int64) {
		if n == perPass/4 {
			cancel2()
		}
	}}
	res, err = Cluster(ctx2, Problem{Data: x, K: k, Metric: metric2, Seeder: seeding.Random{}}, &Settings{Restarts: 1}, Lloyd{})
	require.ErrorIs(t, err, context.Canceled)
	require.Nil(t, res)
}

// TestCancelInsideSeeding: k-means++ stops between blocks once the
// context ends.
func TestCancelInsideSeeding(t *testing.T) {
	x := blobs(20000, 2, 8, 6)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var calls atomic.Int64
	// k-means++ measures through the metric's Loss: cancel after its
	// first few steps.
	metric := countingMetric{calls: &calls, hook: func(n int64) {
		if n == 50000 {
			cancel()
		}
	}}
	res, err := Cluster(ctx, Problem{Data: x, K: 64, Metric: metric}, &Settings{Restarts: 1}, Lloyd{})
	require.ErrorIs(t, err, context.Canceled)
	require.Nil(t, res)
	// k-means++ would need about n·(1+(k−1)·(L+1)) = 20000·(1+63·7) losses.
	assert.Less(t, calls.Load(), int64(100000))
}

type panicSeeder struct{}

func (panicSeeder) Seed(*mat.Dense, *mat.Dense, []float64, distance.Metric, *rand.Rand) error {
	panic("seeder bug")
}

type panicScaler struct{ scale.ZScore }

func (panicScaler) Learn(mat.Matrix, []float64) (scale.Scaler, error) { panic("scaler bug") }

// TestPanicsBecomeErrors: a panic in caller-supplied code, on any
// goroutine, is returned as an error wrapping ErrPanic that names it.
func TestPanicsBecomeErrors(t *testing.T) {
	x := blobs(5000, 2, 3, 1)
	var calls atomic.Int64
	boom := countingMetric{calls: &calls, hook: func(n int64) {
		if n == 3000 {
			panic("metric bug")
		}
	}}
	cases := []struct {
		name string
		p    Problem
		s    *Settings
		m    Method
		want string
	}{
		{"seeder", Problem{Data: x, K: 3, Seeder: panicSeeder{}}, nil, nil, "panicSeeder"},
		{"metric in a pass", Problem{Data: x, K: 3, Metric: boom, Seeder: seeding.Random{}}, &Settings{Workers: 2}, Lloyd{}, "countingMetric"},
		{"progress", Problem{Data: x, K: 3}, &Settings{Progress: func(Progress) { panic("progress bug") }}, nil, "Settings.Progress"},
		{"scaler", Problem{Data: x, K: 3, Scaler: panicScaler{}}, nil, nil, "panicScaler"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			calls.Store(0)
			res, err := Cluster(context.Background(), c.p, c.s, c.m)
			require.ErrorIs(t, err, ErrPanic)
			require.Nil(t, res)
			assert.Contains(t, err.Error(), c.want)
			assert.Contains(t, err.Error(), "bug")
		})
	}
}

// TestNilValues: nil pointers in the problem are refused, not
// dereferenced.
func TestNilValues(t *testing.T) {
	x := blobs(50, 2, 2, 1)
	var pp *seeding.PlusPlus
	_, err := Cluster(context.Background(), Problem{Data: x, K: 2, Seeder: pp}, nil, nil)
	require.ErrorIs(t, err, ErrSeeding)
	_, err = Cluster(context.Background(), Problem{Data: (*mat.Dense)(nil), K: 2}, nil, nil)
	require.ErrorIs(t, err, ErrData)
	var y *Yinyang
	_, err = Cluster(context.Background(), Problem{Data: x, K: 2}, nil, y)
	require.ErrorIs(t, err, ErrSettings)
	var zs *scale.ZScore
	_, err = Cluster(context.Background(), Problem{Data: x, K: 2, Scaler: zs}, nil, nil)
	require.Error(t, err)
	require.True(t, errors.Is(err, ErrPanic) || errors.Is(err, ErrData), "%v", err)
}
