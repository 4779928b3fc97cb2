package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/log"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/kmeans"
)

func TestMain(m *testing.M) {
	beam.Init()
	log.SetupLogging("warn", "text")
	os.Exit(m.Run())
}

// dataset returns the path of a shared reference dataset, or skips.
func dataset(t *testing.T, name string) string {
	t.Helper()
	dir := os.Getenv("CENTROID_DATASETS")
	if dir == "" {
		dir = filepath.Join("..", "..", "..", "shared", "datasets")
	}
	p := filepath.Join(dir, name+".csv")
	if _, err := os.Stat(p); err != nil {
		t.Skipf("skipping: reference dataset %s not available (set CENTROID_DATASETS): %v", p, err)
	}
	return p
}

func parse(t *testing.T, args ...string) *options {
	t.Helper()
	var o options
	fs := flag.NewFlagSet("beam", flag.ContinueOnError)
	o.register(fs)
	require.NoError(t, fs.Parse(args))
	return &o
}

// TestRunS1 clusters the S1 set (Fränti & Virmajoki 2006) on prism, the
// model decodes with kmeans.ReadModel and names its features, the cost is
// near the S1 optimum of about 8.92·10¹² (Fränti & Sieranoja 2018, from
// memory; k-means‖ with Lloyd may stop in a local optimum, hence 5%), and
// the labels file has one line per row, named by the label column.
func TestRunS1(t *testing.T) {
	in := dataset(t, "s1")
	dir := t.TempDir()
	model, labels := filepath.Join(dir, "model.json"), filepath.Join(dir, "labels.csv")
	var out bytes.Buffer
	o := parse(t, "-in", in, "-columns", "x,y", "-k", "15", "-seed", "3", "-model", model, "-labels-out", labels, "-label-by", "label")
	require.NoError(t, run(context.Background(), o, &out))
	assert.Contains(t, out.String(), "5000 rows from 1 file(s)")

	f, err := os.Open(model)
	require.NoError(t, err)
	defer f.Close()
	m, err := kmeans.ReadModel(f, nil)
	require.NoError(t, err)
	assert.Equal(t, []string{"x", "y"}, m.Features())
	assert.Equal(t, 15, m.K())

	lf, err := os.Open(labels)
	require.NoError(t, err)
	defer lf.Close()
	recs, err := csv.NewReader(lf).ReadAll()
	require.NoError(t, err)
	require.Len(t, recs, 5001)
	assert.Equal(t, []string{"label", "cluster", "distance"}, recs[0])

	var cost float64
	x := readXY(t, in)
	for i, r := range recs[1:] {
		_, d, err := m.Nearest(x[i])
		require.NoError(t, err)
		cost += d * d
		assert.NotEmpty(t, r[1])
	}
	assert.InEpsilon(t, 8.92e12, cost, 0.05)
}

func readXY(t *testing.T, path string) [][]float64 {
	t.Helper()
	b, err := os.ReadFile(path)
	require.NoError(t, err)
	var x [][]float64
	for _, line := range strings.Split(strings.TrimSpace(string(b)), "\n")[1:] {
		var v [3]float64
		for i, f := range strings.Split(line, ",") {
			v[i] = mustFloat(t, f)
		}
		x = append(x, v[:2])
	}
	return x
}

func mustFloat(t *testing.T, s string) float64 {
	t.Helper()
	var v float64
	_, err := fmt.Sscan(s, &v)
	require.NoError(t, err)
	return v
}

// TestRunUnrolledCosine runs the one-pipeline iteration with cosine on iris
// (Fisher 1936).
func TestRunUnrolledCosine(t *testing.T) {
	in := dataset(t, "iris")
	model := filepath.Join(t.TempDir(), "model.json")
	var out bytes.Buffer
	o := parse(t, "-in", in, "-columns", "sepal_length,sepal_width,petal_length,petal_width", "-k", "3", "-metric", "cosine", "-iterate", "unrolled", "-passes", "15", "-model", model)
	require.NoError(t, run(context.Background(), o, &out))
	assert.Contains(t, out.String(), "1 pipelines (unrolled)")
	b, err := os.ReadFile(model)
	require.NoError(t, err)
	assert.Contains(t, string(b), `"metric":"cosine"`)
}

// TestRunBadFlags: missing or wrong flags are refused with errors naming them.
func TestRunBadFlags(t *testing.T) {
	in := dataset(t, "iris")
	for _, tc := range []struct {
		args []string
		want error
		text string
	}{
		{[]string{"-k", "3", "-model", "m.json"}, errUsage, "-in"},
		{[]string{"-in", in, "-k", "3", "-model", "m.json", "-metric", "manhattan"}, kmeans.ErrMetric, "median"},
		{[]string{"-in", in, "-k", "3", "-model", "m.json", "-iterate", "sometimes"}, errUsage, "driven"},
		{[]string{"-in", in, "-k", "3", "-model", "m.json", "-columns", "petal_area"}, nil, "petal_area"},
		{[]string{"-in", in, "-k", "3", "-model", "m.json", "-iterate", "unrolled"}, kmeans.ErrSettings, "MaxPasses"},
	} {
		err := run(context.Background(), parse(t, tc.args...), &bytes.Buffer{})
		require.Error(t, err, tc.args)
		if tc.want != nil {
			assert.ErrorIs(t, err, tc.want, tc.args)
		}
		assert.Contains(t, err.Error(), tc.text, tc.args)
	}
}
