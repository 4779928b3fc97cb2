package kmeans

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"
	"sync/atomic"
	"testing"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/bikeshare"
	"github.com/centroidlab/centroid/scale"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
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
	for _, sc := range []scale.Scaler{nil, &scale.ZScore{}, &scale.MinMax{}, &scale.Robust{}, &scale.UnitLength{}} {
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

// TestKernelsBitIdentical checks that the abandoning kernels, when not
// abandoning, compute the metric's own loss bit for bit.
func TestKernelsBitIdentical(t *testing.T) {
	rnd := rand.New(rand.NewPCG(2, 2))
	for d := 1; d <= 41; d++ {
		for range 50 {
			z, c := make([]float64, d), make([]float64, d)
			for i := range z {
				z[i] = rnd.NormFloat64() * math.Pow(10, float64(rnd.IntN(8)-4))
				c[i] = rnd.NormFloat64()
			}
			require.Equal(t, math.Float64bits(distance.SqEuclidean(z, c)), math.Float64bits(sqEuclideanBelow(z, c, math.Inf(1))), "d=%d", d)
			require.Equal(t, math.Float64bits(distance.Manhattan{}.Distance(z, c)), math.Float64bits(manhattanBelow(z, c, math.Inf(1))), "d=%d", d)
			full := distance.SqEuclidean(z, c)
			assert.True(t, math.IsInf(sqEuclideanBelow(z, c, full/4), 1) || sqEuclideanBelow(z, c, full/4) == full)
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

// TestServeAllocs checks that the vector and named-field paths allocate
// nothing.
func TestServeAllocs(t *testing.T) {
	for _, d := range []int{6, 40} {
		x := blobs(300, d, 5, 4)
		names := make([]string, d)
		for i := range names {
			names[i] = fmt.Sprintf("f%02d", i)
		}
		for _, sc := range []scale.Scaler{nil, &scale.ZScore{}} {
			res, err := Cluster(context.Background(), Problem{Data: x, K: 5, Scaler: sc}, &Settings{Restarts: 1}, nil)
			require.NoError(t, err)
			m, err := res.Model.WithFeatures(names)
			require.NoError(t, err)
			row := x.RawRowView(7)
			rec := make(Record, d)
			fields := make(map[string]float64, d)
			for i, name := range names {
				rec[i] = Field{name, row[i]}
				fields[name] = row[i]
			}
			batch := mat.NewDense(20, d, x.RawMatrix().Data[:20*d])
			dst := make([]Assignment, 20)
			labels := make([]int, 20)
			dr, err := NewDrift(m)
			require.NoError(t, err)
			var sink Assignment
			calls := map[string]func(){
				"Nearest":      func() { sink.Cluster, sink.Distance, _ = m.Nearest(row) },
				"Assign":       func() { sink, _ = m.Assign(row) },
				"AssignRecord": func() { sink, _ = m.AssignRecord(rec) },
				"AssignMap":    func() { sink, _ = m.AssignMap(fields) },
				"AssignBatch":  func() { _ = m.AssignBatch(dst, batch) },
				"NearestBatch": func() { _ = m.NearestBatch(labels, nil, batch) },
				"Observe":      func() { dr.Observe(sink) },
				"ObserveBatch": func() { dr.ObserveBatch(dst) },
			}
			for name, call := range calls {
				assert.Zero(t, testing.AllocsPerRun(50, call), "%s d=%d scaler=%v", name, d, sc)
			}
			want, err := m.Assign(row)
			require.NoError(t, err)
			for _, got := range []func() (Assignment, error){
				func() (Assignment, error) { return m.AssignRecord(rec) },
				func() (Assignment, error) { return m.AssignMap(fields) },
			} {
				a, err := got()
				require.NoError(t, err)
				require.Equal(t, want, a)
			}
		}
	}
}

// TestHolderSwapUnderLoad has readers label probe rows while a writer
// swaps between two models whose answers differ on every probe; each
// reader's answers must all come from the model it loaded.
func TestHolderSwapUnderLoad(t *testing.T) {
	_, x := bikeshare.Generate(300, 8)
	resA, err := Cluster(context.Background(), Problem{Data: x, K: 4, Scaler: &scale.ZScore{}}, &Settings{Restarts: 2, Seed: 1}, nil)
	require.NoError(t, err)
	resB, err := Cluster(context.Background(), Problem{Data: x, K: 7, Scaler: &scale.MinMax{}}, &Settings{Restarts: 2, Seed: 2}, nil)
	require.NoError(t, err)
	a, b := resA.Model, resB.Model
	probes := bikeshare.NewStations(64, 4)
	answers := map[*Model][]Assignment{}
	for _, m := range []*Model{a, b} {
		for _, p := range probes {
			as, err := m.Assign(p.Features)
			require.NoError(t, err)
			answers[m] = append(answers[m], as)
		}
	}
	// The two models must be told apart by every probe.
	for i := range probes {
		require.NotEqual(t, answers[a][i].Distance, answers[b][i].Distance, "probe %d", i)
	}

	var h Holder
	assert.Nil(t, h.Load())
	assert.Nil(t, h.Model())
	_, err = h.Swap(a)
	require.NoError(t, err)

	readers, swaps := 8, 2000
	if testing.Short() {
		swaps = 300
	}
	var stop atomic.Bool
	var wrong, reads atomic.Int64
	var wg sync.WaitGroup
	for r := range readers {
		wg.Go(func() {
			for i := r; !stop.Load(); i++ {
				s := h.Load()
				want := answers[s.Model]
				for p := range probes {
					got, err := s.Model.Assign(probes[(i+p)%len(probes)].Features)
					if err != nil || got != want[(i+p)%len(probes)] {
						wrong.Add(1)
					}
				}
				reads.Add(1)
			}
		})
	}
	for i := range swaps {
		next := a
		if i%2 == 0 {
			next = b
		}
		_, err := h.Swap(next)
		require.NoError(t, err)
	}
	// On a busy machine the swaps can finish before every reader has been
	// scheduled; let each reader complete some reads before stopping.
	for reads.Load() < int64(4*readers) {
		runtime.Gosched()
	}
	stop.Store(true)
	wg.Wait()
	assert.Zero(t, wrong.Load())
	assert.GreaterOrEqual(t, reads.Load(), int64(4*readers))
}

func TestHolderRefuses(t *testing.T) {
	_, x := bikeshare.Generate(200, 8)
	res, err := Cluster(context.Background(), Problem{Data: x, K: 3}, &Settings{Restarts: 1}, nil)
	require.NoError(t, err)
	named, err := res.Model.WithFeatures(bikeshare.Features())
	require.NoError(t, err)
	other := bikeshare.Features()
	other[0] = "trips_per_week"
	renamed, err := res.Model.WithFeatures(other)
	require.NoError(t, err)

	h := Holder{Accept: SameSchema}
	_, err = h.Swap(nil)
	require.ErrorIs(t, err, ErrModel)
	_, err = h.Swap(&Model{})
	require.ErrorIs(t, err, ErrModel)
	prev, err := h.Swap(named)
	require.NoError(t, err)
	assert.Nil(t, prev)
	for name, bad := range map[string]*Model{"renamed": renamed, "unnamed": res.Model} {
		_, err = h.Swap(bad)
		require.ErrorIs(t, err, ErrSchema, name)
		assert.Same(t, named, h.Model(), "a refused swap keeps the old model")
	}
	s := h.Load()
	sum, err := named.Checksum()
	require.NoError(t, err)
	assert.Equal(t, sum, s.Checksum)
	assert.NotNil(t, s.Drift)
	prev, err = h.Swap(named.WithCreated(s.Since))
	require.NoError(t, err)
	assert.Same(t, s, prev)
}

// wrappedEuclidean is a metric the model does not recognise, to exercise
// the path through the metric's methods.
type wrappedEuclidean struct{ distance.Euclidean }

func TestSearchOtherMetric(t *testing.T) {
	for _, c := range searchCases() {
		if c.metric.Name() != "euclidean" {
			continue
		}
		m := newModel(c.centers, c.k, c.d, wrappedEuclidean{}, nil)
		require.Equal(t, otherMetric, m.kind)
		for qi, q := range c.queries {
			want := scanAssign(distance.Euclidean{}, nil, c.centers, c.k, q)
			got, err := m.Assign(q)
			require.NoError(t, err, "%s query %d", c.name, qi)
			require.Equal(t, want, got, "%s query %d", c.name, qi)
		}
	}
}
