package main

import (
	"bytes"
	"context"
	"encoding/json"
	"image/png"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
)

// small is a quick network for tests.
func small(dir string) options {
	o := defaults()
	o.stations, o.seed, o.kmax, o.refs, o.resamples, o.out = 120, 7, 5, 3, 3, dir
	return o
}

// TestRun runs the main job on a small network and checks the report has
// every section, that the saved model reloads, that the plots are there
// and decode as images of the default size, and that the run is
// deterministic, plots included.
func TestRun(t *testing.T) {
	dir := t.TempDir()
	var out bytes.Buffer
	o := small(dir)
	require.NoError(t, run(context.Background(), &out, o))
	report := out.String()
	for _, want := range []string{
		"k sweep", "recommended k =", "silhouette", "Davies–Bouldin", "Calinski–Harabasz", "Dunn", "knee", "gap", "mean ARI",
		"chosen k =", "(the recommendation)", "adjusted Rand index", "cluster profiles", "median",
		"what sets each cluster apart", "plots written to " + dir, "model saved to", "labelling proposed stations",
	} {
		require.Contains(t, report, want)
	}
	b, err := os.ReadFile(filepath.Join(dir, "model.json"))
	require.NoError(t, err)
	var m kmeans.Model
	require.NoError(t, json.Unmarshal(b, &m))
	require.Equal(t, 6, m.Dim())
	// The saved model carries its schema, so the service can serve it.
	require.Equal(t, bikeshare.Features(), m.Features())
	require.Equal(t, 4, strings.Count(report, "→ cluster"))

	plots := map[string][]byte{}
	for _, name := range []string{"indices.png", "silhouette.png", "pca.png"} {
		path := filepath.Join(dir, name)
		require.Contains(t, report, path)
		data, err := os.ReadFile(path)
		require.NoError(t, err)
		img, err := png.Decode(bytes.NewReader(data))
		require.NoError(t, err, name)
		assert.Greater(t, img.Bounds().Dx(), 500, name)
		plots[name] = data
	}

	var again bytes.Buffer
	require.NoError(t, run(context.Background(), &again, o))
	require.Equal(t, report, again.String())
	for name, data := range plots {
		second, err := os.ReadFile(filepath.Join(dir, name))
		require.NoError(t, err)
		assert.Equal(t, data, second, "%s differs between runs", name)
	}
}

// TestRunDefaults runs exactly what `go run ./examples/segment` runs, in a
// temporary folder.
func TestRunDefaults(t *testing.T) {
	if testing.Short() || raceOn {
		t.Skip("the default network takes a second (ten under the race detector); TestRun covers the same code")
	}
	o := defaults()
	assert.Equal(t, filepath.Join("out", "segment"), o.out)
	o.out = t.TempDir()
	var out bytes.Buffer
	require.NoError(t, run(context.Background(), &out, o))
	assert.Contains(t, out.String(), "300 docking stations")
	assert.Contains(t, out.String(), "gap statistic with 10 reference sets")
}

func TestRunOptions(t *testing.T) {
	dir := t.TempDir()
	o := small(dir)
	o.k, o.format, o.refs, o.resamples = 4, "svg", 0, 0
	var out bytes.Buffer
	require.NoError(t, run(context.Background(), &out, o))
	report := out.String()
	assert.Contains(t, report, "chosen k = 4 (-k)")
	assert.Contains(t, report, "stability not measured")
	assert.Contains(t, report, "gap statistic skipped")
	for _, name := range []string{"indices.svg", "silhouette.svg", "pca.svg"} {
		data, err := os.ReadFile(filepath.Join(dir, name))
		require.NoError(t, err)
		assert.True(t, bytes.Contains(data, []byte("<svg")), name)
	}
	b, err := os.ReadFile(filepath.Join(dir, "model.json"))
	require.NoError(t, err)
	var m kmeans.Model
	require.NoError(t, json.Unmarshal(b, &m))
	assert.Equal(t, 4, m.K())
}

func TestRunBadOptions(t *testing.T) {
	for _, change := range []func(*options){
		func(o *options) { o.kmin = 0 },
		func(o *options) { o.kmin, o.kmax = 4, 3 },
		func(o *options) { o.k = 9 },
		func(o *options) { o.format = "gif" },
		func(o *options) { o.stations = 1 },
		func(o *options) { o.refs = 1 },
		func(o *options) { o.resamples = -2 },
	} {
		o := small(t.TempDir())
		o.stations = 50
		change(&o)
		var out bytes.Buffer
		require.Error(t, run(context.Background(), &out, o))
	}
}
