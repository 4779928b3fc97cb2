package choosek

import (
	"context"
	"fmt"
	"os"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/reference"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
)

// referenceTableEnv turns on TestReferenceTable, which takes minutes.
const referenceTableEnv = "CENTROID_REFERENCE_TABLE"

// TestReferenceTable sweeps the shared reference data sets with Sweep's
// default options and logs, per set, the published number of clusters,
// what each criterion prefers and the combined pick: the table in the
// package documentation. The true numbers of clusters are the publishers'
// (see /work/shared/datasets/PROVENANCE.md): S1, S2 15 (Fränti & Virmajoki
// 2006), A1 20 (Kärkkäinen & Fränti 2002), Unbalance 8 (Rezaei & Fränti
// 2016), iris, wine and seeds 3 classes (Fisher 1936; UCI). Classes are not
// clusters: the test asserts only the synthetic sets of separated Gaussian
// clusters (S1, S2, A1, Unbalance). It runs when CENTROID_REFERENCE_TABLE is
// set.
func TestReferenceTable(t *testing.T) {
	if os.Getenv(referenceTableEnv) == "" {
		t.Skipf("set %s=1 to sweep the reference sets (minutes)", referenceTableEnv)
	}
	sets := []struct {
		name   string
		truth  int
		kmax   int
		zscore bool
		assert bool
	}{
		{"s1", 15, 20, false, true},
		{"s2", 15, 20, false, true},
		{"a1", 20, 30, false, true},
		{"unbalance", 8, 20, false, true},
		{"iris", 3, 10, true, false},
		{"wine", 3, 10, true, false},
		{"seeds", 3, 10, true, false},
	}
	var table strings.Builder
	fmt.Fprintf(&table, "set        true k  silhouette  Davies–Bouldin  Calinski–Harabasz  Dunn  knee  gap  combined pick\n")
	for _, s := range sets {
		set := reference.LoadOrSkip(t, s.name)
		p := kmeans.Problem{Data: set.X}
		if s.zscore {
			p.Scaler = &scale.ZScore{}
		}
		r, err := Sweep(context.Background(), p, sweepRange(1, s.kmax), &kmeans.Settings{Seed: 1}, nil, nil)
		require.NoError(t, err, s.name)
		var b strings.Builder
		r.WriteTo(&b)
		t.Logf("%s:\n%s", s.name, b.String())
		rec := r.Recommendation
		pref := func(c Criterion) string {
			if k := rec.Preferences[c].K; k != 0 {
				return fmt.Sprint(k)
			}
			return "–"
		}
		pick := fmt.Sprintf("%d (%.2f, %s)", rec.K, rec.Combined, map[bool]string{true: "clear", false: "weak"}[rec.Clear])
		fmt.Fprintf(&table, "%-10s %6d  %10s  %14s  %17s  %4s  %4s  %3s  %s\n", s.name, s.truth,
			pref(BySilhouette), pref(ByDaviesBouldin), pref(ByCalinskiHarabasz), pref(ByDunn), pref(ByKnee), pref(ByGap), pick)
		if s.assert {
			assert.Equal(t, s.truth, rec.K, "%s: published number of clusters", s.name)
		}
	}
	t.Logf("reference table:\n%s", table.String())
}
