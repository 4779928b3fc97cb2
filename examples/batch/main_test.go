package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream/parquet"
)

// batch runs the command in-process and returns its exit code and output.
func batch(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	return batchCtx(context.Background(), args...)
}

func batchCtx(ctx context.Context, args ...string) (int, string, string) {
	var out, errs bytes.Buffer
	code := run(ctx, args, &out, &errs)
	return code, out.String(), errs.String()
}

var features = strings.Join(bikeshare.Features(), ",")

// stationFiles writes n demo stations as CSV and Parquet with an id
// column, the six features and the latent kind.
func stationFiles(t *testing.T, dir string, n int) (csvPath, pqPath string, stations []bikeshare.Station) {
	t.Helper()
	stations, _ = bikeshare.Generate(n, 11)
	var b strings.Builder
	b.WriteString("station," + features + ",kind\n")
	for _, s := range stations {
		b.WriteString(s.ID)
		for _, v := range s.Features {
			b.WriteString("," + strconv.FormatFloat(v, 'g', -1, 64))
		}
		b.WriteString("," + strconv.Itoa(s.Kind) + "\n")
	}
	csvPath = filepath.Join(dir, "stations.csv")
	require.NoError(t, os.WriteFile(csvPath, []byte(b.String()), 0o644))
	pqPath = filepath.Join(dir, "stations.parquet")
	f, err := os.Create(pqPath)
	require.NoError(t, err)
	fields := []parquet.Field{{Name: "station", Kind: parquet.String}}
	for _, name := range bikeshare.Features() {
		fields = append(fields, parquet.Field{Name: name, Kind: parquet.Float64})
	}
	fields = append(fields, parquet.Field{Name: "kind", Kind: parquet.Int64})
	w, err := parquet.NewWriter(f, fields, &parquet.WriterOptions{RowGroupRows: 500})
	require.NoError(t, err)
	for _, s := range stations {
		row := []any{s.ID}
		for _, v := range s.Features {
			row = append(row, v)
		}
		require.NoError(t, w.Write(append(row, int64(s.Kind))...))
	}
	require.NoError(t, w.Close())
	require.NoError(t, f.Close())
	return csvPath, pqPath, stations
}

// readLabels reads a labels CSV.
func readLabels(t *testing.T, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	require.NoError(t, err)
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	require.NoError(t, err)
	return rows
}

func readModelFile(t *testing.T, path string) *kmeans.Model {
	t.Helper()
	b, err := os.ReadFile(path)
	require.NoError(t, err)
	var m kmeans.Model
	require.NoError(t, json.Unmarshal(b, &m))
	return &m
}

// TestClusterLabelProfile runs the three verbs end to end on a CSV and a
// Parquet file, in memory and streamed, and checks what each promises:
// the model document carries the feature names, the labels file has a
// header with a cluster column and one row per input row in input order
// (each row's label is the model's nearest center), and the profile
// covers every cluster.
func TestClusterLabelProfile(t *testing.T) {
	dir := t.TempDir()
	csvPath, pqPath, stations := stationFiles(t, dir, 1500)
	for _, tc := range []struct {
		name, in string
		extra    []string
		streamed bool
	}{
		{"csv in memory", csvPath, nil, false},
		{"parquet in memory", pqPath, nil, false},
		{"csv streamed exact", csvPath, []string{"-memory", "200KiB", "-method", "exact"}, true},
		{"parquet streamed mini-batch", pqPath, []string{"-memory", "200KiB", "-method", "minibatch", "-batch", "256"}, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			model := filepath.Join(dir, tc.name+".json")
			args := append([]string{"cluster", "-in", tc.in, "-columns", features, "-k", "5", "-seed", "3", "-scaler", "zscore", "-model", model}, tc.extra...)
			code, out, errs := batch(t, args...)
			require.Equal(t, exitOK, code, errs)
			assert.Contains(t, out, "clustered 1500 rows")
			assert.Contains(t, out, "into 5 clusters")
			assert.Contains(t, out, "model written to "+model)
			if tc.streamed {
				assert.Contains(t, out, "(streamed)")
				assert.Contains(t, errs, "pass done", "log lines when stderr is not a terminal")
			} else {
				assert.Contains(t, out, "in memory")
			}
			m := readModelFile(t, model)
			assert.Equal(t, bikeshare.Features(), m.Features())
			require.Equal(t, 5, m.K())

			for _, labels := range []string{filepath.Join(dir, tc.name+"-labels.csv"), filepath.Join(dir, tc.name+"-labels.parquet")} {
				code, out, errs = batch(t, "label", "-model", model, "-in", tc.in, "-out", labels, "-id", "station")
				require.Equal(t, exitOK, code, errs)
				assert.Contains(t, out, "labelled 1500 rows")
				if strings.HasSuffix(labels, ".csv") {
					rows := readLabels(t, labels)
					require.Equal(t, []string{"station", "cluster", "distance", "margin"}, rows[0])
					require.Len(t, rows, 1501)
					for i, s := range stations {
						want, err := m.Assign(s.Features)
						require.NoError(t, err)
						require.Equal(t, s.ID, rows[i+1][0])
						require.Equal(t, strconv.Itoa(want.Cluster), rows[i+1][1], "row %d", i)
						d, err := strconv.ParseFloat(rows[i+1][2], 64)
						require.NoError(t, err)
						require.Equal(t, want.Distance, d)
					}
				}
				code, out, errs = batch(t, "profile", "-model", model, "-in", tc.in, "-labels", labels)
				require.Equal(t, exitOK, code, errs)
				assert.Contains(t, out, "profile of 1500 labelled rows")
				for j := range 5 {
					assert.Contains(t, out, fmt.Sprintf("cluster %d · ", j))
				}
				assert.Contains(t, out, "trips_per_day")
			}
		})
	}
}

// TestClusterSweep asks for a k range: the sweep runs on a sample and its
// report and choice are printed.
func TestClusterSweep(t *testing.T) {
	dir := t.TempDir()
	csvPath, _, _ := stationFiles(t, dir, 600)
	model := filepath.Join(dir, "m.json")
	code, out, errs := batch(t, "cluster", "-in", csvPath, "-columns", features, "-k", "3..6", "-scaler", "zscore", "-model", model, "-sample", "400")
	require.Equal(t, exitOK, code, errs)
	assert.Contains(t, out, "sweep of k = 3..6 on a sample of 400 of 600 rows")
	assert.Contains(t, out, "recommended k =")
	assert.Contains(t, out, "clustering with k =")
	m := readModelFile(t, model)
	assert.Contains(t, out, fmt.Sprintf("clustering with k = %d", m.K()))
}

// TestBadFiles checks the promised errors: each names the file and the
// place, the exit code is non-zero and no model is written; with -skip
// the bad rows are counted.
func TestBadFiles(t *testing.T) {
	dir := t.TempDir()
	good := "a,b\n1,2\n2,1\n8,9\n9,8\n5,5\n"
	cases := []struct {
		name, doc string
		columns   string
		says      []string
		skipped   int // rows skipped with -skip; -1 when -skip cannot help
	}{
		{"non-numeric", "a,b\n1,2\n2,1\n8,oops\n9,8\n5,5\n", "a,b", []string{"line 4", `column "b"`, `"oops"`, "not a number"}, 1},
		{"missing column", good, "a,c", []string{`no column "c"`}, -1},
		{"short row", "a,b\n1,2\n2\n8,9\n9,8\n5,5\n", "a,b", []string{"line 3", `column "b"`, "value missing"}, 1},
		{"NaN", "a,b\n1,2\n2,1\nNaN,9\n9,8\n5,5\n", "a,b", []string{"line 4", `column "a"`, "NaN"}, 1},
		{"empty file", "", "a,b", []string{"empty file"}, -1},
		{"header only", "a,b\n", "a,b", []string{"no data rows"}, -1},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			in := filepath.Join(dir, strings.ReplaceAll(tc.name, " ", "-")+".csv")
			require.NoError(t, os.WriteFile(in, []byte(tc.doc), 0o644))
			for _, mem := range []string{"64MiB", "1KiB"} { // in memory and streamed
				model := filepath.Join(dir, tc.name+mem+".json")
				code, _, errs := batch(t, "cluster", "-in", in, "-columns", tc.columns, "-k", "2", "-model", model, "-memory", mem)
				require.Equal(t, exitError, code, errs)
				assert.Contains(t, errs, in)
				for _, s := range tc.says {
					assert.Contains(t, errs, s)
				}
				assert.NoFileExists(t, model, "a failed run writes no model")
				entries, err := os.ReadDir(dir)
				require.NoError(t, err)
				for _, e := range entries {
					assert.False(t, strings.HasSuffix(e.Name(), ".tmp"), "temporary file %s left behind", e.Name())
				}
				if tc.skipped < 0 {
					continue
				}
				code, out, errs := batch(t, "cluster", "-in", in, "-columns", tc.columns, "-k", "2", "-model", model, "-memory", mem, "-skip")
				require.Equal(t, exitOK, code, errs)
				assert.Contains(t, out, fmt.Sprintf("bad rows skipped: %d", tc.skipped))
				assert.Contains(t, out, "clustered 4 rows")
				assert.Contains(t, errs, "bad row skipped", "skipped rows are logged")
				assert.FileExists(t, model)
				// Labels keep one row per input row; the bad one is -1.
				labels := filepath.Join(dir, tc.name+mem+".csv")
				code, out, errs = batch(t, "label", "-model", model, "-in", in, "-out", labels, "-skip")
				require.Equal(t, exitOK, code, errs)
				assert.Contains(t, out, "1 bad rows labelled -1")
				rows := readLabels(t, labels)
				require.Len(t, rows, 6)
				n := 0
				for _, r := range rows[1:] {
					if r[0] == "-1" {
						n++
						assert.Equal(t, []string{"-1", "", ""}, r)
					}
				}
				assert.Equal(t, 1, n)
				code, _, errs = batch(t, "label", "-model", model, "-in", in, "-out", labels+"2.csv")
				assert.Equal(t, exitError, code)
				assert.Contains(t, errs, tc.says[0])
				assert.NoFileExists(t, labels+"2.csv")
			}
		})
	}
}

// TestInterruptWritesNothing cancels a streamed run (as Ctrl-C does):
// exit code 130 and no model file.
func TestInterruptWritesNothing(t *testing.T) {
	dir := t.TempDir()
	csvPath, _, _ := stationFiles(t, dir, 3000)
	model := filepath.Join(dir, "m.json")
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	code, _, errs := batchCtx(ctx, "cluster", "-in", csvPath, "-columns", features, "-k", "4", "-model", model, "-memory", "100KiB")
	assert.Equal(t, exitInterrupt, code, errs)
	assert.Contains(t, errs, "interrupted; nothing was written")
	assert.NoFileExists(t, model)
}

func TestUsage(t *testing.T) {
	for _, args := range [][]string{{}, {"fit"}, {"cluster"}, {"cluster", "-in", "x.csv", "-k", "2"}, {"cluster", "-in", "x.csv", "-model", "m", "-k", "0"},
		{"cluster", "-in", "x.csv", "-model", "m", "-k", "2", "-memory", "12parsecs"}, {"cluster", "-in", "x.csv", "-model", "m", "-k", "2", "-method", "magic"},
		{"label", "-model", "m"}, {"cluster", "-in", "x.xlsx", "-model", "m", "-k", "2"}} {
		code, _, _ := batch(t, args...)
		assert.Equal(t, exitUsage, code, args)
	}
	code, _, errs := batch(t, "cluster", "-h")
	assert.Equal(t, exitOK, code)
	assert.Contains(t, errs, "-memory")
}

func TestParseSize(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want int64
	}{{"16MiB", 16 << 20}, {"2GiB", 2 << 30}, {"512KiB", 512 << 10}, {"1GB", 1e9}, {"1000", 1000}, {"1.5GiB", 3 << 29}, {"64kib", 64 << 10}, {"3 MB", 3e6}} {
		got, err := parseSize(tc.in)
		require.NoError(t, err, tc.in)
		assert.Equal(t, tc.want, got, tc.in)
	}
	for _, bad := range []string{"", "MiB", "12parsecs", "-1MiB", "0", "1e30TiB"} {
		_, err := parseSize(bad)
		assert.Error(t, err, bad)
	}
	var k kRange
	require.NoError(t, k.Set("2..8"))
	assert.Equal(t, kRange{2, 8}, k)
	assert.Error(t, k.Set("8..2"))
	assert.Error(t, k.Set("0"))
}

// TestBudget checks the memory plan: more memory, more rows in memory and
// larger blocks, within the bounds.
func TestBudget(t *testing.T) {
	small, large := budgetFor(16<<20, 8, 5), budgetFor(2<<30, 8, 5)
	assert.Less(t, small.memoryRows, large.memoryRows)
	assert.LessOrEqual(t, small.blockRows, large.blockRows)
	assert.GreaterOrEqual(t, small.blockRows, 256)
	assert.LessOrEqual(t, large.blockRows, 1<<16)
	// The in-memory plan stays within the budget: rows·8·(2d+8)·2 ≤ mem
	// less the command's own needs.
	assert.LessOrEqual(t, large.memoryRows*8*(2*8+8)*2, int64(2<<30-fixedRSS))
}
