package stream_test

// This file is meant to be copied into a team's own CI: it clusters a
// published benchmark with the team's settings and asserts that the
// segmentation still finds the benchmark's known structure. The files are
// read from $CENTROID_DATASETS (see the datasets folder's PROVENANCE.md);
// the test skips when they are absent.

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/reference"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/validate"
)

// TestSegmentationStillFindsS1 clusters S1 (P. Fränti, O. Virmajoki,
// "Iterative shrinking method for clustering problems", Pattern
// Recognition 39(5), 2006; 5000 points, 15 Gaussian clusters) and checks it
// against the published labels and centroids: CI = 0 (every published
// centroid found, Fränti, Rezaei & Zhao 2014) and ARI ≥ 0.95, the bars a
// team would set for its own pipeline (common practice: CI 0 is the usual
// success criterion on the S sets).
func TestSegmentationStillFindsS1(t *testing.T) {
	dir := reference.Dir()
	path := filepath.Join(dir, "s1.csv")
	if _, err := os.Stat(path); err != nil {
		t.Skipf("skipping: reference dataset S1 not available (%v); set %s", err, reference.Env)
	}
	src, err := stream.OpenCSV(path, &stream.Options{Columns: []string{"x", "y"}, Keep: []string{"label"}})
	require.NoError(t, err)
	defer src.Close()
	tab, err := stream.ReadTable(src)
	require.NoError(t, err)
	cb, err := stream.OpenCSV(filepath.Join(dir, "s1-cb.csv"), nil)
	require.NoError(t, err)
	defer cb.Close()
	tab.Centers, err = stream.ReadCenters(cb)
	require.NoError(t, err)

	// The team's own clustering settings go here.
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: tab.X, K: 15, Features: tab.Features}, &kmeans.Settings{Seed: 1}, nil)
	require.NoError(t, err)

	report, err := validate.Compare(tab.Truth, res.Assignments, tab.Centers, res.Model.Centers())
	require.NoError(t, err)
	t.Logf("S1: ARI %.4f, NMI %.4f, AMI %.4f, purity %.4f, CI %d", report.ARI, report.NMI, report.AMI, report.Purity, *report.CentroidIndex)
	require.Equal(t, 0, *report.CentroidIndex, "a published centroid was missed or doubled")
	require.GreaterOrEqual(t, report.ARI, 0.95)
}
