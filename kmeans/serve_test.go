package kmeans

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/scale"
)

// scanAssign is the brute-force reference for Model.Assign, written
// independently of the search: scale the row, take the metric's Loss to
// every center, keep the lowest (lowest index on ties) and the runner-up,
// and report their metric Distances.
func scanAssign(metric distance.Objective, sc scale.Scaler, centers []float64, k int, x []float64) Assignment {
	d := len(x)
	z := append([]float64(nil), x...)
	if sc != nil {
		sc.Apply(z, x)
	}
	best, second := -1, -1
	for j := range k {
		l := metric.Loss(z, centers[j*d:(j+1)*d])
		switch {
		case best < 0 || l < metric.Loss(z, centers[best*d:(best+1)*d]):
			best, second = j, best
		case second < 0 || l < metric.Loss(z, centers[second*d:(second+1)*d]):
			second = j
		}
	}
	a := Assignment{Cluster: best, Distance: metric.Distance(z, centers[best*d:(best+1)*d]), Margin: math.Inf(1)}
	if second >= 0 {
		a.Margin = metric.Distance(z, centers[second*d:(second+1)*d]) - a.Distance
	}
	return a
}

// searchCase is a model built from given centers and rows to query it with.
type searchCase struct {
	name    string
	metric  distance.Objective
	centers []float64
	k, d    int
	queries [][]float64
}

// searchCases returns models with random, clustered, tied, duplicated,
// huge and tiny centers, and queries that include the centers themselves
// and midpoints between them (exact ties).
func searchCases() []searchCase {
	rnd := rand.New(rand.NewPCG(41, 1))
	var cases []searchCase
	add := func(name string, metric distance.Objective, k, d int, gen func() float64, nq int) {
		c := make([]float64, k*d)
		for i := range c {
			c[i] = gen()
		}
		if metric.Rule() == distance.UnitMeanRule {
			for j := range k {
				row := c[j*d : (j+1)*d]
				for floats.Norm(row, 2) == 0 {
					for i := range row {
						row[i] = gen()
					}
				}
				floats.Scale(1/floats.Norm(row, 2), row)
			}
		}
		var qs [][]float64
		for range nq {
			q := make([]float64, d)
			for i := range q {
				q[i] = gen()
			}
			qs = append(qs, q)
		}
		for j := range k {
			qs = append(qs, append([]float64(nil), c[j*d:(j+1)*d]...))
			if j > 0 {
				mid := make([]float64, d)
				for i := range mid {
					mid[i] = (c[j*d+i] + c[(j-1)*d+i]) / 2
				}
				qs = append(qs, mid)
			}
		}
		cases = append(cases, searchCase{name, metric, c, k, d, qs})
	}
	normal := func() float64 { return rnd.NormFloat64() }
	grid := func() float64 { return float64(rnd.IntN(5)) } // many exact ties and duplicate centers
	huge := func() float64 { return rnd.NormFloat64() * 1e150 }
	tiny := func() float64 { return rnd.NormFloat64() * 1e-200 }
	mixed := func() float64 { return rnd.NormFloat64() * math.Pow(10, float64(rnd.IntN(40)-20)) }
	for _, metric := range []distance.Objective{distance.Euclidean{}, distance.Manhattan{}, distance.Cosine{}} {
		for _, kd := range [][2]int{{1, 3}, {2, 1}, {3, 2}, {4, 5}, {7, 16}, {32, 16}, {40, 3}, {300, 4}, {9, 70}} {
			add(fmt.Sprintf("%s/normal/k=%d/d=%d", metric.Name(), kd[0], kd[1]), metric, kd[0], kd[1], normal, 200)
		}
		for _, kd := range [][2]int{{6, 2}, {20, 3}, {33, 5}} {
			add(fmt.Sprintf("%s/grid/k=%d/d=%d", metric.Name(), kd[0], kd[1]), metric, kd[0], kd[1], grid, 300)
		}
		add(metric.Name()+"/huge", metric, 12, 4, huge, 100)
		add(metric.Name()+"/tiny", metric, 12, 4, tiny, 100)
		add(metric.Name()+"/mixed", metric, 24, 6, mixed, 300)
	}
	return cases
}

// TestSearchMatchesScan checks that Nearest, Assign and the batch calls
// return exactly (bit for bit) what a brute-force scan returns, with and
// without an affine scaler, on centers built to stress the skip tests.
func TestSearchMatchesScan(t *testing.T) {
	for _, c := range searchCases() {
		t.Run(c.name, func(t *testing.T) {
			m := newModel(c.centers, c.k, c.d, c.metric, nil)
			for qi, q := range c.queries {
				want := scanAssign(c.metric, nil, c.centers, c.k, q)
				if c.metric.Rule() == distance.UnitMeanRule && (distance.Cosine{}).CheckRow(q) != nil {
					continue
				}
				got, err := m.Assign(q)
				require.NoError(t, err, "query %d", qi)
				require.Equal(t, want.Cluster, got.Cluster, "query %d %v", qi, q)
				require.Equal(t, math.Float64bits(want.Distance), math.Float64bits(got.Distance), "query %d", qi)
				require.Equal(t, math.Float64bits(want.Margin), math.Float64bits(got.Margin), "query %d: margin %v vs %v", qi, got.Margin, want.Margin)
				j, dist, err := m.Nearest(q)
				require.NoError(t, err)
				require.Equal(t, want.Cluster, j)
				require.Equal(t, math.Float64bits(want.Distance), math.Float64bits(dist))
			}
		})
	}
}

// TestSearchScaled repeats the comparison through each scaler, on models
// made by Cluster (including the bike-share demo data).
func TestSearchScaled(t *testing.T) {
	_, x := bikeshare.Generate(400, 3)
	n, d := x.Dims()
	for _, sc := range []scale.Scaler{nil, &scale.ZScore{}, &scale.MinMax{}, &scale.MedianIQR{}, &scale.UnitLength{}} {
		for _, metric := range []distance.Objective{distance.Euclidean{}, distance.Manhattan{}, distance.Cosine{}} {
			name := metric.Name() + "/none"
			if sc != nil {
				name = metric.Name() + "/" + sc.Kind()
			}
			t.Run(name, func(t *testing.T) {
				res, err := Cluster(context.Background(), Problem{Data: x, K: 9, Scaler: sc, Metric: metric}, &Settings{Restarts: 2, Seed: 5}, nil)
				require.NoError(t, err)
				m := res.Model
				got := make([]Assignment, n)
				require.NoError(t, m.AssignBatch(got, x))
				labels := make([]int, n)
				dists := make([]float64, n)
				require.NoError(t, m.NearestBatch(labels, dists, x))
				for i := range n {
					want := scanAssign(metric, m.scaler, m.centers, m.k, x.RawRowView(i))
					require.Equal(t, res.Assignments[i], want.Cluster, "row %d: reference disagrees with Cluster", i)
					require.Equal(t, want, got[i], "row %d", i)
					require.Equal(t, want.Cluster, labels[i])
					require.Equal(t, want.Distance, dists[i])
				}
				_ = d
			})
		}
	}
}

// TestServeTrainingRows: on well-separated and on overlapping clusters,
// Nearest and Assign return every training row's Result.Assignments, with
// the distance bits of distance.SqEuclidean (the argmin Lloyd's direct
// recheck defines), with and without a z-score scaler.
func TestServeTrainingRows(t *testing.T) {
	for _, sd := range []float64{1, 20} {
		for _, sc := range []scale.Scaler{nil, &scale.ZScore{}} {
			x := spreadBlobs(3000, 16, 32, sd, 6)
			res, err := Cluster(context.Background(), Problem{Data: x, K: 32, Scaler: sc}, &Settings{Restarts: 1, Seed: 2}, Lloyd{})
			require.NoError(t, err)
			m := res.Model
			for i := range 3000 {
				row := x.RawRowView(i)
				j, dist, err := m.Nearest(row)
				require.NoError(t, err)
				require.Equal(t, res.Assignments[i], j, "sd %v row %d", sd, i)
				z := append([]float64(nil), row...)
				if m.scaler != nil {
					m.scaler.Apply(z, row)
				}
				require.Equal(t, math.Sqrt(distance.SqEuclidean(z, m.centers[j*16:(j+1)*16])), dist, "row %d", i)
				a, err := m.Assign(row)
				require.NoError(t, err)
				require.Equal(t, scanAssign(distance.Euclidean{}, m.scaler, m.centers, 32, row), a, "row %d", i)
			}
		}
	}
}

// TestServeLargeK: a model with many centers (as a document may carry)
// answers exactly as a brute-force scan, under both metrics the serving
// search handles.
func TestServeLargeK(t *testing.T) {
	rnd := rand.New(rand.NewPCG(9, 9))
	const k, d = 20000, 3
	c := make([]float64, k*d)
	for i := range c {
		c[i] = float64(rnd.IntN(200)) // duplicates and ties
	}
	for _, metric := range []distance.Objective{distance.Euclidean{}, distance.Manhattan{}} {
		m := newModel(c, k, d, metric, nil)
		for range 100 {
			q := []float64{rnd.Float64() * 200, float64(rnd.IntN(200)), rnd.NormFloat64() * 100}
			want := scanAssign(metric, nil, c, k, q)
			got, err := m.Assign(q)
			require.NoError(t, err)
			require.Equal(t, want, got, metric.Name())
		}
	}
}

func TestAssignSingleCluster(t *testing.T) {
	m := newModel([]float64{1, 2}, 1, 2, distance.Euclidean{}, nil)
	a, err := m.Assign([]float64{4, 6})
	require.NoError(t, err)
	assert.Equal(t, 0, a.Cluster)
	assert.Equal(t, 5.0, a.Distance) // 3-4-5 triangle
	assert.True(t, math.IsInf(a.Margin, 1))
}

func TestAssignErrors(t *testing.T) {
	m := newModel([]float64{0, 0, 10, 10, 0, 10, 10, 0}, 4, 2, distance.Euclidean{}, nil)
	cases := []struct {
		name string
		x    []float64
		want error
	}{
		{"short", []float64{1}, ErrDimension},
		{"NaN", []float64{1, math.NaN()}, ErrNotFinite},
		{"Inf", []float64{math.Inf(-1), 1}, ErrNotFinite},
		{"overflowing distances", []float64{1e300, -1e300}, ErrNotFinite},
		{"NaN first", []float64{math.NaN(), 1}, ErrNotFinite},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			a, err := m.Assign(c.x)
			require.ErrorIs(t, err, c.want)
			assert.Equal(t, -1, a.Cluster)
			_, _, err = m.Nearest(c.x)
			require.ErrorIs(t, err, c.want)
		})
	}
	// Every built-in metric names a non-finite feature (the check runs only
	// after a failed search, see Model.locate).
	for _, metric := range []distance.Objective{distance.Manhattan{}, distance.Cosine{}} {
		mm := newModel([]float64{0.6, 0.8, 1, 0, 0, 1}, 3, 2, metric, nil)
		for _, x := range [][]float64{{1, math.NaN()}, {math.Inf(1), 0}, {0, math.Inf(-1)}} {
			_, _, err := mm.Nearest(x)
			require.ErrorIs(t, err, ErrNotFinite, metric.Name())
			assert.Contains(t, err.Error(), "feature")
		}
	}
	var zero Model
	_, err := zero.Assign([]float64{1, 2})
	require.ErrorIs(t, err, ErrModel)
	require.ErrorIs(t, zero.AssignBatch(nil, mat.NewDense(1, 2, nil)), ErrModel)
	require.ErrorIs(t, m.AssignBatch(make([]Assignment, 2), mat.NewDense(1, 2, nil)), ErrDimension)
	require.ErrorIs(t, m.AssignBatch(make([]Assignment, 1), mat.NewDense(1, 3, nil)), ErrDimension)
	require.ErrorIs(t, m.AssignBatch(nil, nil), ErrDimension)
	err = m.AssignBatch(make([]Assignment, 2), mat.NewDense(2, 2, []float64{1, 1, math.NaN(), 0}))
	require.ErrorIs(t, err, ErrNotFinite)
	assert.Contains(t, err.Error(), "row 1")

	// A finite row that a scaler maps to ±Inf is refused, naming the scaling.
	sm := newModel([]float64{0, 0, 1, 1, 2, 2, 3, 3}, 4, 2, distance.Euclidean{}, mustZScore(t, mat.NewDense(2, 2, []float64{0, 0, 2e-10, 2e-10})))
	_, err = sm.Assign([]float64{1e300, 0})
	require.ErrorIs(t, err, ErrNotFinite)
	assert.Contains(t, err.Error(), "after scaling")
}

func mustZScore(t *testing.T, x mat.Matrix) scale.Scaler {
	s, err := scale.ZScore{}.Learn(x, nil)
	require.NoError(t, err)
	return s
}

// wrappedEuclidean embeds Euclidean and so keeps its fast paths
// (distance.Builtin is promoted).
type wrappedEuclidean struct{ distance.Euclidean }

// customEuclidean computes the Euclidean distance but promises no built-in
// arithmetic, to exercise the path through the metric's methods.
type customEuclidean struct{ distance.Euclidean }

func (customEuclidean) Arithmetic() distance.Arithmetic { return distance.Custom }

func TestSearchOtherMetric(t *testing.T) {
	for _, c := range searchCases() {
		if c.metric.Name() != "euclidean" {
			continue
		}
		require.Equal(t, euclidean, newModel(c.centers, c.k, c.d, wrappedEuclidean{}, nil).kind, "a wrapped Euclidean keeps the fast path")
		m := newModel(c.centers, c.k, c.d, customEuclidean{}, nil)
		require.Equal(t, otherMetric, m.kind)
		for qi, q := range c.queries {
			want := scanAssign(distance.Euclidean{}, nil, c.centers, c.k, q)
			got, err := m.Assign(q)
			require.NoError(t, err, "%s query %d", c.name, qi)
			require.Equal(t, want, got, "%s query %d", c.name, qi)
		}
	}
}
