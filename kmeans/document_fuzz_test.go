package kmeans

import (
	"bytes"
	"encoding/json"
	"errors"
	"os"
	"runtime/metrics"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/distance"
)

// fuzzLimits keep fuzzed documents small.
var fuzzLimits = &DecodeLimits{MaxBytes: 1 << 20, MaxValues: 1 << 14}

// Budgets for reading one fuzzed document with ReadModel. They catch a
// decoder whose cost grows faster than the document: memory beyond a
// small multiple of its size, time beyond linear. The allowances cover a
// model of up to fuzzLimits.MaxValues values with its serving index
// (k² distances for k ≤ 256), and slow machines under the race detector.
const (
	fuzzAllocPerByte = 8       // bytes allocated per document byte
	fuzzAllocFixed   = 4 << 20 // bytes allocated for any document
	fuzzTimePerByte  = 2 * time.Microsecond
	fuzzTimeFixed    = time.Second
)

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

// heapAllocated returns the bytes the program has allocated on the heap
// so far. It lags by up to a span per size class, which fuzzAllocFixed
// covers; unlike runtime.ReadMemStats it does not stop the world.
func heapAllocated() uint64 {
	s := []metrics.Sample{{Name: "/gc/heap/allocs:bytes"}}
	metrics.Read(s)
	return s[0].Value.Uint64()
}

// readBudgeted reads doc with ReadModel and fails t if that costs more
// than the fuzz budgets.
func readBudgeted(t *testing.T, doc []byte) (*Model, error) {
	before := heapAllocated()
	start := time.Now()
	m, err := ReadModel(bytes.NewReader(doc), fuzzLimits)
	took := time.Since(start)
	alloc := heapAllocated() - before
	if max := uint64(fuzzAllocFixed + fuzzAllocPerByte*len(doc)); alloc > max {
		t.Fatalf("reading %d bytes allocated %d bytes, budget %d", len(doc), alloc, max)
	}
	if max := fuzzTimeFixed + time.Duration(len(doc))*fuzzTimePerByte; took > max {
		t.Fatalf("reading %d bytes took %v, budget %v", len(doc), took, max)
	}
	return m, err
}

// resign returns doc with the checksum of its content, if everything but
// the checksum holds in a version 2 document, and nil otherwise. It
// rewrites the document through encoding/json (members sorted, white space
// dropped), which must not change its content.
func resign(t *testing.T, doc []byte) []byte {
	c, err := readDocument(doc, fuzzLimits.resolved())
	if err != nil || c.version != ModelVersion {
		return nil
	}
	sum, err := c.checksum()
	require.NoError(t, err)
	var members map[string]json.RawMessage
	require.NoError(t, json.Unmarshal(doc, &members), "encoding/json reads what the decoder read")
	members["checksum"], err = json.Marshal(sum)
	require.NoError(t, err)
	out, err := json.Marshal(members)
	require.NoError(t, err)
	return out
}

// FuzzReadModel checks that the decoder never panics, stays within the
// memory and time budgets, and that every refusal wraps ErrModel. A
// mutated document whose content passes every check but the checksum is
// re-signed (its checksum replaced by its content's) and must then be
// accepted, so that mutations reach the checks of accepted documents and
// not only the checksum: whatever is accepted is valid JSON, decodes the
// same through json.Unmarshal, re-encodes to a canonical document that
// decodes to the same bytes, and answers like a brute-force scan. Seeds:
// f.Add below and testdata/fuzz/FuzzReadModel (hostile shapes among them).
func FuzzReadModel(f *testing.F) {
	v1, err := os.ReadFile("testdata/model-v1.json")
	require.NoError(f, err)
	f.Add(v1)
	for _, name := range []string{"testdata/model-v2.json", "testdata/model-v2-manhattan-robust.json"} {
		v2, err := os.ReadFile(name)
		require.NoError(f, err)
		f.Add(v2)
	}
	f.Add(smallV2(f))
	f.Add([]byte(`{"format":"centroid/kmeans-model","version":1,"metric":"cosine","k":2,"dim":2,"centers":[[1,0],[0,1]],"scaler":{"kind":"unitlength","version":1,"dim":2}}`))
	f.Add([]byte(`{"format":"centroid/kmeans-model","version":1,"metric":"manhattan","k":1,"dim":3,"centers":[[1,2,3]],"scaler":{"kind":"minmax","version":1,"dim":3,"offset":[0,0,0],"divisor":[1,2,3]}}`))
	f.Add([]byte(`{"centers":[[1,2],[3,4]],"scaler":null,"metric":"euclidean","dim":2,"k":2,"version":1,"format":"centroid/kmeans-model"}`))
	f.Add([]byte(`{"format":"centroid/kmeans-model","version":2}`))
	f.Add([]byte(`null`))
	f.Fuzz(func(t *testing.T, doc []byte) {
		m, err := readBudgeted(t, doc)
		if err != nil {
			require.ErrorIs(t, err, ErrModel)
			if doc = resign(t, doc); doc == nil {
				return
			}
			m, err = readBudgeted(t, doc)
			require.NoError(t, err, "re-signed %s", doc)
		}
		require.True(t, json.Valid(doc))
		var viaJSON Model
		require.NoError(t, json.Unmarshal(doc, &viaJSON))
		out, err := json.Marshal(m)
		require.NoError(t, err)
		viaOut, err := json.Marshal(&viaJSON)
		require.NoError(t, err)
		require.Equal(t, string(out), string(viaOut))
		m2, err := ReadModel(bytes.NewReader(out), fuzzLimits)
		require.NoError(t, err, "%s", out)
		out2, err := json.Marshal(m2)
		require.NoError(t, err)
		require.Equal(t, string(out), string(out2))
		if re := resign(t, doc); re != nil {
			m3, err := ReadModel(bytes.NewReader(re), fuzzLimits)
			require.NoError(t, err, "reformatted %s", re)
			out3, err := json.Marshal(m3)
			require.NoError(t, err)
			require.Equal(t, string(out), string(out3))
		}

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
