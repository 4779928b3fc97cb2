package kbeam

import (
	"context"
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/seeding"
)

// compareInMemory clusters x on prism from the k-means++ centers c0 and
// with kmeans.Cluster (kmeans.Lloyd, the same centers, one restart) and
// checks that centers, cost, sizes, passes and status agree.
func compareInMemory(t *testing.T, src Source, x *mat.Dense, w []float64, k, passes int, m distance.Objective, it Iteration) *Result {
	t.Helper()
	_, d := x.Dims()
	c0 := plusPlus(t, x, k, m)
	ref, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: k, Weights: w, Metric: m, Seeder: seeding.Given{Centers: c0}}, lloydSettings(passes), kmeans.Lloyd{})
	require.NoError(t, err)
	require.Zero(t, ref.Stats.EmptyRepairs, "the comparison needs runs without empty clusters, which kmeans.Cluster repairs")
	res, err := Cluster(context.Background(), Problem{Rows: src, D: d, K: k, Metric: m, Centers: mat.DenseCopyOf(c0).RawMatrix().Data}, &Settings{MaxPasses: passes, Iteration: it})
	require.NoError(t, err)
	assert.Empty(t, res.Empty)
	assert.Equal(t, ref.Iterations, res.Passes, "passes")
	assert.Equal(t, ref.Status, res.Status)
	assert.Less(t, relDiff(res.Model.Centers().RawMatrix().Data, ref.Model.Centers().RawMatrix().Data), 1e-9, "centers")
	assert.InEpsilon(t, ref.Cost, res.Cost, 1e-9, "cost")
	for j, s := range ref.Sizes {
		assert.EqualValues(t, s, res.Sizes[j], "size of cluster %d", j)
	}
	return res
}

// TestClusterMatchesInMemoryOnReference reads each reference dataset with
// OpenCSV and compares with kmeans.Cluster. Data: iris (Fisher 1936), S1
// (Fränti & Virmajoki 2006), A1 (Kärkkäinen & Fränti 2002), letter (Frey
// & Slate 1991), as listed in the datasets' PROVENANCE.md.
func TestClusterMatchesInMemoryOnReference(t *testing.T) {
	for _, tc := range []struct {
		name    string
		columns []string
		k       int
		metric  distance.Objective
		it      Iteration
	}{
		{"iris", []string{"sepal_length", "sepal_width", "petal_length", "petal_width"}, 3, nil, Driven},
		{"iris", []string{"sepal_length", "sepal_width", "petal_length", "petal_width"}, 3, distance.Cosine{}, Unrolled},
		{"s1", []string{"x", "y"}, 15, nil, Driven},
		{"a1", []string{"x", "y"}, 20, nil, Unrolled},
		{"letter", []string{"x_box", "y_box", "width", "high", "onpix", "x_bar", "y_bar", "x2bar", "y2bar", "xybar", "x2ybr", "xy2br", "x_ege", "xegvy", "y_ege", "yegvx"}, 26, nil, Unrolled},
	} {
		t.Run(tc.name+"/"+tc.it.String(), func(t *testing.T) {
			path := datasetOrSkip(t, tc.name)
			in, err := OpenCSV(context.Background(), path, &CSVOptions{Columns: tc.columns, BlockRows: 700})
			require.NoError(t, err)
			x := loadCSV(t, path, tc.columns)
			compareInMemory(t, in.Source(), x, nil, tc.k, 12, tc.metric, tc.it)
		})
	}
}

// TestClusterMatchesInMemoryMillionRows compares on 10⁶ generated rows.
func TestClusterMatchesInMemoryMillionRows(t *testing.T) {
	if testing.Short() {
		t.Skip("10⁶ rows")
	}
	g := &genFn{N: 1_000_000, D: 4, K: 6, Rows: DefaultBlockRows, Seed: 5}
	x := g.matrix()
	res := compareInMemory(t, g.source(), x, nil, 6, 3, nil, Driven)
	assert.EqualValues(t, 1_000_000, res.Rows)
}

// TestClusterWeights compares weighted rows with kmeans.Cluster's Weights.
func TestClusterWeights(t *testing.T) {
	g := &genFn{N: 3000, D: 3, K: 4, Rows: 250, Seed: 9}
	x := g.matrix()
	w := make([]float64, 3000)
	for i := range w {
		w[i] = 0.5 + float64(i%5)*0.5
	}
	compareInMemory(t, matrixSource(x, w, 250), x, w, 4, 20, nil, Driven)
}

// TestClusterEmptyCluster starts one center far from every row: it gets
// no rows and keeps its place, which a direct Lloyd loop written in the
// test (bruteLloyd) reproduces.
func TestClusterEmptyCluster(t *testing.T) {
	g := &genFn{N: 2000, D: 2, K: 3, Rows: 300, Seed: 4}
	x := g.matrix()
	c0 := mat.NewDense(4, 2, []float64{
		x.At(0, 0), x.At(0, 1),
		x.At(1, 0), x.At(1, 1),
		x.At(2, 0), x.At(2, 1),
		1e6, -1e6,
	})
	want, sizes, passes := bruteLloyd(x, nil, c0, 30)
	require.Zero(t, sizes[3])
	for _, it := range []Iteration{Driven, Unrolled} {
		res, err := Cluster(context.Background(), Problem{Rows: g.source(), D: 2, K: 4, Centers: c0.RawMatrix().Data}, &Settings{MaxPasses: 30, Iteration: it})
		require.NoError(t, err)
		assert.Equal(t, []int{3}, res.Empty, it)
		assert.Equal(t, passes, res.Passes, it)
		got := res.Model.Centers().RawMatrix().Data
		assert.Equal(t, []float64{1e6, -1e6}, got[6:], "the empty cluster keeps its center")
		assert.Less(t, relDiff(got, want), 1e-12, it)
		assert.Zero(t, res.Sizes[3])
	}
}

// TestClusterOneCluster: with k = 1 the center is the mean of all rows
// after one pass, and the second pass finds nothing to move.
func TestClusterOneCluster(t *testing.T) {
	g := &genFn{N: 5000, D: 3, K: 2, Rows: 1000, Seed: 8}
	x := g.matrix()
	mean := make([]float64, 3)
	for i := range 5000 {
		for c := range 3 {
			mean[c] += x.At(i, c) / 5000
		}
	}
	res, err := Cluster(context.Background(), Problem{Rows: g.source(), D: 3, K: 1, Centers: []float64{0, 0, 0}}, &Settings{MaxPasses: 10})
	require.NoError(t, err)
	assert.Equal(t, kmeans.Converged, res.Status)
	assert.Equal(t, 2, res.Passes)
	assert.Less(t, relDiff(res.Model.Centers().RawMatrix().Data, mean), 1e-12)
	assert.Equal(t, []int64{5000}, res.Sizes)
}

// TestClusterDeterministic: the two iterations give the same bits (the
// merge tree fixes the order of every sum; TestMergeTreeOrderFree checks
// it against every arrival order and bundle split).
func TestClusterDeterministic(t *testing.T) {
	g := &genFn{N: 40_000, D: 5, K: 7, Rows: 500, Seed: 2}
	var first []float64
	for _, it := range []Iteration{Driven, Unrolled} {
		res, err := Cluster(context.Background(), Problem{Rows: g.source(), D: 5, K: 7}, &Settings{MaxPasses: 6, Iteration: it, Seed: 3})
		require.NoError(t, err)
		c := res.Model.Centers().RawMatrix().Data
		if first == nil {
			first = c
			continue
		}
		assert.Equal(t, first, c, "%v", it)
	}
}

// TestSeedMatchesInMemoryPlan: k-means‖ on the pipeline picks the centers
// that the same seeding.ParallelPlan driven over the rows in memory picks.
func TestSeedMatchesInMemoryPlan(t *testing.T) {
	g := &genFn{N: 30_000, D: 4, K: 12, Rows: 700, Seed: 6}
	x := g.matrix()
	const k, seed = 12, 99
	sp := spec{K: k, D: 4, Metric: "euclidean", Seed: seed}
	pl, err := sp.replay(nil)
	require.NoError(t, err)
	for !pl.Done() {
		q := pl.NewPart()
		require.NoError(t, pl.Add(q, 0, x.RawMatrix().Data, nil))
		require.NoError(t, pl.Next(q))
	}
	want, err := sp.centers(pl)
	require.NoError(t, err)
	// kmeans/stream's k-means‖ with the same seed, stopped after one
	// Lloyd pass, returns its initial centers: the same.
	src, err := stream.NewMatrix(x, nil)
	require.NoError(t, err)
	sres, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: k}, &stream.Settings{MaxPasses: 1, Seed: seed}, stream.Exact{})
	require.NoError(t, err)
	assert.Equal(t, want, sres.Model.Centers().RawMatrix().Data, "kmeans/stream")
	for _, it := range []Iteration{Driven, Unrolled} {
		res, err := Cluster(context.Background(), Problem{Rows: g.source(), D: 4, K: k}, &Settings{MaxPasses: 1, Iteration: it, Seed: seed})
		require.NoError(t, err)
		assert.Equal(t, want, res.Model.Centers().RawMatrix().Data, "one pass returns the initial centers (%v)", it)
		assert.Equal(t, pl.Passes(), res.SeedPasses, it)
	}
}

// TestClusterManhattanRefused: the median rule cannot be merged.
func TestClusterManhattanRefused(t *testing.T) {
	g := &genFn{N: 10, D: 2, K: 2, Rows: 5, Seed: 1}
	_, err := Cluster(context.Background(), Problem{Rows: g.source(), D: 2, K: 2, Metric: distance.Manhattan{}}, nil)
	require.ErrorIs(t, err, kmeans.ErrMetric)
	assert.Contains(t, err.Error(), "median")
}

// TestClusterBadSettings: bad input is refused before any pipeline runs.
func TestClusterBadSettings(t *testing.T) {
	src := (&genFn{N: 10, D: 2, K: 2, Rows: 5, Seed: 1}).source()
	for _, tc := range []struct {
		name string
		p    Problem
		s    *Settings
		want error
	}{
		{"k0", Problem{Rows: src, D: 2, K: 0}, nil, kmeans.ErrK},
		{"d0", Problem{Rows: src, D: 0, K: 2}, nil, kmeans.ErrData},
		{"no rows", Problem{D: 2, K: 2}, nil, ErrInput},
		{"negative passes", Problem{Rows: src, D: 2, K: 2}, &Settings{MaxPasses: -1}, kmeans.ErrSettings},
		{"unrolled without passes", Problem{Rows: src, D: 2, K: 2}, &Settings{Iteration: Unrolled}, kmeans.ErrSettings},
		{"unrolled too many", Problem{Rows: src, D: 2, K: 2}, &Settings{Iteration: Unrolled, MaxPasses: MaxUnrolled + 1}, kmeans.ErrSettings},
		{"unknown iteration", Problem{Rows: src, D: 2, K: 2}, &Settings{Iteration: 7}, kmeans.ErrSettings},
		{"features", Problem{Rows: src, D: 2, K: 2, Features: []string{"a"}}, nil, kmeans.ErrSchema},
		{"centers shape", Problem{Rows: src, D: 2, K: 2, Centers: []float64{1, 2, 3}}, nil, kmeans.ErrSeeding},
		{"centers NaN", Problem{Rows: src, D: 2, K: 1, Centers: []float64{1, nan()}}, nil, kmeans.ErrData},
		{"zero center cosine", Problem{Rows: src, D: 2, K: 1, Metric: distance.Cosine{}, Centers: []float64{0, 0}}, nil, kmeans.ErrSeeding},
		{"oversampling", Problem{Rows: src, D: 2, K: 2, Seeding: seeding.Parallel{Oversampling: -1}}, nil, kmeans.ErrSeeding},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Cluster(context.Background(), tc.p, tc.s)
			require.ErrorIs(t, err, tc.want)
		})
	}
}

// TestClusterTooFewDistinctRows: k-means‖ cannot find more centers than
// distinct rows; Driven reports kmeans.ErrK.
func TestClusterTooFewDistinctRows(t *testing.T) {
	x := mat.NewDense(6, 1, []float64{1, 1, 2, 2, 1, 2})
	_, err := Cluster(context.Background(), Problem{Rows: matrixSource(x, nil, 4), D: 1, K: 3}, &Settings{MaxPasses: 2})
	require.ErrorIs(t, err, kmeans.ErrK)
}

// TestClusterBadRowFailsPipeline: a NaN row fails the pipeline with a
// message naming the row.
func TestClusterBadRowFailsPipeline(t *testing.T) {
	x := mat.NewDense(4, 1, []float64{1, 2, 3, 4})
	src := func(s beam.Scope) beam.PCollection {
		return beam.ParDo(s, &matrixFn{X: x.RawMatrix().Data, D: 1, Rows: 2, NaNAt: 3}, beam.Impulse(s))
	}
	_, err := Cluster(context.Background(), Problem{Rows: src, D: 1, K: 1, Centers: []float64{0}}, &Settings{MaxPasses: 2})
	require.ErrorIs(t, err, ErrPipeline)
	assert.Contains(t, err.Error(), "row 2")
}

// TestClusterModelAndLabels: the model document decodes with the core's
// reader and names the features; every labelled row names its nearest
// center by a direct computation.
func TestClusterModelAndLabels(t *testing.T) {
	path := datasetOrSkip(t, "iris")
	cols := []string{"sepal_length", "sepal_width", "petal_length", "petal_width"}
	in, err := OpenCSV(context.Background(), path, &CSVOptions{Columns: cols, Keep: "label", BlockRows: 64})
	require.NoError(t, err)
	x := loadCSV(t, path, cols)
	for _, it := range []Iteration{Driven, Unrolled} {
		out := filepath.Join(t.TempDir(), "labels.csv")
		res, err := Cluster(context.Background(), Problem{Rows: in.Source(), D: in.Dim(), K: 3, Features: in.Columns(), Labels: out, LabelID: "label"}, &Settings{MaxPasses: 20, Iteration: it, Seed: 1})
		require.NoError(t, err)
		doc, err := json.Marshal(res.Model)
		require.NoError(t, err)
		m, err := kmeans.ReadModel(strings.NewReader(string(doc)), nil)
		require.NoError(t, err)
		assert.Equal(t, cols, m.Features())
		b, err := os.ReadFile(out)
		require.NoError(t, err)
		lines := strings.Split(strings.TrimSpace(string(b)), "\n")
		require.Len(t, lines, 151)
		assert.Equal(t, "label,cluster,distance", lines[0])
		c := res.Model.Centers().RawMatrix().Data
		for i, line := range lines[1:] {
			f := strings.Split(line, ",")
			best, bd := 0, 1e300
			for j := range 3 {
				if l := distance.SqEuclidean(x.RawRowView(i), c[j*4:(j+1)*4]); l < bd {
					best, bd = j, l
				}
			}
			require.Equal(t, string(rune('0'+best)), f[1], "row %d", i)
		}
	}
}

// TestOpenCSVErrors: missing files and columns are refused up front with
// the streaming reader's errors; a bad value fails the pipeline with the
// reader's message naming the line, unless Skip is set.
func TestOpenCSVErrors(t *testing.T) {
	dir := t.TempDir()
	_, err := OpenCSV(context.Background(), filepath.Join(dir, "*.csv"), nil)
	require.ErrorIs(t, err, streamErrEmpty)
	bad := filepath.Join(dir, "bad.csv")
	require.NoError(t, os.WriteFile(bad, []byte("a,b\n1,2\n3,x\n5,6\n"), 0o600))
	_, err = OpenCSV(context.Background(), bad, &CSVOptions{Columns: []string{"a", "c"}})
	require.ErrorIs(t, err, streamErrColumn)
	_, err = OpenCSV(context.Background(), bad, &CSVOptions{BlockRows: -1})
	require.ErrorIs(t, err, ErrInput)

	in, err := OpenCSV(context.Background(), bad, nil)
	require.NoError(t, err)
	_, err = Cluster(context.Background(), Problem{Rows: in.Source(), D: 2, K: 1, Centers: []float64{0, 0}}, &Settings{MaxPasses: 1})
	require.ErrorIs(t, err, ErrPipeline)
	assert.Contains(t, err.Error(), "line 3")

	in, err = OpenCSV(context.Background(), bad, &CSVOptions{Skip: true, BlockRows: 1})
	require.NoError(t, err)
	res, err := Cluster(context.Background(), Problem{Rows: in.Source(), D: 2, K: 1, Centers: []float64{0, 0}}, &Settings{MaxPasses: 3})
	require.NoError(t, err)
	assert.Equal(t, []float64{3, 4}, res.Model.Centers().RawMatrix().Data, "mean of the two good rows")
}

// TestClusterCancelled: a cancelled context stops before the next pipeline.
func TestClusterCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err := Cluster(ctx, Problem{Rows: (&genFn{N: 10, D: 1, K: 1, Rows: 5}).source(), D: 1, K: 1}, nil)
	require.True(t, errors.Is(err, context.Canceled), err)
}

// TestClusterNoRows: a source without rows is reported as such.
func TestClusterNoRows(t *testing.T) {
	empty := func(s beam.Scope) beam.PCollection {
		return beam.ParDo(s, &matrixFn{D: 1, Rows: 1}, beam.Impulse(s))
	}
	for _, it := range []Iteration{Driven, Unrolled} {
		_, err := Cluster(context.Background(), Problem{Rows: empty, D: 1, K: 1}, &Settings{MaxPasses: 2, Iteration: it})
		require.ErrorIs(t, err, stream.ErrEmpty, it)
	}
}
