package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/reference"
	"github.com/centroidlab/centroid/validate"
)

// datasetFile returns the path of a shared reference dataset, skipping the
// test when the folder is absent.
func datasetFile(t *testing.T, name string) string {
	t.Helper()
	reference.LoadOrSkip(t, name) // skips with a clear message when absent
	return filepath.Join(reference.Dir(), name+".csv")
}

// TestScoreIris clusters Fisher's Iris (Fisher 1936) with k = 3, labels it
// and scores the labels against the species: the JSON report has the
// promised keys, and k-means on unscaled Iris gives ARI ≈ 0.730 (from
// memory; TestReportOnIris in package validate checks it by brute force).
func TestScoreIris(t *testing.T) {
	iris := datasetFile(t, "iris")
	dir := t.TempDir()
	model, labels := filepath.Join(dir, "m.json"), filepath.Join(dir, "labels.csv")
	cols := "sepal_length,sepal_width,petal_length,petal_width"
	code, _, errs := batch(t, "cluster", "-in", iris, "-columns", cols, "-k", "3", "-model", model)
	require.Equal(t, exitOK, code, errs)
	code, _, errs = batch(t, "label", "-model", model, "-in", iris, "-out", labels)
	require.Equal(t, exitOK, code, errs)

	code, out, errs := batch(t, "score", "-in", iris, "-truth", "label", "-labels", labels, "-json")
	require.Equal(t, exitOK, code, errs)
	var keys map[string]any
	require.NoError(t, json.Unmarshal([]byte(out), &keys))
	for _, k := range []string{"ari", "nmi", "ami", "purity", "v_measure", "fowlkes_mallows", "version"} {
		assert.Contains(t, keys, k)
	}
	r, err := validate.DecodeReport([]byte(out))
	require.NoError(t, err)
	assert.InDelta(t, 0.730, r.ARI, 0.001) // (from memory)
	assert.Equal(t, 150, r.Rows)

	// Thresholds fail and pass at the right values.
	for _, tc := range []struct {
		flags []string
		code  int
	}{
		{[]string{"-min-ari", "0.73"}, exitOK},
		{[]string{"-min-ari", "0.731"}, exitThreshold},
		{[]string{"-min-nmi", "0.75", "-min-purity", "0.89"}, exitOK},
		{[]string{"-min-nmi", "0.75", "-min-purity", "0.9"}, exitThreshold},
		{[]string{"-min-ami", "0.76"}, exitThreshold},
		{[]string{"-min-v", "0.75", "-min-fm", "0.8"}, exitOK},
	} {
		code, out, errs := batch(t, append([]string{"score", "-in", iris, "-truth", "label", "-labels", labels}, tc.flags...)...)
		assert.Equal(t, tc.code, code, "%v: %s", tc.flags, errs)
		assert.Contains(t, out, "adjusted Rand (ARI)", "the text report is printed either way")
		if tc.code == exitThreshold {
			assert.Contains(t, errs, "threshold not met")
			assert.Contains(t, errs, tc.flags[len(tc.flags)-2])
		}
	}
}

// TestScoreS1CentroidIndex scores S1 (Fränti & Virmajoki 2006) against its
// published centroids (s1-cb): k = 15 finds them one to one (CI 0, as
// Fränti & Sieranoja 2018 report for k-means with repeats, from memory);
// k = 14 must miss at least one, so -max-ci 0 fails there.
func TestScoreS1CentroidIndex(t *testing.T) {
	s1, cb := datasetFile(t, "s1"), datasetFile(t, "s1-cb")
	dir := t.TempDir()
	for _, tc := range []struct {
		k    string
		code int
	}{{"15", exitOK}, {"14", exitThreshold}} {
		model, labels := filepath.Join(dir, tc.k+".json"), filepath.Join(dir, tc.k+".parquet")
		code, _, errs := batch(t, "cluster", "-in", s1, "-columns", "x,y", "-k", tc.k, "-seed", "1", "-model", model)
		require.Equal(t, exitOK, code, errs)
		code, _, errs = batch(t, "label", "-model", model, "-in", s1, "-out", labels)
		require.Equal(t, exitOK, code, errs)
		code, out, errs := batch(t, "score", "-in", s1, "-truth", "label", "-labels", labels, "-centers", cb, "-model", model, "-max-ci", "0", "-min-ari", "0.8")
		assert.Equal(t, tc.code, code, "k = %s: %s", tc.k, errs)
		assert.Contains(t, out, "centroid index (CI)")
	}
}

// TestScoreJoins reads the found clusters from the same file, from a
// labels file by row order and by an id column in another order.
func TestScoreJoins(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "in.csv")
	require.NoError(t, os.WriteFile(in, []byte("id,kind,x,found\nA,hub,1,7\nB,hub,2,7\nC,park,9,3\nD,park,8,3\nE,park,7,7\n"), 0o644))
	labels := filepath.Join(dir, "labels.csv")
	require.NoError(t, os.WriteFile(labels, []byte("id,cluster\nE,7\nC,3\nA,7\nD,3\nB,7\n"), 0o644))
	want, err := validate.Compare([]int{0, 0, 1, 1, 1}, []int{7, 7, 3, 3, 7}, nil, nil)
	require.NoError(t, err)
	for _, args := range [][]string{
		{"-found", "found"},
		{"-labels", labels, "-id", "id"},
	} {
		code, out, errs := batch(t, append([]string{"score", "-in", in, "-truth", "kind", "-json"}, args...)...)
		require.Equal(t, exitOK, code, errs)
		got, err := validate.DecodeReport([]byte(out))
		require.NoError(t, err)
		assert.Equal(t, want, got, args)
	}
	// By row order the labels above are shuffled: a different score.
	code, out, errs := batch(t, "score", "-in", in, "-truth", "kind", "-labels", labels, "-json")
	require.Equal(t, exitOK, code, errs)
	got, err := validate.DecodeReport([]byte(out))
	require.NoError(t, err)
	assert.NotEqual(t, want.ARI, got.ARI)
}

// TestScoreBadFiles checks that bad inputs name the row and the column.
func TestScoreBadFiles(t *testing.T) {
	dir := t.TempDir()
	write := func(name, doc string) string {
		p := filepath.Join(dir, name)
		require.NoError(t, os.WriteFile(p, []byte(doc), 0o644))
		return p
	}
	in := write("in.csv", "kind,found\nhub,1\npark,x2\n")
	code, _, errs := batch(t, "score", "-in", in, "-truth", "kind", "-found", "found")
	assert.Equal(t, exitError, code)
	assert.Contains(t, errs, "row 1")
	assert.Contains(t, errs, `column "found"`)
	assert.Contains(t, errs, `"x2"`)

	code, _, errs = batch(t, "score", "-in", write("e.csv", "kind,found\nhub,1\n,2\n"), "-truth", "kind", "-found", "found")
	assert.Equal(t, exitError, code)
	assert.Contains(t, errs, `row 1, column "kind"`)

	code, _, errs = batch(t, "score", "-in", in, "-truth", "species", "-found", "found")
	assert.Equal(t, exitError, code)
	assert.Contains(t, errs, `no column "species"`)

	short := write("short.csv", "cluster\n1\n")
	code, _, errs = batch(t, "score", "-in", in, "-truth", "kind", "-labels", short)
	assert.Equal(t, exitError, code)
	assert.Contains(t, errs, "has 2 rows but")

	code, _, _ = batch(t, "score", "-in", in, "-truth", "kind", "-max-ci", "0")
	assert.Equal(t, exitUsage, code)
	code, _, _ = batch(t, "score", "-in", in, "-truth", "kind", "-min-ari", "high")
	assert.Equal(t, exitUsage, code)
	assert.False(t, strings.Contains(errs, "panic"))
}
