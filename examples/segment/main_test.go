package main

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/stretchr/testify/require"
)

// TestRun runs the main job on a small network and checks the report has
// every section, that the saved model reloads, and that the run is
// deterministic.
func TestRun(t *testing.T) {
	dir := t.TempDir()
	var out bytes.Buffer
	o := options{stations: 120, seed: 7, kmin: 2, kmax: 5, out: dir}
	require.NoError(t, run(context.Background(), &out, o))
	report := out.String()
	for _, want := range []string{"k sweep", "chosen k =", "cluster profiles", "what sets each cluster apart", "model saved to", "labelling proposed stations"} {
		require.Contains(t, report, want)
	}
	b, err := os.ReadFile(filepath.Join(dir, "model.json"))
	require.NoError(t, err)
	var m kmeans.Model
	require.NoError(t, json.Unmarshal(b, &m))
	require.Equal(t, 6, m.Dim())
	require.Equal(t, 4, strings.Count(report, "→ cluster"))

	var again bytes.Buffer
	require.NoError(t, run(context.Background(), &again, o))
	require.Equal(t, report, again.String())
}

func TestRunBadOptions(t *testing.T) {
	var out bytes.Buffer
	require.Error(t, run(context.Background(), &out, options{stations: 50, kmin: 1, kmax: 3, out: t.TempDir()}))
	require.Error(t, run(context.Background(), &out, options{stations: 50, kmin: 4, kmax: 3, out: t.TempDir()}))
}
