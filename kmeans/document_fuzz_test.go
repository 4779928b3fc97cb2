package kmeans

import (
	"bytes"
	"encoding/json"
	"errors"
	"os"
	"testing"
	"time"

	"github.com/centroidlab/centroid/distance"
	"github.com/stretchr/testify/require"
)

// fuzzLimits keep fuzzed documents small.
var fuzzLimits = &DecodeLimits{MaxBytes: 1 << 20, MaxValues: 1 << 14}

// smallV2 returns a version 2 document of a 3-cluster model with every
// optional part present.
func smallV2(tb testing.TB) []byte {
	m := newModel([]float64{0, 0, 4, 0, 0, 3}, 3, 2, distance.Euclidean{}, nil)
	m.training = &Training{Rows: 6, Clusters: []ClusterSummary{
		{Size: 2, Weight: 2, Cost: 1, Distances: Quantiles{P50: 0.5, P90: 0.7, P99: 0.7, Max: 0.7}},
		{Size: 3, Weight: 3, Cost: 2, Distances: Quantiles{P50: 0.6, P90: 0.9, P99: 1, Max: 1}},
		{Size: 1, Weight: 1, Cost: 0, Distances: Quantiles{}},
	}}
	m, err := m.WithFeatures([]string{"x", "y"})
	require.NoError(tb, err)
	b, err := json.Marshal(m.WithCreated(time.Date(2025, 1, 2, 3, 4, 5, 6, time.UTC)))
	require.NoError(tb, err)
	return b
}

// FuzzReadModel checks that the decoder never panics, that every refusal
// wraps ErrModel, and that whatever it accepts re-encodes to a canonical
// document that decodes to the same bytes and answers like a brute-force
// scan. Seeds: f.Add below and testdata/fuzz/FuzzReadModel.
func FuzzReadModel(f *testing.F) {
	v1, err := os.ReadFile("testdata/model-v1.json")
	require.NoError(f, err)
	f.Add(v1)
	f.Add(smallV2(f))
	f.Add([]byte(`{"format":"centroid/kmeans-model","version":1,"metric":"cosine","k":2,"dim":2,"centers":[[1,0],[0,1]],"scaler":{"kind":"unitlength","version":1,"dim":2}}`))
	f.Add([]byte(`{"format":"centroid/kmeans-model","version":1,"metric":"manhattan","k":1,"dim":3,"centers":[[1,2,3]],"scaler":{"kind":"minmax","version":1,"dim":3,"offset":[0,0,0],"divisor":[1,2,3]}}`))
	f.Add([]byte(`{"format":"centroid/kmeans-model","version":2}`))
	f.Add([]byte(`null`))
	f.Fuzz(func(t *testing.T, doc []byte) {
		m, err := ReadModel(bytes.NewReader(doc), fuzzLimits)
		if err != nil {
			require.ErrorIs(t, err, ErrModel)
			return
		}
		out, err := json.Marshal(m)
		require.NoError(t, err)
		m2, err := ReadModel(bytes.NewReader(out), fuzzLimits)
		require.NoError(t, err, "%s", out)
		out2, err := json.Marshal(m2)
		require.NoError(t, err)
		require.Equal(t, string(out), string(out2))

		// Label each center's raw form and the origin.
		rows := [][]float64{make([]float64, m.Dim())}
		c := m.Centers()
		for j := range m.K() {
			rows = append(rows, c.RawRowView(j))
		}
		for _, x := range rows {
			got, err := m.Assign(x)
			if err != nil {
				if !errors.Is(err, ErrMetric) && !errors.Is(err, ErrNotFinite) {
					t.Fatalf("Assign(%v): %v", x, err)
				}
				continue
			}
			want := scanAssign(m.metric, m.scaler, m.centers, m.k, x)
			require.Equal(t, want, got, "row %v", x)
		}
	})
}
