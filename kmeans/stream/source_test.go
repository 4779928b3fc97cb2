package stream_test

import (
	"bytes"
	"context"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream"
)

// readAll drains a source into rows.
func readAll(t *testing.T, src stream.Source, block int) ([][]float64, error) {
	t.Helper()
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
		require.Positive(t, n)
		for i := range n {
			out = append(out, append([]float64(nil), buf[i*d:(i+1)*d]...))
		}
	}
}

const stationsCSV = `id,trips_per_day,weekend_share,name
RB-001,412,0.18,"Mill Lane"
RB-002, 95 ,0.52,Quay
RB-003,1.5e2,0.25,"Elm, Upper"
`

func TestCSVColumnsByName(t *testing.T) {
	c, err := stream.NewCSV(strings.NewReader(stationsCSV), "stations.csv", &stream.Options{Columns: []string{"weekend_share", "trips_per_day"}, Keep: []string{"id"}})
	require.NoError(t, err)
	assert.Equal(t, 2, c.Dim())
	assert.Equal(t, []string{"weekend_share", "trips_per_day"}, c.Columns())
	buf := make([]float64, 4) // two rows per read
	n, err := c.Read(buf)
	require.NoError(t, err)
	require.Equal(t, 2, n)
	assert.Equal(t, []float64{0.18, 412, 0.52, 95}, buf)
	assert.Equal(t, []string{"RB-001", "RB-002"}, c.Kept(0))
	assert.Equal(t, []int64{0, 1}, c.Records())
	n, err = c.Read(buf)
	require.NoError(t, err)
	assert.Equal(t, 1, n)
	assert.Equal(t, []float64{0.25, 150}, buf[:2])
	_, err = c.Read(buf)
	assert.Equal(t, io.EOF, err)
}

func TestCSVReopen(t *testing.T) {
	path := filepath.Join(t.TempDir(), "s.csv")
	require.NoError(t, os.WriteFile(path, []byte(stationsCSV), 0o644))
	c, err := stream.OpenCSV(path, &stream.Options{Columns: []string{"trips_per_day"}})
	require.NoError(t, err)
	defer c.Close()
	first, err := readAll(t, c, 2)
	require.NoError(t, err)
	require.NoError(t, c.Reopen())
	again, err := readAll(t, c, 5)
	require.NoError(t, err)
	assert.Equal(t, [][]float64{{412}, {95}, {150}}, first)
	assert.Equal(t, first, again)
	// A seekable reader reopens too; a plain stream cannot.
	s, err := stream.NewCSV(bytes.NewReader([]byte(stationsCSV)), "mem", &stream.Options{Columns: []string{"trips_per_day"}})
	require.NoError(t, err)
	assert.NoError(t, s.Reopen())
	p, err := stream.NewCSV(io.MultiReader(strings.NewReader(stationsCSV)), "pipe", &stream.Options{Columns: []string{"trips_per_day"}})
	require.NoError(t, err)
	assert.ErrorIs(t, p.Reopen(), stream.ErrReopen)
}

// TestCSVBadFiles checks that every kind of bad file gives the promised
// error naming the place, and with Skip the promised counts.
func TestCSVBadFiles(t *testing.T) {
	cases := []struct {
		name, doc string
		cols      []string
		err       error    // sentinel of the error
		cause     error    // RowError cause, if a row error
		says      []string // words the message must hold
		skipped   int64    // rows skipped with Skip
		rows      int      // rows read with Skip
	}{
		{name: "non-numeric cell", doc: "a,b\n1,2\n3,x7\n5,6\n", err: stream.ErrRow, cause: stream.ErrNotNumber,
			says: []string{"f.csv", "line 3", `column "b"`, `"x7"`, "not a number"}, skipped: 1, rows: 2},
		{name: "missing column", doc: "a,b\n1,2\n", cols: []string{"a", "c"}, err: stream.ErrColumn, says: []string{"f.csv", `no column "c"`, `"a", "b"`}},
		{name: "short row", doc: "a,b\n1,2\n3\n5,6\n", err: stream.ErrRow, cause: stream.ErrMissing,
			says: []string{"f.csv", "line 3", `column "b"`, "1 fields"}, skipped: 1, rows: 2},
		{name: "NaN", doc: "a,b\n1,2\n3,NaN\n", err: stream.ErrRow, cause: stream.ErrNotFinite,
			says: []string{"line 3", `column "b"`, "NaN"}, skipped: 1, rows: 1},
		{name: "Inf", doc: "a,b\n1,-Inf\n3,4\n", err: stream.ErrRow, cause: stream.ErrNotFinite, says: []string{"line 2", `column "b"`}, skipped: 1, rows: 1},
		{name: "overflow", doc: "a,b\n1,2\n3,1e400\n", err: stream.ErrRow, cause: stream.ErrNotFinite, says: []string{"line 3"}, skipped: 1, rows: 1},
		{name: "empty cell", doc: "a,b\n1,\n3,4\n", err: stream.ErrRow, cause: stream.ErrMissing, says: []string{"line 2", `column "b"`}, skipped: 1, rows: 1},
		{name: "bad quote", doc: "a,b\n1,2\n3,\"4\n", err: stream.ErrRow, says: []string{"f.csv", "line 3"}, skipped: 1, rows: 1},
		{name: "empty file", doc: "", err: stream.ErrEmpty, says: []string{"f.csv", "empty file"}},
		{name: "repeated header", doc: "a,a\n1,2\n", err: stream.ErrColumn, says: []string{`"a" appears more than once`}},
		{name: "column asked twice", doc: "a,b\n1,2\n", cols: []string{"a", "a"}, err: stream.ErrColumn, says: []string{"asked for twice"}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			src, err := stream.NewCSV(strings.NewReader(tc.doc), "f.csv", &stream.Options{Columns: tc.cols})
			if err == nil {
				_, err = readAll(t, src, 2)
			}
			require.ErrorIs(t, err, tc.err)
			for _, s := range tc.says {
				assert.Contains(t, err.Error(), s)
			}
			if tc.cause != nil {
				assert.ErrorIs(t, err, tc.cause)
				var re *stream.RowError
				require.True(t, errors.As(err, &re))
				assert.Equal(t, "f.csv", re.Source)
			}
			if tc.skipped == 0 {
				return
			}
			var seen []*stream.RowError
			src, err = stream.NewCSV(strings.NewReader(tc.doc), "f.csv", &stream.Options{Columns: tc.cols, Skip: true, OnSkip: func(e *stream.RowError) { seen = append(seen, e) }})
			require.NoError(t, err)
			rows, err := readAll(t, src, 2)
			require.NoError(t, err)
			assert.Len(t, rows, tc.rows)
			assert.Equal(t, tc.skipped, src.Rejected())
			require.Len(t, seen, int(tc.skipped))
			assert.ErrorIs(t, seen[0], stream.ErrRow)
		})
	}
}

// TestClusterRejectsEmptyAndHeaderOnly checks the errors Cluster gives
// for a source without rows.
func TestClusterRejectsEmptyAndHeaderOnly(t *testing.T) {
	src, err := stream.NewCSV(strings.NewReader("a,b\n"), "header.csv", nil)
	require.NoError(t, err)
	_, err = stream.Cluster(context.Background(), stream.Problem{Source: src, K: 2}, nil, stream.MiniBatch{})
	require.ErrorIs(t, err, stream.ErrEmpty)
	assert.Contains(t, err.Error(), "header.csv has no data rows")
	src, err = stream.NewCSV(strings.NewReader("a,b\nx,1\ny,2\n"), "bad.csv", &stream.Options{Skip: true})
	require.NoError(t, err)
	_, err = stream.Cluster(context.Background(), stream.Problem{Source: src, K: 1}, nil, stream.MiniBatch{})
	require.ErrorIs(t, err, stream.ErrEmpty)
	assert.Contains(t, err.Error(), "every row (2) was bad")
}

func TestMatrixSource(t *testing.T) {
	X := mat.NewDense(3, 2, []float64{1, 2, 3, math.NaN(), 5, 6})
	src, err := stream.NewMatrix(X, &stream.Options{Columns: []string{"u", "v"}})
	require.NoError(t, err)
	_, err = readAll(t, src, 2)
	require.ErrorIs(t, err, stream.ErrNotFinite)
	assert.Contains(t, err.Error(), `matrix: row 1, column "v"`)
	src, err = stream.NewMatrix(X.Slice(0, 3, 0, 2), &stream.Options{Skip: true})
	require.NoError(t, err)
	rows, err := readAll(t, src, 1)
	require.NoError(t, err)
	assert.Equal(t, [][]float64{{1, 2}, {5, 6}}, rows)
	assert.EqualValues(t, 1, src.Rejected())
	require.NoError(t, src.Reopen())
	assert.EqualValues(t, 0, src.Rejected())
	_, err = stream.NewMatrix(nil, nil)
	assert.ErrorIs(t, err, stream.ErrEmpty)
	_, err = stream.NewMatrix(X, &stream.Options{Columns: []string{"u"}})
	assert.ErrorIs(t, err, stream.ErrColumn)
}

func TestSeqAndChanSources(t *testing.T) {
	rows := [][]float64{{1, 2}, {3}, {4, math.Inf(1)}, {5, 6}}
	seq := func(yield func([]float64) bool) {
		for _, r := range rows {
			if !yield(r) {
				return
			}
		}
	}
	src, err := stream.NewSeq(seq, 2, nil)
	require.NoError(t, err)
	_, err = readAll(t, src, 3)
	require.ErrorIs(t, err, stream.ErrMissing)
	assert.Contains(t, err.Error(), "sequence: row 1")
	require.NoError(t, src.Close())

	ch := make(chan []float64)
	go func() {
		defer close(ch)
		for _, r := range rows {
			ch <- r
		}
	}()
	src, err = stream.NewChan(ch, 2, &stream.Options{Skip: true})
	require.NoError(t, err)
	got, err := readAll(t, src, 3)
	require.NoError(t, err)
	assert.Equal(t, [][]float64{{1, 2}, {5, 6}}, got)
	assert.EqualValues(t, 2, src.Rejected())
	_, isReopener := any(src).(stream.Reopener)
	assert.False(t, isReopener, "a sequence cannot be read twice")
	_, err = stream.Cluster(context.Background(), stream.Problem{Source: src, K: 1}, nil, stream.Exact{})
	assert.ErrorIs(t, err, stream.ErrReopen)
}

func TestClusterBadProblem(t *testing.T) {
	X := mat.NewDense(4, 2, []float64{0, 0, 1, 1, 2, 2, 3, 3})
	src, err := stream.NewMatrix(X, nil)
	require.NoError(t, err)
	ctx := context.Background()
	_, err = stream.Cluster(ctx, stream.Problem{Source: src, K: 0}, nil, nil)
	assert.ErrorIs(t, err, kmeans.ErrK)
	_, err = stream.Cluster(ctx, stream.Problem{Source: src, K: 5}, nil, nil)
	assert.ErrorIs(t, err, kmeans.ErrK, "more clusters than distinct rows")
	_, err = stream.Cluster(ctx, stream.Problem{Source: src, K: 2, Features: []string{"a"}}, nil, nil)
	assert.ErrorIs(t, err, kmeans.ErrSchema)
	for _, s := range []stream.Settings{{MaxPasses: -1}, {Tolerance: 1}, {Workers: -1}, {BlockRows: -1}, {SampleRows: -1}} {
		_, err = stream.Cluster(ctx, stream.Problem{Source: src, K: 2}, &s, nil)
		assert.ErrorIs(t, err, kmeans.ErrSettings, "%+v", s)
	}
	for _, mb := range []stream.MiniBatch{{BatchSize: -1}, {Passes: -1}, {MaxBatches: -1}, {Smoothing: 2}, {ExactPasses: -1}, {BufferRows: -1}} {
		_, err = stream.Cluster(ctx, stream.Problem{Source: src, K: 2}, nil, mb)
		assert.ErrorIs(t, err, kmeans.ErrSettings, "%+v", mb)
	}
	_, err = stream.Cluster(ctx, stream.Problem{Source: nil, K: 2}, nil, nil)
	assert.ErrorIs(t, err, stream.ErrEmpty)
	dup := mat.NewDense(2, 2, []float64{1, 1, 1, 1})
	_, err = stream.Cluster(ctx, stream.Problem{Source: src, K: 2, Centers: dup}, nil, nil)
	assert.ErrorIs(t, err, kmeans.ErrSeeding)
	zero := mat.NewDense(4, 2, []float64{0, 0, 1, 1, 2, 2, 3, 3})
	zsrc, err := stream.NewMatrix(zero, nil)
	require.NoError(t, err)
	_, err = stream.Cluster(ctx, stream.Problem{Source: zsrc, K: 2, Metric: cosineMetric}, nil, nil)
	require.ErrorIs(t, err, kmeans.ErrMetric)
	assert.Contains(t, err.Error(), "row 0")
	_, err = stream.Cluster(ctx, stream.Problem{Source: src, K: 2, Metric: manhattanMetric}, nil, nil)
	require.ErrorIs(t, err, kmeans.ErrMetric)
	assert.Contains(t, err.Error(), "median")
}

func TestClusterCancel(t *testing.T) {
	X := mat.NewDense(5000, 2, nil)
	for i := range 5000 {
		X.Set(i, 0, float64(i%97))
		X.Set(i, 1, float64(i%13))
	}
	src, err := stream.NewMatrix(X, nil)
	require.NoError(t, err)
	ctx, cancel := context.WithCancel(context.Background())
	calls := 0
	res, err := stream.Cluster(ctx, stream.Problem{Source: src, K: 3}, &stream.Settings{BlockRows: 100, Progress: func(stream.Progress) {
		if calls++; calls == 30 {
			cancel()
		}
	}}, nil)
	assert.ErrorIs(t, err, context.Canceled)
	assert.Nil(t, res)
}
