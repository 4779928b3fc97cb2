package stream_test

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/data/reference"
	"github.com/centroidlab/centroid/internal/data/synth"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/scale"
	"github.com/centroidlab/centroid/seeding"
)

// startCenters returns k distinct rows of X in the clustering space (after
// the scaler learned on X), drawn with seed: a start both drivers share.
func startCenters(t *testing.T, X *mat.Dense, k int, sc scale.Scaler, seed uint64) *mat.Dense {
	t.Helper()
	n, d := X.Dims()
	Z := X
	if sc != nil {
		learned, err := sc.Learn(X, nil)
		require.NoError(t, err)
		Z = mat.NewDense(n, d, nil)
		for i := range n {
			learned.Apply(Z.RawRowView(i), X.RawRowView(i))
		}
	}
	c := mat.NewDense(k, d, nil)
	require.NoError(t, seeding.Random{}.Seed(c, Z, nil, nil, rand.New(rand.NewPCG(seed, 0))))
	return c
}

// inMemory runs kmeans.Cluster with Lloyd from the given centers.
func inMemory(t *testing.T, X *mat.Dense, k int, c0 *mat.Dense, sc scale.Scaler, m distance.Metric) *kmeans.Result {
	t.Helper()
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: X, K: k, Seeder: seeding.Given{Centers: c0}, Scaler: sc, Metric: m},
		&kmeans.Settings{Restarts: 1, Workers: 2, SwapTrials: -1}, kmeans.Lloyd{})
	require.NoError(t, err)
	return res
}

// requireSame checks that a streamed result is the in-memory one: centers,
// cost and per-cluster costs bit for bit, the same passes, status and
// sizes, and the same assignment of every row by the two models.
func requireSame(t *testing.T, X *mat.Dense, want *kmeans.Result, got *stream.Result) {
	t.Helper()
	require.Equal(t, want.Model.ScaledCenters().RawMatrix().Data, got.Model.ScaledCenters().RawMatrix().Data, "centers")
	require.Equal(t, math.Float64bits(want.Cost), math.Float64bits(got.Cost), "cost %v vs %v", want.Cost, got.Cost)
	require.Equal(t, want.Iterations, got.Iterations, "passes")
	require.Equal(t, want.Status, got.Status)
	require.Equal(t, want.Stats.EmptyRepairs, got.EmptyRepairs)
	require.True(t, got.Exact)
	n, _ := X.Dims()
	require.EqualValues(t, n, got.Rows)
	for j, s := range want.Sizes {
		require.EqualValues(t, s, got.Sizes[j], "size of cluster %d", j)
	}
	wt, gt := want.Model.Training(), got.Model.Training()
	require.Equal(t, wt.Rows, gt.Rows)
	for j := range wt.Clusters {
		require.Equal(t, wt.Clusters[j].Size, gt.Clusters[j].Size)
		require.Equal(t, wt.Clusters[j].Cost, gt.Clusters[j].Cost, "cost of cluster %d", j)
		require.Equal(t, wt.Clusters[j].Distances.Max, gt.Clusters[j].Distances.Max)
	}
	for i := range n {
		a, _, err := got.Model.Nearest(X.RawRowView(i))
		require.NoError(t, err)
		require.Equal(t, want.Assignments[i], a, "row %d", i)
	}
}

type equalCase struct {
	name   string
	X      *mat.Dense
	k      int
	scaler scale.Scaler
	metric distance.Metric
}

func equalCases(t *testing.T) []equalCase {
	cases := []equalCase{
		{"blobs", synth.Blobs(12000, 5, 9, 4), 9, nil, nil},
		{"blobs-zscore", synth.Blobs(12000, 5, 9, 4), 9, scale.ZScore{}, nil},
		{"blobs-minmax-cosine", synth.Blobs(8000, 4, 6, 5), 6, &scale.MinMax{}, distance.Cosine{}},
		{"blobs-cosine", synth.Blobs(8000, 4, 6, 5), 6, nil, distance.Cosine{}},
	}
	// Shared reference sets (see PROVENANCE.md of the datasets folder).
	for _, r := range []struct {
		name string
		k    int
		sc   scale.Scaler
	}{{"iris", 3, nil}, {"s1", 15, nil}, {"a1", 20, nil}, {"unbalance", 8, nil}, {"wine", 3, scale.ZScore{}}, {"seeds", 3, &scale.ZScore{}}} {
		set, err := reference.Load(r.name)
		if err != nil {
			t.Logf("skipping %s: %v", r.name, err)
			continue
		}
		cases = append(cases, equalCase{r.name, set.X, r.k, r.sc, nil})
	}
	return cases
}

// TestExactEqualsInMemory is the main promise of Exact: from the same
// initial centers, streaming Lloyd over a matrix gives kmeans.Cluster's
// answer with kmeans.Lloyd bit for bit, on the shared reference datasets
// and on synthetic data spanning many fixed blocks, with and without a
// scaler, under Euclidean and Cosine, for any block size and workers.
func TestExactEqualsInMemory(t *testing.T) {
	for _, tc := range equalCases(t) {
		t.Run(tc.name, func(t *testing.T) {
			c0 := startCenters(t, tc.X, tc.k, tc.scaler, 7)
			want := inMemory(t, tc.X, tc.k, c0, tc.scaler, tc.metric)
			for _, s := range []stream.Settings{{BlockRows: 8192, Workers: 2}, {BlockRows: 37, Workers: 1}, {BlockRows: 1000, Workers: 3}} {
				src, err := stream.NewMatrix(tc.X, nil)
				require.NoError(t, err)
				got, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: tc.k, Centers: c0, Scaler: tc.scaler, Metric: tc.metric}, &s, stream.Exact{})
				require.NoError(t, err)
				requireSame(t, tc.X, want, got)
			}
		})
	}
}

// TestExactRepairsLikeInMemory starts from centers two of which attract no
// row, in data whose costliest rows are many copies of one far row: the
// repair must take that row once and then the next costliest distinct row,
// as kmeans.Cluster does.
func TestExactRepairsLikeInMemory(t *testing.T) {
	base := synth.Blobs(3000, 2, 4, 8)
	n := 3050
	X := mat.NewDense(n, 2, nil)
	for i := range 3000 {
		X.SetRow(i, base.RawRowView(i))
	}
	for i := 3000; i < n; i++ {
		X.SetRow(i, []float64{500, 500}) // 50 copies of a far row
	}
	c0 := mat.NewDense(6, 2, nil)
	for j := range 4 {
		c0.SetRow(j, base.RawRowView(j*100))
	}
	c0.SetRow(4, []float64{-1e4, -1e4}) // no row is near these two
	c0.SetRow(5, []float64{-2e4, 1e4})
	want := inMemory(t, X, 6, c0, nil, nil)
	require.Positive(t, want.Stats.EmptyRepairs)
	src, err := stream.NewMatrix(X, nil)
	require.NoError(t, err)
	got, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: 6, Centers: c0}, &stream.Settings{BlockRows: 500}, stream.Exact{})
	require.NoError(t, err)
	requireSame(t, X, want, got)
	assert.Positive(t, got.Stages[stream.StageRepair])
}

// writeCSV writes X with a header x0, x1, … and shortest round-trip
// numbers, so that the file parses back to the same bits.
func writeCSV(t testing.TB, path string, X *mat.Dense, names []string) {
	t.Helper()
	n, d := X.Dims()
	var b strings.Builder
	b.WriteString(strings.Join(names, ",") + "\n")
	for i := range n {
		for j := range d {
			if j > 0 {
				b.WriteByte(',')
			}
			b.WriteString(strconv.FormatFloat(X.At(i, j), 'g', -1, 64))
		}
		b.WriteByte('\n')
	}
	require.NoError(t, os.WriteFile(path, []byte(b.String()), 0o644))
}

func names(d int) []string {
	s := make([]string, d)
	for j := range s {
		s[j] = fmt.Sprintf("x%d", j)
	}
	return s
}

// TestExactFromCSVEqualsInMemory streams the shared datasets from CSV files
// written by the test: the same bits as in memory, the feature names in the
// model.
func TestExactFromCSVEqualsInMemory(t *testing.T) {
	dir := t.TempDir()
	for _, tc := range equalCases(t) {
		t.Run(tc.name, func(t *testing.T) {
			_, d := tc.X.Dims()
			path := filepath.Join(dir, tc.name+".csv")
			writeCSV(t, path, tc.X, names(d))
			c0 := startCenters(t, tc.X, tc.k, tc.scaler, 3)
			want := inMemory(t, tc.X, tc.k, c0, tc.scaler, tc.metric)
			src, err := stream.OpenCSV(path, nil)
			require.NoError(t, err)
			defer src.Close()
			got, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: tc.k, Centers: c0, Scaler: tc.scaler, Metric: tc.metric}, &stream.Settings{BlockRows: 4096}, nil)
			require.NoError(t, err)
			requireSame(t, tc.X, want, got)
			assert.Equal(t, names(d), got.Model.Features())
		})
	}
}
