package parquet_test

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	pq "github.com/parquet-go/parquet-go"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/data/reference"
	"github.com/centroidlab/centroid/internal/data/synth"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/kmeans/stream/parquet"
	"github.com/centroidlab/centroid/scale"
	"github.com/centroidlab/centroid/seeding"
)

// writeMatrix writes X as Parquet columns x0, x1, … in small row groups.
func writeMatrix(t testing.TB, path string, X *mat.Dense, groupRows int) []string {
	t.Helper()
	n, d := X.Dims()
	names := make([]string, d)
	fields := make([]parquet.Field, d)
	for j := range d {
		names[j] = fmt.Sprintf("x%d", j)
		fields[j] = parquet.Field{Name: names[j], Kind: parquet.Float64}
	}
	f, err := os.Create(path)
	require.NoError(t, err)
	w, err := parquet.NewWriter(f, fields, &parquet.WriterOptions{RowGroupRows: groupRows})
	require.NoError(t, err)
	for i := range n {
		require.NoError(t, w.WriteFloats(X.RawRowView(i)))
	}
	require.NoError(t, w.Close())
	require.NoError(t, f.Close())
	return names
}

func readAll(t *testing.T, src stream.Source, block int) ([][]float64, error) {
	d := src.Dim()
	buf := make([]float64, block*d)
	var out [][]float64
	for {
		n, err := src.Read(buf)
		if err == io.EOF {
			return out, nil
		}
		if err != nil {
			return out, err
		}
		for i := range n {
			out = append(out, append([]float64(nil), buf[i*d:(i+1)*d]...))
		}
	}
}

func TestRoundTripAcrossRowGroupsAndPages(t *testing.T) {
	X := synth.Blobs(7000, 3, 4, 1)
	path := filepath.Join(t.TempDir(), "x.parquet")
	names := writeMatrix(t, path, X, 1000)
	src, err := parquet.Open(path, &stream.Options{Columns: []string{names[2], names[0]}})
	require.NoError(t, err)
	defer src.Close()
	assert.EqualValues(t, 7000, src.NumRows())
	for pass := range 2 {
		rows, err := readAll(t, src, 333)
		require.NoError(t, err)
		require.Len(t, rows, 7000)
		for i, r := range rows {
			require.Equal(t, []float64{X.At(i, 2), X.At(i, 0)}, r, "pass %d row %d", pass, i)
		}
		require.NoError(t, src.Reopen())
	}
}

type withNulls struct {
	ID     string   `parquet:"id"`
	Trips  *float64 `parquet:"trips,optional"`
	Share  float32  `parquet:"share"`
	Docks  int32    `parquet:"docks"`
	Served uint64   `parquet:"served"`
	Flag   bool     `parquet:"flag"`
}

func writeRecords(t *testing.T, recs []withNulls) []byte {
	var b bytes.Buffer
	w := pq.NewGenericWriter[withNulls](&b)
	_, err := w.Write(recs)
	require.NoError(t, err)
	require.NoError(t, w.Close())
	return b.Bytes()
}

func ptr(v float64) *float64 { return &v }

// TestBadRows checks that nulls, NaN and ±Inf name the file, the row and
// the column, that Skip counts them, and that text columns come along.
func TestBadRows(t *testing.T) {
	doc := writeRecords(t, []withNulls{
		{"RB-001", ptr(412), 0.25, 40, 7, true},
		{"RB-002", nil, 0.5, 30, 8, false},
		{"RB-003", ptr(math.NaN()), 0.75, 20, 9, true},
		{"RB-004", ptr(95), 0.125, 10, 1 << 40, false},
	})
	open := func(o *stream.Options) *parquet.Source {
		src, err := parquet.New(bytes.NewReader(doc), int64(len(doc)), "stations.parquet", o)
		require.NoError(t, err)
		return src
	}
	cols := []string{"trips", "share", "docks", "served"}
	_, err := readAll(t, open(&stream.Options{Columns: cols}), 10)
	require.ErrorIs(t, err, stream.ErrRow)
	require.ErrorIs(t, err, stream.ErrMissing)
	assert.Contains(t, err.Error(), `stations.parquet: row 1, column "trips"`)
	assert.Contains(t, err.Error(), "null")

	_, err = readAll(t, open(&stream.Options{Columns: cols[:1], Skip: true}), 10)
	require.NoError(t, err)
	var skipped []*stream.RowError
	src := open(&stream.Options{Columns: cols, Keep: []string{"id", "flag"}, Skip: true, OnSkip: func(e *stream.RowError) { skipped = append(skipped, e) }})
	buf := make([]float64, 40)
	n, err := src.Read(buf)
	require.NoError(t, err)
	require.Equal(t, 2, n)
	assert.Equal(t, []float64{412, 0.25, 40, 7, 95, 0.125, 10, 1 << 40}, buf[:8])
	assert.Equal(t, []string{"RB-001", "RB-004"}, src.Kept(0))
	assert.Equal(t, []string{"true", "false"}, src.Kept(1))
	assert.Equal(t, []int64{0, 3}, src.Records())
	assert.EqualValues(t, 2, src.Rejected())
	require.Len(t, skipped, 2)
	assert.ErrorIs(t, skipped[1], stream.ErrNotFinite)
	assert.EqualValues(t, 2, skipped[1].Row)
	assert.Equal(t, "trips", skipped[1].Column)

	for _, bad := range []struct {
		cols []string
		says string
	}{{[]string{"nope"}, `no column "nope"`}, {[]string{"id"}, `column "id" has type`}, {[]string{"flag"}, "not a number"}, {[]string{"share", "share"}, "twice"}} {
		_, err := parquet.New(bytes.NewReader(doc), int64(len(doc)), "stations.parquet", &stream.Options{Columns: bad.cols})
		require.ErrorIs(t, err, stream.ErrColumn, bad.cols)
		assert.Contains(t, err.Error(), bad.says)
	}
	_, err = parquet.New(bytes.NewReader([]byte("not parquet at all")), 18, "junk.parquet", nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "junk.parquet")
}

// TestExactFromParquetEqualsInMemory streams the shared reference datasets
// from Parquet files written by the test: exact Lloyd gives in-memory
// Lloyd's centers and cost bit for bit from the same start.
func TestExactFromParquetEqualsInMemory(t *testing.T) {
	dir := t.TempDir()
	sets := []struct {
		name string
		k    int
		sc   scale.Scaler
	}{{"iris", 3, nil}, {"s1", 15, nil}, {"unbalance", 8, nil}, {"wine", 3, scale.ZScore{}}, {"seeds", 3, scale.MinMax{}}}
	for _, tc := range sets {
		t.Run(tc.name, func(t *testing.T) {
			set := reference.LoadOrSkip(t, tc.name)
			n, d := set.X.Dims()
			path := filepath.Join(dir, tc.name+".parquet")
			names := writeMatrix(t, path, set.X, 1000)
			// A start both share: k distinct rows in the clustering space.
			Z := set.X
			if tc.sc != nil {
				l, err := tc.sc.Learn(set.X, nil)
				require.NoError(t, err)
				Z = mat.NewDense(n, d, nil)
				for i := range n {
					l.Apply(Z.RawRowView(i), set.X.RawRowView(i))
				}
			}
			c0 := mat.NewDense(tc.k, d, nil)
			require.NoError(t, seeding.Random{}.Seed(c0, Z, nil, nil, rand.New(rand.NewPCG(5, 0))))
			want, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: set.X, K: tc.k, Seeder: seeding.Given{Centers: c0}, Scaler: tc.sc},
				&kmeans.Settings{Restarts: 1, SwapTrials: -1}, kmeans.Lloyd{})
			require.NoError(t, err)
			// Columns by name: the file's schema lists them sorted by name.
			src, err := parquet.Open(path, &stream.Options{Columns: names})
			require.NoError(t, err)
			defer src.Close()
			got, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: tc.k, Centers: c0, Scaler: tc.sc}, &stream.Settings{BlockRows: 512}, stream.Exact{})
			require.NoError(t, err)
			require.Equal(t, want.Model.ScaledCenters().RawMatrix().Data, got.Model.ScaledCenters().RawMatrix().Data)
			require.Equal(t, math.Float64bits(want.Cost), math.Float64bits(got.Cost))
			require.Equal(t, want.Iterations, got.Iterations)
			assert.Equal(t, names, got.Model.Features())
			for i := range n {
				a, _, err := got.Model.Nearest(set.X.RawRowView(i))
				require.NoError(t, err)
				require.Equal(t, want.Assignments[i], a)
			}
		})
	}
}

func TestWriterErrors(t *testing.T) {
	_, err := parquet.NewWriter(io.Discard, nil, nil)
	assert.ErrorIs(t, err, parquet.ErrWrite)
	_, err = parquet.NewWriter(io.Discard, []parquet.Field{{Name: "a"}, {Name: "a"}}, nil)
	assert.ErrorIs(t, err, parquet.ErrWrite)
	w, err := parquet.NewWriter(io.Discard, []parquet.Field{{Name: "id", Kind: parquet.String}, {Name: "cluster", Kind: parquet.Int64}}, nil)
	require.NoError(t, err)
	assert.ErrorIs(t, w.Write("a", 1.5), parquet.ErrWrite)
	assert.ErrorIs(t, w.Write("a"), parquet.ErrWrite)
	assert.ErrorIs(t, w.WriteFloats([]float64{1, 2}), parquet.ErrWrite)
	require.NoError(t, w.Write("a", 3))
	require.NoError(t, w.Close())
	var target *stream.RowError
	assert.False(t, errors.As(err, &target))
}
