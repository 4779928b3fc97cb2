package kmeans

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/asm/f64"
	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/internal/data/reference"
	"github.com/centroidlab/centroid/scale"
	"github.com/centroidlab/centroid/seeding"
)

// directLloyd is Lloyd's pass computing Metric.Loss for every row and
// center (no kernel): the brute-force reference of these tests.
type directLloyd struct{}

func (directLloyd) Start(sp *Space, k int) (Pass, error) { return lloydPass{sp: sp, k: k}, nil }

// exactMethods are the methods that must reproduce directLloyd bit for bit.
var exactMethods = []Method{Lloyd{}, Elkan{}, Hamerly{}, Yinyang{}, Yinyang{Groups: 3}}

// requireSame checks that got equals the reference result bit for bit:
// assignments, cost bits, iterations, status, centers and the per-restart
// costs and iterations.
func requireSame(t *testing.T, ref, got *Result, msg string) {
	t.Helper()
	require.Equal(t, ref.Assignments, got.Assignments, msg)
	require.Equal(t, math.Float64bits(ref.Cost), math.Float64bits(got.Cost), "%s: cost %v vs %v", msg, ref.Cost, got.Cost)
	require.Equal(t, ref.Iterations, got.Iterations, msg)
	require.Equal(t, ref.Status, got.Status, msg)
	require.Equal(t, ref.Model.ScaledCenters().RawMatrix().Data, got.Model.ScaledCenters().RawMatrix().Data, msg)
	require.Equal(t, ref.Stats.RestartCosts, got.Stats.RestartCosts, msg)
	require.Equal(t, ref.Stats.RestartIterations, got.Stats.RestartIterations, msg)
	require.Equal(t, ref.Stats.EmptyRepairs, got.Stats.EmptyRepairs, msg)
}

// sameAsLloyd runs directLloyd and every exact method on p with workers
// 1, 2 and 7 and requires identical results.
func sameAsLloyd(t *testing.T, p Problem, s Settings) {
	t.Helper()
	if s.SwapTrials == 0 {
		s.SwapTrials = -1 // the methods are compared; the refinement is tested apart
	}
	s.Workers = 1
	ref, err := Cluster(context.Background(), p, &s, directLloyd{})
	require.NoError(t, err)
	for _, m := range exactMethods {
		for _, w := range []int{1, 2, 7} {
			s.Workers = w
			got, err := Cluster(context.Background(), p, &s, m)
			require.NoError(t, err)
			requireSame(t, ref, got, fmt.Sprintf("%#v workers=%d", m, w))
		}
	}
}

// TestSolversEqualLloydDatasets: on every shared reference dataset (see the
// shared PROVENANCE.md for sources; k is the published number of classes),
// every exact method gives Lloyd's result bit for bit.
func TestSolversEqualLloydDatasets(t *testing.T) {
	cases := []struct {
		name     string
		k        int
		restarts int
		maxIter  int
	}{
		{"iris", 3, 4, 0}, {"wine", 3, 4, 0}, {"seeds", 3, 4, 0},
		{"s1", 15, 3, 0}, {"s2", 15, 3, 0}, {"s3", 15, 3, 0}, {"s4", 15, 3, 0},
		{"a1", 20, 2, 0}, {"a2", 35, 2, 0}, {"a3", 50, 2, 0}, {"unbalance", 8, 3, 0},
		{"letter", 26, 1, 8},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s := reference.LoadOrSkip(t, c.name)
			sameAsLloyd(t, Problem{Data: s.X, K: c.k}, Settings{Restarts: c.restarts, MaxIterations: c.maxIter, Seed: 3})
		})
	}
	// Manhattan (k-medians) on one set with every method.
	t.Run("a1-manhattan", func(t *testing.T) {
		s := reference.LoadOrSkip(t, "a1")
		sameAsLloyd(t, Problem{Data: s.X, K: 20, Metric: distance.Manhattan{}}, Settings{Restarts: 2, Seed: 4})
	})
}

// lattice returns n rows drawn from the integer grid {0..side-1}^d, so that
// rows repeat many times and many rows are equidistant from two centers
// (invented data for tie-breaking).
func lattice(n, d, side int, seed uint64) *mat.Dense {
	rnd := rand.New(rand.NewPCG(seed, 11))
	x := mat.NewDense(n, d, nil)
	for i := range n {
		for j := range d {
			x.Set(i, j, float64(rnd.IntN(side)))
		}
	}
	return x
}

// TestSolversEqualLloydTies: data with many duplicate rows and exact ties,
// random and k-means++ seeding, weights with zeros, Euclidean and
// Manhattan, several seeds and worker counts.
func TestSolversEqualLloydTies(t *testing.T) {
	rnd := rand.New(rand.NewPCG(5, 5))
	w := make([]float64, 3000)
	for i := range w {
		w[i] = float64(rnd.IntN(3))
	}
	for _, metric := range []distance.Metric{distance.Euclidean{}, distance.Manhattan{}} {
		for _, seed := range []uint64{1, 2, 3} {
			for _, weights := range [][]float64{nil, w} {
				name := fmt.Sprintf("%s/seed=%d/weighted=%v", metric.Name(), seed, weights != nil)
				t.Run(name, func(t *testing.T) {
					x := lattice(3000, 2, 6, seed)
					sameAsLloyd(t, Problem{Data: x, K: 9, Metric: metric, Weights: weights, Seeder: seeding.Random{}}, Settings{Restarts: 2, Seed: seed})
					y := lattice(3000, 1, 9, seed)
					sameAsLloyd(t, Problem{Data: y, K: 4, Metric: metric, Weights: weights}, Settings{Restarts: 2, Seed: seed})
				})
			}
		}
	}
}

// TestSolversEqualLloydAdversarial: rows far from the origin (offset 1e8,
// spread 1e-3), high dimension, many clusters, the cost tolerance and
// progress path (exact per-pass cost), and data beyond the bound solvers'
// safe magnitude (they then run Lloyd's pass).
func TestSolversEqualLloydAdversarial(t *testing.T) {
	far := blobs(2000, 3, 6, 21)
	far.Apply(func(_, _ int, v float64) float64 { return 1e8 + v*1e-5 }, far)
	huge := blobs(500, 2, 4, 22)
	huge.Scale(0x1p420, huge)
	var passes int
	cases := []struct {
		name string
		p    Problem
		s    Settings
	}{
		{"offset", Problem{Data: far, K: 6}, Settings{Restarts: 2}},
		{"d=100", Problem{Data: blobs(1500, 100, 12, 23), K: 12}, Settings{Restarts: 2}},
		{"k=120", Problem{Data: blobs(4000, 4, 40, 24), K: 120}, Settings{Restarts: 1, MaxIterations: 40}},
		{"tolerance", Problem{Data: blobs(3000, 5, 20, 25), K: 20}, Settings{Restarts: 2, Tolerance: 1e-4}},
		{"progress", Problem{Data: blobs(3000, 5, 20, 26), K: 20}, Settings{Restarts: 1, Progress: func(Progress) { passes++ }}},
		{"huge", Problem{Data: huge, K: 4}, Settings{Restarts: 2}},
		{"k=1", Problem{Data: blobs(500, 3, 2, 27), K: 1}, Settings{Restarts: 1}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) { sameAsLloyd(t, c.p, c.s) })
	}
	assert.Positive(t, passes)
}

// TestSolversNeedTriangle: Cosine has no triangle inequality, so every
// bound solver refuses it with ErrMetric instead of a wrong answer.
func TestSolversNeedTriangle(t *testing.T) {
	x := blobs(300, 3, 3, 30)
	for _, m := range []Method{Elkan{}, Hamerly{}, Yinyang{}} {
		t.Run(methodName(m), func(t *testing.T) {
			res, err := Cluster(context.Background(), Problem{Data: x, K: 3, Metric: distance.Cosine{}}, nil, m)
			require.ErrorIs(t, err, ErrMetric)
			require.Nil(t, res)
		})
	}
}

// TestSolversSaveDistances: on A3 (Kärkkäinen & Fränti 2002, 50 clusters of
// 150 points; shared a3.csv) the bound solvers must evaluate far fewer
// row–center distances than Lloyd for the same result.
func TestSolversSaveDistances(t *testing.T) {
	s := reference.LoadOrSkip(t, "a3")
	p := Problem{Data: s.X, K: 50}
	set := &Settings{Restarts: 1, Seed: 1, SwapTrials: -1}
	ref, err := Cluster(context.Background(), p, set, Lloyd{})
	require.NoError(t, err)
	for _, m := range []Method{Elkan{}, Hamerly{}, Yinyang{}} {
		got, err := Cluster(context.Background(), p, set, m)
		require.NoError(t, err)
		requireSame(t, ref, got, methodName(m))
		ratio := float64(ref.Stats.Distances) / float64(got.Stats.Distances)
		t.Logf("%s: %d distances, %.1f× fewer than Lloyd", methodName(m), got.Stats.Distances, ratio)
		assert.Greater(t, ratio, 5.0, methodName(m))
		assert.Equal(t, methodName(m), got.Stats.Method)
	}
}

// TestBoundRounding checks the outward rounding helpers against exact
// arithmetic: lo32/hi32 bracket their argument, up/down move away from it.
func TestBoundRounding(t *testing.T) {
	r := newRounding(16)
	rnd := rand.New(rand.NewPCG(8, 8))
	for range 10000 {
		v := math.Exp(rnd.NormFloat64() * 30)
		require.LessOrEqual(t, float64(lo32(v)), v)
		require.GreaterOrEqual(t, float64(hi32(v)), v)
		require.Greater(t, r.up(v), v)
		require.Less(t, r.down(v), v)
		require.False(t, r.beats(v, v))
	}
	assert.Zero(t, lo32(-1))
	assert.Zero(t, r.down(math.NaN()))
	assert.False(t, r.beats(math.NaN(), 1))
	assert.False(t, r.beats(2, math.NaN()))
	assert.Equal(t, float32(math.MaxFloat32), lo32(1e300))
	assert.True(t, math.IsInf(float64(hi32(1e300)), 1))
}

// TestGroupCenters: the groups partition the centers, every group is
// non-empty, and each center sits in the group whose mean is nearest after
// the grouping iterations (checked by brute force).
func TestGroupCenters(t *testing.T) {
	c := blobs(60, 3, 6, 31)
	g := groupCenters(c.RawMatrix().Data, 60, 3, 6)
	seen := make([]bool, 60)
	for q := range g.t {
		require.NotEmpty(t, g.members(q))
		for _, j := range g.members(q) {
			require.False(t, seen[j])
			seen[j] = true
			require.Equal(t, q, g.group[j])
		}
	}
	for _, s := range seen {
		require.True(t, s)
	}
}

// TestChoose: the automatic choice follows the rule documented on choose,
// and a nil Method with Cosine runs Lloyd instead of failing.
func TestChoose(t *testing.T) {
	vector := f64.Kernel() != "go"
	pick := func(withKernel, without string) string {
		if vector {
			return withKernel
		}
		return without
	}
	cases := []struct {
		n, d, k int
		metric  distance.Objective
		want    string
	}{
		{1000, 2, 20, distance.Euclidean{}, pick("Lloyd", "Hamerly")},
		{1000, 2, 20, distance.Cosine{}, "Lloyd"},
		{1000, 16, 8, distance.Euclidean{}, "Lloyd"},
		{1000, 16, 26, distance.Manhattan{}, "Hamerly"},
		{1000, 16, 64, distance.Euclidean{}, pick("Lloyd", "Hamerly")},
		{1000, 16, 256, distance.Euclidean{}, pick("Lloyd", "Yinyang")},
		{1000, 32, 64, distance.Euclidean{}, pick("Lloyd", "Yinyang")},
		{1000, 256, 64, distance.Euclidean{}, "Elkan"},
		{1000, 256, 8, distance.Euclidean{}, pick("Lloyd", "Hamerly")},
		{1000, 256, 256, distance.Euclidean{}, "Yinyang"},
		{1000, 256, 64, distance.Manhattan{}, "Elkan"},
		{1000, 3, 1, distance.Euclidean{}, "Lloyd"},
	}
	for _, c := range cases {
		sp := newSpace(make([]float64, c.n*c.d), c.n, c.d, nil, c.metric, 1)
		assert.Equal(t, c.want, methodName(choose(sp, c.k)), "%+v", c)
	}
	res, err := Cluster(context.Background(), Problem{Data: blobs(300, 3, 3, 32), K: 3, Metric: distance.Cosine{}}, nil, nil)
	require.NoError(t, err)
	assert.Equal(t, "Lloyd", res.Stats.Method)
}

// ExampleElkan clusters invented bike-share docking stations (see
// internal/bikeshare) with Lloyd and with Elkan: the same assignments and
// cost bit for bit, with fewer distance evaluations.
func ExampleElkan() {
	_, x := bikeshare.Generate(2000, 1)
	p := Problem{Data: x, K: 12, Scaler: &scale.ZScore{}}
	s := &Settings{Restarts: 2, Seed: 7}
	lloyd, err := Cluster(context.Background(), p, s, Lloyd{})
	if err != nil {
		fmt.Println(err)
		return
	}
	elkan, err := Cluster(context.Background(), p, s, Elkan{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("same assignments:", slices.Equal(lloyd.Assignments, elkan.Assignments))
	fmt.Println("same cost bits:", math.Float64bits(lloyd.Cost) == math.Float64bits(elkan.Cost))
	fmt.Println("fewer distances:", elkan.Stats.Distances < lloyd.Stats.Distances/2)
	// Output:
	// same assignments: true
	// same cost bits: true
	// fewer distances: true
}
