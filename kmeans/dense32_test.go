package kmeans

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/data/reference"
	"github.com/centroidlab/centroid/scale"
	"github.com/centroidlab/centroid/seeding"
)

// TestDense32: shape, element access, views, conversion both ways, and
// the panics of a misused constructor.
func TestDense32(t *testing.T) {
	m := NewDense32(2, 3, []float32{1, 2, 3, 4, 5, 6.5})
	r, c := m.Dims()
	assert.Equal(t, [2]int{2, 3}, [2]int{r, c})
	assert.Equal(t, 6.5, m.At(1, 2))
	assert.Equal(t, 2.0, m.T().At(1, 0))
	assert.Equal(t, []float32{4, 5, 6.5}, m.RawRowView32(1))
	g := m.RawMatrix32()
	assert.Equal(t, [3]int{2, 3, 3}, [3]int{g.Rows, g.Cols, g.Stride})
	assert.Equal(t, mat.NewDense(2, 3, []float64{1, 2, 3, 4, 5, 6.5}), mat.DenseCopyOf(m))
	// Dense32Of rounds to the nearest float32, also through At.
	a := mat.NewDense(1, 3, []float64{0.1, 1e39, -2})
	for _, src := range []mat.Matrix{a, a.T().T(), mat.Transpose{Matrix: a.T()}} {
		got := Dense32Of(src)
		assert.Equal(t, []float32{0.1, float32(math.Inf(1)), -2}, got.RawRowView32(0))
	}
	assert.Equal(t, 2, len(NewDense32(1, 2, nil).RawRowView32(0)))
	for name, f := range map[string]func(){
		"rows":   func() { NewDense32(0, 2, nil) },
		"length": func() { NewDense32(2, 2, make([]float32, 3)) },
		"at row": func() { m.At(2, 0) },
		"at col": func() { m.At(0, -1) },
		"view":   func() { m.RawRowView32(5) },
	} {
		assert.Panics(t, f, name)
	}
}

// float32Case is a problem whose float32 version must cluster exactly as
// the float64 conversion.
type float32Case struct {
	name    string
	x       *Dense32
	p       Problem // everything but Data
	s       Settings
	workers []int
	methods []Method
}

// sameAsFloat64 clusters c.x and mat.DenseCopyOf(c.x) with every method
// and worker count and requires equal results bit for bit (assignments,
// cost, iterations, status, centers, restart costs).
func sameAsFloat64(t *testing.T, c float32Case) {
	t.Helper()
	x64 := mat.DenseCopyOf(c.x)
	if raceOn {
		c.workers = []int{7} // the race detector slows these tests ten times
	}
	for _, m := range c.methods {
		p64, p32 := c.p, c.p
		p64.Data, p32.Data = x64, c.x
		s := c.s
		s.Workers = 1
		ref, err := Cluster(context.Background(), p64, &s, m)
		require.NoError(t, err)
		for _, w := range c.workers {
			s.Workers = w
			got, err := Cluster(context.Background(), p32, &s, m)
			require.NoError(t, err)
			requireSame(t, ref, got, fmt.Sprintf("%s %#v workers=%d", c.name, m, w))
			require.Equal(t, ref.Stats.Method, got.Stats.Method)
			require.Equal(t, ref.Stats.Refined, got.Stats.Refined)
			require.Equal(t, ref.Model.Training(), got.Model.Training())
		}
	}
}

var float32Methods = []Method{nil, directLloyd{}, Lloyd{}, Elkan{}, Hamerly{}, Yinyang{}}

// TestFloat32EqualsFloat64Datasets: every shared reference dataset (see
// the shared PROVENANCE.md for sources; k is the published number of
// classes), rounded to float32, clusters exactly as its float64
// conversion, for every method and 1, 2 and 7 workers.
func TestFloat32EqualsFloat64Datasets(t *testing.T) {
	cases := []struct {
		name    string
		k       int
		maxIter int
	}{
		{"iris", 3, 0}, {"wine", 3, 0}, {"seeds", 3, 0}, {"s1", 15, 0}, {"a1", 20, 0}, {"unbalance", 8, 0}, {"letter", 26, 6},
	}
	for _, c := range cases {
		if raceOn && c.name == "letter" {
			continue // 20000 rows: minutes under the race detector
		}
		t.Run(c.name, func(t *testing.T) {
			s := reference.LoadOrSkip(t, c.name)
			sameAsFloat64(t, float32Case{name: c.name, x: Dense32Of(s.X), p: Problem{K: c.k},
				s: Settings{Restarts: 2, MaxIterations: c.maxIter, Seed: 5}, workers: []int{1, 2, 7}, methods: float32Methods})
		})
	}
}

// blobs32 returns Dense32Of(blobs(n, d, k, seed)) with every value
// shifted by off (float32 keeps few digits of the spread far from the
// origin, which makes the float32 kernel's bound wide).
func blobs32(n, d, k int, seed uint64, off float64) *Dense32 {
	x := blobs(n, d, k, seed)
	x.Apply(func(_, _ int, v float64) float64 { return v + off }, x)
	return Dense32Of(x)
}

// TestFloat32EqualsFloat64Generated: generated blobs in 2 to 70
// dimensions (around the kernel's panel sizes), far from the origin,
// integer lattices with exact ties, weights with zeros, Manhattan and
// Cosine, the cost-tolerance path and the random-swap refinement: float32
// data clusters exactly as its float64 conversion.
func TestFloat32EqualsFloat64Generated(t *testing.T) {
	rnd := rand.New(rand.NewPCG(9, 9))
	w := make([]float64, 1500)
	for i := range w {
		w[i] = float64(rnd.IntN(3))
	}
	all := []int{1, 2, 7}
	cases := []float32Case{
		{name: "d2", x: blobs32(3000, 2, 9, 1, 0), p: Problem{K: 12}, s: Settings{Restarts: 2, Seed: 1}},
		{name: "d17", x: blobs32(2500, 17, 40, 2, 0), p: Problem{K: 40}, s: Settings{Restarts: 1, Seed: 2, MaxIterations: 25}},
		{name: "d33", x: blobs32(2000, 33, 20, 3, 0), p: Problem{K: 70}, s: Settings{Restarts: 1, Seed: 3, MaxIterations: 20}},
		{name: "d70", x: blobs32(800, 70, 8, 4, 0), p: Problem{K: 10}, s: Settings{Restarts: 2, Seed: 4}},
		{name: "far", x: blobs32(2000, 3, 6, 5, 1e5), p: Problem{K: 6}, s: Settings{Restarts: 2, Seed: 5}},
		{name: "lattice", x: Dense32Of(lattice(1500, 2, 6, 6)), p: Problem{K: 9, Weights: w}, s: Settings{Restarts: 2, Seed: 6}},
		{name: "tolerance", x: blobs32(1500, 5, 7, 7, 0), p: Problem{K: 7}, s: Settings{Restarts: 2, Seed: 7, Tolerance: 1e-3}},
		{name: "refined", x: blobs32(1500, 2, 16, 8, 0), p: Problem{K: 16}, s: Settings{Restarts: 1, Seed: 8, SwapTrials: 300}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			c.workers, c.methods = all, float32Methods
			if c.name == "refined" {
				c.methods = []Method{Lloyd{}, Hamerly{}}
			}
			sameAsFloat64(t, c)
		})
	}
	for _, metric := range []distance.Metric{distance.Manhattan{}, distance.Cosine{}} {
		t.Run(metric.Name(), func(t *testing.T) {
			methods := []Method{nil, Lloyd{}}
			if metric.Name() == "manhattan" {
				methods = append(methods, Elkan{}, Hamerly{}, Yinyang{})
			}
			sameAsFloat64(t, float32Case{name: metric.Name(), x: blobs32(1500, 6, 5, 10, 1), p: Problem{K: 5, Metric: metric},
				s: Settings{Restarts: 2, Seed: 10}, workers: all, methods: methods})
		})
	}
}

// wrappedSeeder hides the Float32Seeder of its seeder, so the driver must
// hand it float64 rows.
type wrappedSeeder struct{ seeding.Seeder }

// TestFloat32SeedersAndScalers: every seeder of package seeding, one
// without a float32 path (it gets a float64 copy) and each scaler (the
// scaled space is float64) give the float64 result.
func TestFloat32SeedersAndScalers(t *testing.T) {
	x := blobs32(1200, 4, 6, 11, 3)
	given := mat.DenseCopyOf(x).Slice(0, 6, 0, 4)
	cases := []Problem{
		{K: 6, Seeder: seeding.Random{}},
		{K: 6, Seeder: seeding.Uniform{}},
		{K: 6, Seeder: seeding.PlusPlus{Candidates: 1}},
		{K: 6, Seeder: seeding.Given{Centers: given}},
		{K: 6, Seeder: wrappedSeeder{seeding.PlusPlus{}}},
		{K: 6, Scaler: &scale.ZScore{}},
		{K: 6, Scaler: &scale.MinMax{}},
		{K: 6, Scaler: &scale.MedianIQR{}, Metric: distance.Manhattan{}},
	}
	for i, p := range cases {
		sameAsFloat64(t, float32Case{name: fmt.Sprintf("case %d", i), x: x, p: p, s: Settings{Restarts: 2, Seed: 12},
			workers: []int{1, 2}, methods: []Method{nil, Lloyd{}}})
	}
}

// TestFloat32Space: without a scaler the space holds the caller's float32
// rows (no float64 copy); with one it is float64. RowTo, Row, Loss and
// Add agree with the float64 space.
func TestFloat32Space(t *testing.T) {
	x := blobs32(300, 5, 3, 13, 0)
	// NewSpace, whose callers read X, widens; Cluster's space does not.
	wsp, err := NewSpace(Problem{Data: x, K: 3})
	require.NoError(t, err)
	require.Nil(t, wsp.X32)
	require.Equal(t, mat.DenseCopyOf(x).RawMatrix().Data, wsp.X)
	sp, err := newProblemSpace(Problem{Data: x, K: 3})
	require.NoError(t, err)
	require.Nil(t, sp.X)
	require.Same(t, &x.RawMatrix32().Data[0], &sp.X32[0])
	sp64, err := NewSpace(Problem{Data: mat.DenseCopyOf(x), K: 3})
	require.NoError(t, err)
	c := []float64{1, 2, 3, 4, 5.5}
	buf := make([]float64, 5)
	p32, p64 := NewPartial(2, 5), NewPartial(2, 5)
	for i := range 300 {
		require.Equal(t, sp64.Row(i), sp.RowTo(buf, i))
		require.Equal(t, sp64.Row(i), sp.Row(i))
		require.Equal(t, sp64.Loss(i, c), sp.Loss(i, c))
		sp.Add(p32, i, i%2, 1.5)
		sp64.Add(p64, i, i%2, 1.5)
	}
	require.Equal(t, [4]any{p64.Sum, p64.Weight, p64.Count, p64.Cost}, [4]any{p32.Sum, p32.Weight, p32.Count, p32.Cost})
	scaled, err := NewSpace(Problem{Data: x, Scaler: &scale.ZScore{}})
	require.NoError(t, err)
	require.Nil(t, scaled.X32)
	require.Len(t, scaled.X, 300*5)
	// A strided float32 matrix is compacted (to float32), not widened.
	sp, err = newProblemSpace(Problem{Data: strided32{x}})
	require.NoError(t, err)
	require.Equal(t, x.RawMatrix32().Data, sp.X32)
}

// strided32 presents a Dense32 with a stride of one more than its columns.
type strided32 struct{ *Dense32 }

func (s strided32) RawMatrix32() (g blas32.General) {
	r, c := s.Dims()
	g.Rows, g.Cols, g.Stride = r, c, c+1
	g.Data = make([]float32, r*(c+1))
	for i := range r {
		copy(g.Data[i*(c+1):], s.RawRowView32(i))
	}
	return g
}

// TestFloat32BadInput: NaN and ±Inf in float32 data, inconsistent float32
// storage and K above the distinct rows are errors wrapping the sentinels.
func TestFloat32BadInput(t *testing.T) {
	for _, v := range []float32{float32(math.NaN()), float32(math.Inf(1)), float32(math.Inf(-1))} {
		x := NewDense32(3, 2, []float32{1, 2, 3, v, 5, 6})
		_, err := Cluster(context.Background(), Problem{Data: x, K: 2}, nil, nil)
		require.ErrorIs(t, err, ErrData)
		require.Contains(t, err.Error(), "row 1 column 1")
	}
	_, err := Cluster(context.Background(), Problem{Data: badStorage{NewDense32(2, 2, nil)}, K: 1}, nil, nil)
	require.ErrorIs(t, err, ErrData)
	_, err = Cluster(context.Background(), Problem{Data: (*Dense32)(nil), K: 1}, nil, nil)
	require.ErrorIs(t, err, ErrData)
	_, err = Cluster(context.Background(), Problem{Data: NewDense32(4, 1, []float32{1, 1, 1, 2}), K: 3}, nil, nil)
	require.ErrorIs(t, err, ErrK)
	_, err = Cluster(context.Background(), Problem{Data: NewDense32(2, 2, []float32{0, 0, 1, 1}), K: 2, Metric: distance.Cosine{}}, nil, nil)
	require.True(t, errors.Is(err, ErrMetric), "%v", err)
}

// badStorage reports float32 storage smaller than its dimensions.
type badStorage struct{ *Dense32 }

func (b badStorage) RawMatrix32() blas32.General {
	g := b.Dense32.RawMatrix32()
	g.Data = g.Data[:1]
	return g
}

// TestFloat32NoCopy: clustering float32 data without a scaler allocates
// far less than a float64 copy of the data (n·d·8 bytes): the rows are
// read in place by the seeder and every solver.
func TestFloat32NoCopy(t *testing.T) {
	const n, d = 40000, 32
	x := blobs32(n, d, 8, 14, 0)
	for _, m := range []Method{Lloyd{}, Hamerly{}} {
		run := func() {
			_, err := Cluster(context.Background(), Problem{Data: x, K: 8}, &Settings{Restarts: 1, MaxIterations: 5, Workers: 2, Seed: 1}, m)
			require.NoError(t, err)
		}
		run()
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		run()
		runtime.ReadMemStats(&after)
		alloc := after.TotalAlloc - before.TotalAlloc
		// Per row: assignments (8 bytes, twice), seeding's nearest losses
		// (8), training distances and quantile pairs (24), Hamerly's
		// bounds (8): well under the 256 bytes of a float64 row.
		require.Less(t, alloc, uint64(n*d*8/3), "%T allocated %d bytes", m, alloc)
	}
}
