package kmeans

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/scale"
	"github.com/centroidlab/centroid/seeding"
)

// TestNewModelMatchesCluster: a model rebuilt with NewModel from a
// clustering's scaled centers, metric, scaler and features labels every
// training row as the clustering did, and its document checksum equals that
// of the original once the training summary is carried over.
func TestNewModelMatchesCluster(t *testing.T) {
	x := blobs(400, 3, 4, 21)
	for _, metric := range []distance.Objective{distance.Euclidean{}, distance.Manhattan{}, distance.Cosine{}} {
		t.Run(metric.Name(), func(t *testing.T) {
			res, err := Cluster(context.Background(), Problem{Data: x, K: 4, Metric: metric, Scaler: &scale.ZScore{}, Features: []string{"a", "b", "c"}}, &Settings{Restarts: 2, Seed: 3}, nil)
			require.NoError(t, err)
			m, err := NewModel(res.Model.ScaledCenters(), metric, res.Model.Scaler(), res.Model.Features())
			require.NoError(t, err)
			require.Nil(t, m.Training())
			for i := range 400 {
				c, _, err := m.Nearest(x.RawRowView(i))
				require.NoError(t, err)
				require.Equal(t, res.Assignments[i], c, "row %d", i)
			}
			m, err = m.WithTraining(res.Model.Training())
			require.NoError(t, err)
			want, err := res.Model.Checksum()
			require.NoError(t, err)
			got, err := m.Checksum()
			require.NoError(t, err)
			assert.Equal(t, want, got)
			doc, err := json.Marshal(m)
			require.NoError(t, err)
			var back Model
			require.NoError(t, json.Unmarshal(doc, &back))
			assert.Equal(t, res.Model.Features(), back.Features())
		})
	}
}

func TestNewModelBadInput(t *testing.T) {
	two := mat.NewDense(2, 2, []float64{0, 0, 1, 1})
	z, err := scale.ZScore{}.Learn(mat.NewDense(2, 3, []float64{0, 0, 0, 1, 1, 1}), nil)
	require.NoError(t, err)
	cases := []struct {
		name     string
		centers  mat.Matrix
		metric   distance.Objective
		scaler   scale.Scaler
		features []string
		want     error
	}{
		{"nil centers", nil, nil, nil, nil, ErrModel},
		{"nil dense", (*mat.Dense)(nil), nil, nil, nil, ErrModel},
		{"NaN", mat.NewDense(1, 2, []float64{math.NaN(), 0}), nil, nil, nil, ErrModel},
		{"Inf", mat.NewDense(1, 2, []float64{0, math.Inf(-1)}), nil, nil, nil, ErrModel},
		{"zero center under cosine", two, distance.Cosine{}, nil, nil, ErrModel},
		{"not unit under cosine", mat.NewDense(1, 2, []float64{3, 4}), distance.Cosine{}, nil, nil, ErrModel},
		{"scaler of other width", two, nil, z, nil, ErrModel},
		{"features of other width", two, nil, nil, []string{"a"}, ErrSchema},
		{"repeated feature", two, nil, nil, []string{"a", "a"}, ErrSchema},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m, err := NewModel(c.centers, c.metric, c.scaler, c.features)
			require.ErrorIs(t, err, c.want)
			require.Nil(t, m)
		})
	}
	// A center of unit length (3/5, 4/5) is accepted under cosine.
	m, err := NewModel(mat.NewDense(1, 2, []float64{0.6, 0.8}), distance.Cosine{}, nil, nil)
	require.NoError(t, err)
	require.Equal(t, 1, m.K())
}

func TestWithTrainingChecks(t *testing.T) {
	m, err := NewModel(mat.NewDense(2, 1, []float64{0, 10}), nil, nil, nil)
	require.NoError(t, err)
	good := &Training{Rows: 3, Clusters: []ClusterSummary{
		{Size: 2, Weight: 2, Cost: 1, Distances: Quantiles{P50: 0.5, P90: 0.5, P99: 0.5, Max: 0.5}},
		{Size: 1, Weight: 1},
	}}
	got, err := m.WithTraining(good)
	require.NoError(t, err)
	assert.Equal(t, []float64{2.0 / 3, 1.0 / 3}, got.Training().Shares())
	good.Clusters[0].Size = 99 // the model kept a copy
	assert.Equal(t, 2, got.Training().Clusters[0].Size)
	bad := []*Training{
		{Rows: 0, Clusters: []ClusterSummary{{}, {}}},
		{Rows: 3, Clusters: []ClusterSummary{{Size: 3, Weight: 3}}},
		{Rows: 3, Clusters: []ClusterSummary{{Size: 2, Weight: 2}, {Size: 2, Weight: 1}}},
		{Rows: 3, Clusters: []ClusterSummary{{Size: 2, Weight: math.NaN()}, {Size: 1, Weight: 1}}},
		{Rows: 3, Clusters: []ClusterSummary{{Size: 2, Weight: 2, Distances: Quantiles{P50: 2, P90: 1, P99: 2, Max: 2}}, {Size: 1, Weight: 1}}},
		{Rows: 3, Clusters: []ClusterSummary{{Size: 3, Weight: 3}, {Size: 0, Weight: 1}}},
	}
	for i, tr := range bad {
		_, err := m.WithTraining(tr)
		require.ErrorIs(t, err, ErrModel, "case %d", i)
	}
	none, err := got.WithTraining(nil)
	require.NoError(t, err)
	assert.Nil(t, none.Training())
}

// TestPartialCenters compares the center rules of Partial.Centers with
// brute-force means and renormalised means of unit rows.
func TestPartialCenters(t *testing.T) {
	x := blobs(200, 3, 4, 5)
	const k = 4
	assign := make([]int, 200)
	for i := range assign {
		assign[i] = (i * 7) % 3 // cluster 3 stays empty
	}
	w := make([]float64, 200)
	for i := range w {
		w[i] = 0.5 + float64(i%5)
	}
	mean, unit := NewPartial(k, 3), NewPartial(k, 3)
	for i := range 200 {
		row := x.RawRowView(i)
		mean.Add(assign[i], row, w[i], 0)
		var n float64
		for _, v := range row {
			n += v * v
		}
		n = math.Sqrt(n)
		unit.Add(assign[i], []float64{row[0] / n, row[1] / n, row[2] / n}, w[i], 0)
	}
	got := make([]float64, k*3)
	for i := range got {
		got[i] = -1
	}
	empty, err := mean.Centers(got, distance.MeanRule)
	require.NoError(t, err)
	assert.Equal(t, []int{3}, empty)
	assert.Equal(t, []float64{-1, -1, -1}, got[9:12], "an empty cluster's row is left alone")
	for j := range 3 {
		var sw float64
		want := make([]float64, 3)
		for i := range 200 {
			if assign[i] == j {
				sw += w[i]
				for c := range 3 {
					want[c] += w[i] * x.At(i, c)
				}
			}
		}
		for c := range 3 {
			assert.InEpsilon(t, want[c]/sw, got[j*3+c], 1e-12)
		}
	}
	_, err = unit.Centers(got, distance.UnitMeanRule)
	require.NoError(t, err)
	for j := range 3 {
		var n float64
		for c := range 3 {
			n += got[j*3+c] * got[j*3+c]
		}
		assert.InDelta(t, 1, n, 1e-12, "unit length")
		var s [3]float64
		for i := range 200 {
			if assign[i] == j {
				row := x.RawRowView(i)
				rn := math.Sqrt(row[0]*row[0] + row[1]*row[1] + row[2]*row[2])
				for c := range 3 {
					s[c] += w[i] * row[c] / rn
				}
			}
		}
		sn := math.Sqrt(s[0]*s[0] + s[1]*s[1] + s[2]*s[2])
		for c := range 3 {
			assert.InDelta(t, s[c]/sn, got[j*3+c], 1e-12)
		}
	}
	_, err = mean.Centers(got, distance.MedianRule)
	require.ErrorIs(t, err, ErrMetric)
	assert.Panics(t, func() { _, _ = mean.Centers(got[:5], distance.MeanRule) })
}

// TestGivenWarmStart: seeding with a result's own centers reaches the same
// fixed point at once (the first pass assigns every row, the second moves
// none), with the partition of the run it came from.
func TestGivenWarmStart(t *testing.T) {
	x := blobs(500, 2, 5, 8)
	res, err := Cluster(context.Background(), Problem{Data: x, K: 5}, &Settings{Seed: 4}, Lloyd{})
	require.NoError(t, err)
	warm, err := Cluster(context.Background(), Problem{Data: x, K: 5, Seeder: seeding.Given{Centers: res.Model.ScaledCenters()}}, &Settings{Restarts: 1}, Lloyd{})
	require.NoError(t, err)
	assert.Equal(t, 2, warm.Iterations)
	assert.Equal(t, Converged, warm.Status)
	assert.Equal(t, res.Assignments, warm.Assignments)
	assert.Equal(t, res.Cost, warm.Cost)
	_, err = Cluster(context.Background(), Problem{Data: x, K: 4, Seeder: seeding.Given{Centers: res.Model.ScaledCenters()}}, nil, nil)
	require.ErrorIs(t, err, ErrSeeding)
	require.ErrorIs(t, err, seeding.ErrShape)
}

// wrappedMetric embeds Euclidean: a user's metric type with methods of its
// own keeps the blocked kernel and the bound solvers.
type wrappedMetric struct{ distance.Euclidean }

func (wrappedMetric) Name() string { return "euclidean" }

func TestWrappedMetricKeepsFastPaths(t *testing.T) {
	x := blobs(3000, 4, 6, 2)
	sp, err := NewSpace(Problem{Data: x, K: 6, Metric: wrappedMetric{}})
	require.NoError(t, err)
	pass, err := Lloyd{}.Start(sp, 6)
	require.NoError(t, err)
	_, kernel := pass.(*lloydKernel)
	assert.True(t, kernel, "Lloyd runs the blocked kernel for a wrapped Euclidean")
	plain, err := NewSpace(Problem{Data: x, K: 6})
	require.NoError(t, err)
	assert.Equal(t, choose(plain, 6), choose(sp, 6))
	a, err := Cluster(context.Background(), Problem{Data: x, K: 6, Metric: wrappedMetric{}}, &Settings{Seed: 1}, nil)
	require.NoError(t, err)
	b, err := Cluster(context.Background(), Problem{Data: x, K: 6}, &Settings{Seed: 1}, nil)
	require.NoError(t, err)
	assert.Equal(t, b.Assignments, a.Assignments)
	assert.Equal(t, b.Cost, a.Cost)
	assert.Equal(t, b.Stats.Distances, a.Stats.Distances)
	assert.Equal(t, b.Stats.Method, a.Stats.Method)
}

func TestStatusErr(t *testing.T) {
	assert.NoError(t, Converged.Err())
	assert.NoError(t, CostTolerance.Err())
	assert.ErrorIs(t, IterationLimit.Err(), ErrIterationLimit)
	assert.ErrorIs(t, Canceled.Err(), context.Canceled)
	assert.ErrorIs(t, NotTerminated.Err(), ErrNotTerminated)
	assert.ErrorIs(t, Status(42).Err(), ErrNotTerminated)
	x := blobs(300, 2, 3, 1)
	res, err := Cluster(context.Background(), Problem{Data: x, K: 3}, &Settings{MaxIterations: 1, Restarts: 1}, nil)
	require.NoError(t, err)
	if res.Status == IterationLimit {
		assert.True(t, errors.Is(res.Status.Err(), ErrIterationLimit))
	}
}

func TestSettingsResolve(t *testing.T) {
	r, err := (*Settings)(nil).Resolve()
	require.NoError(t, err)
	assert.Equal(t, DefaultRestarts, r.Restarts)
	assert.Equal(t, DefaultMaxIterations, r.MaxIterations)
	assert.Positive(t, r.Workers)
	r, err = (&Settings{Restarts: 3, Seed: 9}).Resolve()
	require.NoError(t, err)
	assert.Equal(t, 3, r.Restarts)
	assert.Equal(t, uint64(9), r.Seed)
	_, err = (&Settings{Restarts: -1}).Resolve()
	require.ErrorIs(t, err, ErrSettings)
}

// TestNewSpace: the clustering space is the scaled data; a *mat.Dense
// without a scaler is used in place.
func TestNewSpace(t *testing.T) {
	x := blobs(50, 2, 2, 3)
	sp, err := NewSpace(Problem{Data: x})
	require.NoError(t, err)
	assert.Same(t, &x.RawMatrix().Data[0], &sp.X[0])
	assert.Nil(t, sp.Scaler)
	sp, err = NewSpace(Problem{Data: x, Scaler: &scale.MinMax{}})
	require.NoError(t, err)
	require.NotNil(t, sp.Scaler)
	row := make([]float64, 2)
	for i := range 50 {
		sp.Scaler.Apply(row, x.RawRowView(i))
		require.Equal(t, row, sp.Row(i))
	}
	_, err = NewSpace(Problem{Data: x, K: 51})
	require.ErrorIs(t, err, ErrK)
	_, err = NewSpace(Problem{})
	require.ErrorIs(t, err, ErrData)
}

// hugeDims is a matrix that only states its shape.
type hugeDims struct{ r, c int }

func (h hugeDims) Dims() (int, int)  { return h.r, h.c }
func (hugeDims) At(int, int) float64 { return 0 }
func (h hugeDims) T() mat.Matrix     { return hugeDims{h.c, h.r} }

func TestNewModelSizeLimit(t *testing.T) {
	_, err := NewModel(hugeDims{MaxServedValues/4 + 1, 4}, nil, nil, nil)
	require.ErrorIs(t, err, ErrTooLarge)
	require.ErrorIs(t, err, ErrModel)
}
