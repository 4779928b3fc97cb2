package kmeans

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/scale"
)

// demoModel clusters the bike-share demo stations with a schema, a
// creation time and (optionally) weights.
func demoModel(t testing.TB, weights bool) (*Model, *Result, *mat.Dense) {
	_, x := bikeshare.Generate(500, 11)
	var w []float64
	if weights {
		n, _ := x.Dims()
		w = make([]float64, n)
		for i := range w {
			w[i] = float64(i%4) / 2 // includes weight-zero rows
		}
	}
	res, err := Cluster(context.Background(), Problem{Data: x, K: 5, Weights: w, Scaler: &scale.ZScore{}}, &Settings{Restarts: 3, Seed: 3}, nil)
	require.NoError(t, err)
	m, err := res.Model.WithFeatures(bikeshare.Features())
	require.NoError(t, err)
	return m.WithCreated(time.Date(2025, 3, 1, 9, 30, 0, 0, time.UTC)), res, x
}

// TestModelV1Document decodes the version 1 document written by the
// previous encoder (testdata/model-v1.json, checked in before version 2)
// and checks that it labels the rows recorded with it then
// (testdata/model-v1-labels.json) identically, and as a brute-force scan
// over the centers and z-score parameters read straight from the file
// does; then that its version 2 re-encoding labels them identically too.
func TestModelV1Document(t *testing.T) {
	doc, err := os.ReadFile("testdata/model-v1.json")
	require.NoError(t, err)
	var m Model
	require.NoError(t, json.Unmarshal(doc, &m))
	assert.Nil(t, m.Training())
	assert.Nil(t, m.Features())
	assert.Empty(t, m.Library())

	var raw struct {
		Centers [][]float64
		Scaler  struct{ Offset, Divisor []float64 }
	}
	require.NoError(t, json.Unmarshal(doc, &raw))
	var golden []struct {
		Features []float64
		Label    int
		Distance float64
	}
	b, err := os.ReadFile("testdata/model-v1-labels.json")
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, &golden))
	require.NotEmpty(t, golden)

	v2, err := json.Marshal(&m)
	require.NoError(t, err)
	var m2 Model
	require.NoError(t, json.Unmarshal(v2, &m2))
	for i, g := range golden {
		z := make([]float64, len(g.Features))
		for j, v := range g.Features {
			z[j] = (v - raw.Scaler.Offset[j]) / raw.Scaler.Divisor[j]
		}
		best, bestD := -1, math.Inf(1)
		for j, c := range raw.Centers {
			var s float64
			for q := range c {
				s += (z[q] - c[q]) * (z[q] - c[q])
			}
			if math.Sqrt(s) < bestD {
				best, bestD = j, math.Sqrt(s)
			}
		}
		for _, mm := range []*Model{&m, &m2} {
			c, d, err := mm.Nearest(g.Features)
			require.NoError(t, err)
			assert.Equal(t, g.Label, c, "row %d", i)
			assert.Equal(t, g.Distance, d, "row %d", i)
			assert.Equal(t, best, c, "row %d", i)
			assert.InDelta(t, bestD, d, 1e-12*(1+bestD), "row %d", i)
		}
	}
}

// TestModelV2RoundTrip checks that every part of the document survives a
// round trip and that the checksum is SHA-256 of the compact document with
// an empty checksum field, computed here independently.
func TestModelV2RoundTrip(t *testing.T) {
	for _, weighted := range []bool{false, true} {
		m, res, x := demoModel(t, weighted)
		b, err := json.Marshal(m)
		require.NoError(t, err)

		var generic map[string]any
		require.NoError(t, json.Unmarshal(b, &generic))
		assert.EqualValues(t, 2, generic["version"])
		assert.Equal(t, LibraryVersion, generic["library"])
		assert.Equal(t, "2025-03-01T09:30:00Z", generic["created"])
		sum := generic["checksum"].(string)
		canon := bytes.Replace(b, []byte(`"checksum":"`+sum+`"`), []byte(`"checksum":""`), 1)
		h := sha256.Sum256(canon)
		assert.Equal(t, "sha256:"+hex.EncodeToString(h[:]), sum)

		var back Model
		require.NoError(t, json.Unmarshal(b, &back))
		assert.Equal(t, bikeshare.Features(), back.Features())
		assert.Equal(t, m.Created(), back.Created())
		assert.Equal(t, LibraryVersion, back.Library())
		assert.Equal(t, m.Training(), back.Training())
		got, err := back.Checksum()
		require.NoError(t, err)
		assert.Equal(t, sum, got)
		b2, err := json.Marshal(&back)
		require.NoError(t, err)
		assert.Equal(t, string(b), string(b2), "re-encoding is byte-identical")
		n, _ := x.Dims()
		labels := make([]int, n)
		require.NoError(t, back.NearestBatch(labels, nil, x))
		assert.Equal(t, res.Assignments, labels)

		// Reformatting (indentation, key order, number spelling) keeps the
		// checksum valid: it is over the canonical re-encoding.
		var pretty bytes.Buffer
		require.NoError(t, json.Indent(&pretty, b, "", "  "))
		reordered, err := json.Marshal(generic) // map keys come out sorted
		require.NoError(t, err)
		for _, doc := range [][]byte{pretty.Bytes(), reordered} {
			var mm Model
			require.NoError(t, json.Unmarshal(doc, &mm))
		}
	}
}

// TestTrainingSummary checks sizes, costs and the distance quantiles of
// the summary against a brute-force computation from the definition on
// the scaled rows.
func TestTrainingSummary(t *testing.T) {
	for _, weighted := range []bool{false, true} {
		m, res, x := demoModel(t, weighted)
		tr := m.Training()
		require.NotNil(t, tr)
		n, d := x.Dims()
		assert.Equal(t, n, tr.Rows)
		assert.InDelta(t, res.Cost, tr.Cost(), 1e-9*res.Cost)
		var shareSum float64
		for _, s := range tr.Shares() {
			shareSum += s
		}
		assert.InDelta(t, 1, shareSum, 1e-12)
		for j, c := range tr.Clusters {
			assert.Equal(t, res.Sizes[j], c.Size)
			assert.Equal(t, res.Weights[j], c.Weight)
			assert.Equal(t, res.ClusterCost[j], c.Cost)
			var dist, w []float64
			for i := range n {
				wi := 1.0
				if weighted {
					wi = float64(i%4) / 2
				}
				if res.Assignments[i] != j || wi == 0 {
					continue
				}
				z := make([]float64, d)
				m.Scaler().Apply(z, x.RawRowView(i))
				dist = append(dist, distance.Euclidean{}.Distance(z, m.centers[j*d:(j+1)*d]))
				w = append(w, wi)
			}
			// Smallest v whose members at distance ≤ v hold ≥ q of the weight.
			quantile := func(q float64) float64 {
				var total float64
				for _, v := range w {
					total += v
				}
				best := math.Inf(1)
				for _, v := range dist {
					var below float64
					for i, u := range dist {
						if u <= v {
							below += w[i]
						}
					}
					if below >= q*total-1e-9 && v < best {
						best = v
					}
				}
				return best
			}
			assert.Equal(t, quantile(0.5), c.Distances.P50, "cluster %d", j)
			assert.Equal(t, quantile(0.9), c.Distances.P90, "cluster %d", j)
			assert.Equal(t, quantile(0.99), c.Distances.P99, "cluster %d", j)
			assert.Equal(t, slices.Max(dist), c.Distances.Max, "cluster %d", j)
			if !weighted {
				// Unweighted: the ⌈q·n⌉-th smallest.
				sorted := slices.Sorted(slices.Values(dist))
				rank := func(q float64) float64 { return sorted[int(math.Ceil(q*float64(len(sorted))-1e-9))-1] }
				assert.Equal(t, rank(0.5), c.Distances.P50)
				assert.Equal(t, rank(0.99), c.Distances.P99)
				beyond := 0
				for _, v := range dist {
					if v > c.Distances.P99 {
						beyond++
					}
				}
				assert.LessOrEqual(t, float64(beyond), 0.01*float64(len(dist)))
			}
		}
	}
}

// TestModelDecodeStrict feeds documents that must be refused, each
// failing the named check rather than the checksum.
func TestModelDecodeStrict(t *testing.T) {
	m, _, _ := demoModel(t, false)
	good, err := json.Marshal(m)
	require.NoError(t, err)
	mutate := func(f func(map[string]any)) []byte {
		var d map[string]any
		require.NoError(t, json.Unmarshal(good, &d))
		f(d)
		b, err := json.Marshal(d)
		require.NoError(t, err)
		return b
	}
	cluster0 := func(d map[string]any) map[string]any {
		return d["training"].(map[string]any)["clusters"].([]any)[0].(map[string]any)
	}
	cases := []struct {
		name string
		doc  []byte
		want error
	}{
		{"unknown version", mutate(func(d map[string]any) { d["version"] = 3 }), ErrVersion},
		{"version 0", mutate(func(d map[string]any) { d["version"] = 0 }), ErrVersion},
		{"changed center", mutate(func(d map[string]any) { d["centers"].([]any)[0].([]any)[0] = 0.5 }), ErrChecksum},
		{"changed feature", mutate(func(d map[string]any) { d["features"].([]any)[0] = "trips" }), ErrChecksum},
		{"changed created", mutate(func(d map[string]any) { d["created"] = "2025-03-01T09:31:00Z" }), ErrChecksum},
		{"changed p99", mutate(func(d map[string]any) { cluster0(d)["p99"] = cluster0(d)["max"] }), ErrChecksum},
		{"no checksum", mutate(func(d map[string]any) { delete(d, "checksum") }), ErrChecksum},
		{"bad checksum", mutate(func(d map[string]any) { d["checksum"] = "md5:00" }), ErrChecksum},
		{"null center value", mutate(func(d map[string]any) { d["centers"].([]any)[1].([]any)[2] = nil }), ErrModel},
		{"null quantile", mutate(func(d map[string]any) { cluster0(d)["p50"] = nil }), ErrModel},
		{"string number", mutate(func(d map[string]any) { d["k"] = "5" }), ErrModel},
		{"k mismatch", mutate(func(d map[string]any) { d["k"] = 4 }), ErrModel},
		{"k zero", mutate(func(d map[string]any) { d["k"] = 0 }), ErrModel},
		{"dim mismatch", mutate(func(d map[string]any) { d["dim"] = 5 }), ErrModel},
		{"ragged", mutate(func(d map[string]any) { d["centers"].([]any)[1] = []any{1.0} }), ErrModel},
		{"unknown field", mutate(func(d map[string]any) { d["note"] = "hi" }), ErrModel},
		{"unknown training field", mutate(func(d map[string]any) { cluster0(d)["p95"] = 1.0 }), ErrModel},
		{"unknown metric", mutate(func(d map[string]any) { d["metric"] = "hamming" }), ErrModel},
		{"metric without center rule", mutate(func(d map[string]any) { d["metric"] = "chebyshev" }), ErrModel},
		{"scaler dim", mutate(func(d map[string]any) {
			d["scaler"] = map[string]any{"kind": "minmax", "version": 1, "dim": 2, "offset": []any{0.0, 0.0}, "divisor": []any{1.0, 1.0}}
		}), ErrModel},
		{"features count", mutate(func(d map[string]any) { d["features"] = []any{"a", "b"} }), ErrModel},
		{"features repeated", mutate(func(d map[string]any) { d["features"].([]any)[1] = d["features"].([]any)[0] }), ErrSchema},
		{"feature empty", mutate(func(d map[string]any) { d["features"].([]any)[1] = "" }), ErrSchema},
		{"feature control", mutate(func(d map[string]any) { d["features"].([]any)[1] = "a\nb" }), ErrSchema},
		{"created not UTC", mutate(func(d map[string]any) { d["created"] = "2025-03-01T10:30:00+01:00" }), ErrModel},
		{"created garbage", mutate(func(d map[string]any) { d["created"] = "yesterday" }), ErrModel},
		{"library control", mutate(func(d map[string]any) { d["library"] = "0.1\x00" }), ErrModel},
		{"training rows", mutate(func(d map[string]any) { d["training"].(map[string]any)["rows"] = 499 }), ErrModel},
		{"training clusters", mutate(func(d map[string]any) {
			tr := d["training"].(map[string]any)
			tr["clusters"] = tr["clusters"].([]any)[:4]
		}), ErrModel},
		{"negative size", mutate(func(d map[string]any) { cluster0(d)["size"] = -1 }), ErrModel},
		{"negative cost", mutate(func(d map[string]any) { cluster0(d)["cost"] = -1.0 }), ErrModel},
		{"quantiles out of order", mutate(func(d map[string]any) { cluster0(d)["p50"] = 1e9 }), ErrModel},
		{"zero weight", mutate(func(d map[string]any) {
			for _, c := range d["training"].(map[string]any)["clusters"].([]any) {
				c.(map[string]any)["weight"] = 0.0
			}
		}), ErrModel},
		{"trailing data", append(slices.Clone(good), []byte(` {}`)...), ErrModel},
		{"trailing bracket", append(slices.Clone(good), ']'), ErrModel},
		{"NaN literal", []byte(`{"format":"centroid/kmeans-model","version":2,"metric":"euclidean","k":1,"dim":1,"centers":[[NaN]],"scaler":null,"checksum":""}`), ErrModel},
		{"overflow", []byte(`{"format":"centroid/kmeans-model","version":2,"metric":"euclidean","k":1,"dim":1,"centers":[[1e999]],"scaler":null,"checksum":""}`), ErrModel},
		{"not an object", []byte(`[1,2]`), ErrModel},
		{"wrong format", mutate(func(d map[string]any) { d["format"] = "other" }), ErrModel},
		{"cosine center not unit", []byte(`{"format":"centroid/kmeans-model","version":1,"metric":"cosine","k":1,"dim":2,"centers":[[3,4]],"scaler":null}`), ErrModel},

		// Null only where the document allows it (the scaler).
		{"null features", mutate(func(d map[string]any) { d["features"] = nil }), ErrModel},
		{"null training", mutate(func(d map[string]any) { d["training"] = nil }), ErrModel},
		{"null library", mutate(func(d map[string]any) { d["library"] = nil }), ErrModel},
		{"null k", mutate(func(d map[string]any) { d["k"] = nil }), ErrModel},
		// Integers as encoding/json reads an int.
		{"k with fraction", []byte(strings.Replace(string(good), `"k":5,`, `"k":5.0,`, 1)), ErrModel},
		{"k with exponent", []byte(strings.Replace(string(good), `"k":5,`, `"k":5e0,`, 1)), ErrModel},
		{"k leading zero", []byte(strings.Replace(string(good), `"k":5,`, `"k":05,`, 1)), ErrModel},
		{"k beyond int", []byte(strings.Replace(string(good), `"k":5,`, `"k":99999999999999999999,`, 1)), ErrModel},
		{"size with fraction", []byte(strings.Replace(string(good), `{"size":`, `{"size":0.5,"x":`, 1)), ErrModel},
		// Members the canonical encoding always writes.
		{"missing metric", mutate(func(d map[string]any) { delete(d, "metric") }), ErrModel},
		{"missing centers", mutate(func(d map[string]any) { delete(d, "centers") }), ErrModel},
		{"missing version", mutate(func(d map[string]any) { delete(d, "version") }), ErrVersion},
		{"missing training rows", mutate(func(d map[string]any) { delete(d["training"].(map[string]any), "rows") }), ErrModel},
		{"missing cluster max", mutate(func(d map[string]any) { delete(cluster0(d), "max") }), ErrModel},
		{"empty cluster entries", mutate(func(d map[string]any) {
			tr := d["training"].(map[string]any)
			tr["clusters"] = []any{map[string]any{}, map[string]any{}, map[string]any{}, map[string]any{}, map[string]any{}}
		}), ErrModel},
		{"version 2 member in version 1", mutate(func(d map[string]any) { d["version"] = 1 }), ErrModel},
		// Syntax beyond what encoding/json checks.
		{"invalid UTF-8", []byte(strings.Replace(string(good), `"trips_per_day"`, "\"trips\xffday\"", 1)), ErrModel},
		{"lone surrogate", []byte(strings.Replace(string(good), `"trips_per_day"`, `"trips\ud800day"`, 1)), ErrModel},
		{"byte order mark", append([]byte("\ufeff"), good...), ErrModel},
		{"trailing comma", []byte(strings.Replace(string(good), `]],"training"`, `],],"training"`, 1)), ErrModel},
		{"deep nesting", []byte(`{"format":"centroid/kmeans-model","version":1,"metric":"euclidean","k":1,"dim":1,"centers":` +
			strings.Repeat("[", 100) + strings.Repeat("]", 100) + `}`), ErrModel},
		{"not a number", []byte(strings.Replace(string(good), `"k":5,`, `"k":true,`, 1)), ErrModel},
		{"hex number", []byte(`{"format":"centroid/kmeans-model","version":1,"metric":"euclidean","k":1,"dim":1,"centers":[[0x10]],"scaler":null}`), ErrModel},
		{"empty document", []byte(``), ErrModel},
		{"only white space", []byte(" \n\t"), ErrModel},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var mm Model
			err := mm.UnmarshalJSON(c.doc)
			require.ErrorIs(t, err, c.want)
			require.ErrorIs(t, err, ErrModel, "every document error wraps ErrModel")
			if c.want != ErrChecksum {
				require.NotErrorIs(t, err, ErrChecksum, "must fail its own check: %v", err)
			}
			assert.Zero(t, mm.K(), "a failed decode leaves the model unchanged")
			_, err = ReadModel(bytes.NewReader(c.doc), nil)
			require.ErrorIs(t, err, c.want)
		})
	}
}

func TestReadModelLimits(t *testing.T) {
	m, _, _ := demoModel(t, false)
	good, err := json.Marshal(m)
	require.NoError(t, err)
	got, err := ReadModel(bytes.NewReader(good), nil)
	require.NoError(t, err)
	assert.Equal(t, 5, got.K())

	_, err = ReadModel(bytes.NewReader(good), &DecodeLimits{MaxBytes: int64(len(good)) - 1})
	require.ErrorIs(t, err, ErrTooLarge)
	require.ErrorIs(t, err, ErrModel)
	_, err = ReadModel(bytes.NewReader(good), &DecodeLimits{MaxBytes: int64(len(good))})
	require.NoError(t, err)
	_, err = ReadModel(bytes.NewReader(good), &DecodeLimits{MaxValues: 5*6 - 1})
	require.ErrorIs(t, err, ErrTooLarge)
	_, err = ReadModel(bytes.NewReader(good), &DecodeLimits{MaxValues: 5 * 6})
	require.NoError(t, err)

	// A huge claimed k·d is refused before the centers are looked at,
	// also when k and dim come after them.
	huge := `{"format":"centroid/kmeans-model","version":1,"metric":"euclidean","k":4611686018427387904,"dim":4,"centers":[],"scaler":null}`
	_, err = ReadModel(strings.NewReader(huge), nil)
	require.ErrorIs(t, err, ErrTooLarge)
	late := `{"format":"centroid/kmeans-model","version":1,"metric":"euclidean","centers":[[0,0],[0,0]],"scaler":null,"k":2,"dim":2}`
	_, err = ReadModel(strings.NewReader(late), &DecodeLimits{MaxValues: 3})
	require.ErrorIs(t, err, ErrTooLarge)
	_, err = ReadModel(strings.NewReader(late), &DecodeLimits{MaxValues: 4})
	require.NoError(t, err)

	// MaxBytes saturates: the largest limit, or one just below it, is no
	// limit rather than an overflow that refuses everything.
	for _, max := range []int64{math.MaxInt64, math.MaxInt64 - 1} {
		got, err = ReadModel(bytes.NewReader(good), &DecodeLimits{MaxBytes: max})
		require.NoError(t, err, "MaxBytes %d", max)
		assert.Equal(t, 5, got.K())
	}

	// The default byte limit applies to json.Unmarshal too.
	big := make([]byte, DefaultMaxModelBytes+1)
	var mm Model
	require.ErrorIs(t, mm.UnmarshalJSON(big), ErrTooLarge)

	_, err = ReadModel(errReader{}, nil)
	require.ErrorIs(t, err, ErrModel)
}

type errReader struct{}

func (errReader) Read([]byte) (int, error) { return 0, os.ErrClosed }

func TestModelMetadata(t *testing.T) {
	m, _, _ := demoModel(t, false)
	j, ok := m.Column("elevation_m")
	assert.True(t, ok)
	assert.Equal(t, bikeshare.ElevationM, j)
	_, ok = m.Column("altitude")
	assert.False(t, ok)

	_, err := m.WithFeatures([]string{"a"})
	require.ErrorIs(t, err, ErrSchema)
	_, err = m.WithFeatures([]string{"a", "b", "c", "d", "e", "a"})
	require.ErrorIs(t, err, ErrSchema)
	_, err = m.WithFeatures([]string{"a", "b", "c", "d", "e", strings.Repeat("x", MaxFeatureName+1)})
	require.ErrorIs(t, err, ErrSchema)
	_, err = m.WithFeatures([]string{"a", "b", "c", "d", "e", "\xff"})
	require.ErrorIs(t, err, ErrSchema)
	plain, err := m.WithFeatures(nil)
	require.NoError(t, err)
	assert.Nil(t, plain.Features())
	assert.Equal(t, bikeshare.Features(), m.Features(), "With methods do not modify the receiver")

	s1, err := m.Checksum()
	require.NoError(t, err)
	s2, err := m.WithCreated(m.Created().Add(time.Second)).Checksum()
	require.NoError(t, err)
	assert.NotEqual(t, s1, s2)
	zoned := m.WithCreated(time.Date(2025, 3, 1, 10, 30, 0, 0, time.FixedZone("CET", 3600)))
	assert.Equal(t, m.Created(), zoned.Created())
	assert.True(t, m.WithCreated(time.Time{}).Created().IsZero())

	var zero Model
	_, err = zero.Checksum()
	require.ErrorIs(t, err, ErrModel)
	_, err = zero.MarshalJSON()
	require.ErrorIs(t, err, ErrModel)
	_, err = zero.WithFeatures(nil)
	require.ErrorIs(t, err, ErrModel)
	assert.Nil(t, zero.Training())

	// Copies are independent of the model.
	tr := m.Training()
	tr.Clusters[0].Size = -7
	assert.NotEqual(t, -7, m.Training().Clusters[0].Size)
}

// TestModelV2Documents decodes version 2 documents written by the encoder
// of the release that introduced version 2 (testdata/model-v2*.json,
// checked in unchanged) and checks that re-encoding them gives the same
// bytes, so their checksums stay valid, and that the checksum is SHA-256
// of the document with an empty checksum, computed here.
func TestModelV2Documents(t *testing.T) {
	for _, name := range []string{"testdata/model-v2.json", "testdata/model-v2-manhattan-robust.json"} {
		doc, err := os.ReadFile(name)
		require.NoError(t, err)
		m, err := ReadModel(bytes.NewReader(doc), nil)
		require.NoError(t, err, name)
		out, err := json.Marshal(m)
		require.NoError(t, err)
		assert.Equal(t, string(doc), string(out), name)

		var generic struct{ Checksum string }
		require.NoError(t, json.Unmarshal(doc, &generic))
		canon := bytes.Replace(doc, []byte(`"checksum":"`+generic.Checksum+`"`), []byte(`"checksum":""`), 1)
		h := sha256.Sum256(canon)
		assert.Equal(t, "sha256:"+hex.EncodeToString(h[:]), generic.Checksum, name)
	}
}

// referenceDoc is the version 2 document laid out as plain Go values, for
// encoding/json to write: the canonical encoding as the format defines it
// (see Model.MarshalJSON).
type referenceDoc struct {
	Format   string          `json:"format"`
	Version  int             `json:"version"`
	Library  string          `json:"library,omitempty"`
	Created  string          `json:"created,omitempty"`
	Metric   string          `json:"metric"`
	K        int             `json:"k"`
	Dim      int             `json:"dim"`
	Features []string        `json:"features,omitempty"`
	Scaler   json.RawMessage `json:"scaler"`
	Centers  [][]float64     `json:"centers"`
	Training *struct {
		Rows     int `json:"rows"`
		Clusters []struct {
			Size   int     `json:"size"`
			Weight float64 `json:"weight"`
			Cost   float64 `json:"cost"`
			P50    float64 `json:"p50"`
			P90    float64 `json:"p90"`
			P99    float64 `json:"p99"`
			Max    float64 `json:"max"`
		} `json:"clusters"`
	} `json:"training,omitempty"`
	Checksum string `json:"checksum"`
}

// TestCanonicalEncoding checks the streaming canonical encoder against
// encoding/json writing the same document from plain values, for models of
// every optional part and for numbers at the edges of the float64 range
// and of the exponent form, and the number form alone against
// encoding/json on many random bit patterns.
func TestCanonicalEncoding(t *testing.T) {
	edges := []float64{0, math.Copysign(0, -1), 1e-6, 9.999999999999999e-7, 1e21, 9.99999999999999e20, 5e-324,
		math.MaxFloat64, -math.MaxFloat64, 1e-7, 123456789012345678901234, 0.1, -2.5e-300, 1, -1}
	rng := rand.New(rand.NewPCG(1, 2))
	for range 100000 {
		v := math.Float64frombits(rng.Uint64())
		if math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		edges = append(edges, v)
	}
	for _, v := range edges {
		want, err := json.Marshal(v)
		require.NoError(t, err)
		got, err := appendNumber(nil, v)
		require.NoError(t, err)
		require.Equal(t, string(want), string(got), "%b", v)
	}
	_, err := appendNumber(nil, math.NaN())
	require.ErrorIs(t, err, ErrModel)

	withTraining, _, _ := demoModel(t, true)
	plain := newModel(edges[:14], 7, 2, distance.Euclidean{}, nil)
	plain.library = ""
	unit, err := scale.Decode([]byte(`{"kind":"unitlength","version":1,"dim":2}`))
	require.NoError(t, err)
	cosine, err := NewModel(mat.NewDense(2, 2, []float64{0.6, 0.8, -1, 0}), distance.Cosine{}, unit, []string{"a<b", "c&d\u00e9"})
	require.NoError(t, err)
	cosine = cosine.WithCreated(time.Date(2025, 1, 2, 3, 4, 5, 6, time.UTC))
	for _, m := range []*Model{withTraining, plain, cosine} {
		sc, err := scale.Encode(m.scaler)
		require.NoError(t, err)
		ref := referenceDoc{Format: "centroid/kmeans-model", Version: 2, Library: m.library, Metric: m.metric.Name(),
			K: m.k, Dim: m.d, Features: m.features, Scaler: sc}
		if !m.created.IsZero() {
			ref.Created = m.created.Format(time.RFC3339Nano)
		}
		for j := range m.k {
			ref.Centers = append(ref.Centers, m.centers[j*m.d:(j+1)*m.d])
		}
		if tr := m.training; tr != nil {
			require.NoError(t, json.Unmarshal([]byte(`{"clusters":[]}`), &ref.Training))
			ref.Training.Rows = tr.Rows
			for _, c := range tr.Clusters {
				q := c.Distances
				ref.Training.Clusters = append(ref.Training.Clusters, struct {
					Size   int     `json:"size"`
					Weight float64 `json:"weight"`
					Cost   float64 `json:"cost"`
					P50    float64 `json:"p50"`
					P90    float64 `json:"p90"`
					P99    float64 `json:"p99"`
					Max    float64 `json:"max"`
				}{c.Size, c.Weight, c.Cost, q.P50, q.P90, q.P99, q.Max})
			}
		}
		want, err := json.Marshal(ref)
		require.NoError(t, err)
		got, err := m.encode(nil, "")
		require.NoError(t, err)
		require.Equal(t, string(want), string(got))
		h := sha256.New()
		_, err = m.encode(h, "")
		require.NoError(t, err)
		wantSum := sha256.Sum256(want)
		assert.Equal(t, wantSum[:], h.Sum(nil), "streaming in pieces hashes the same bytes")
	}

	// A model large enough to be written in many pieces hashes the same.
	big := make([]float64, 3*spillSize)
	for i := range big {
		big[i] = rng.NormFloat64()
	}
	mb := newModel(big, 3, spillSize, distance.Euclidean{}, nil)
	whole, err := mb.encode(nil, "")
	require.NoError(t, err)
	h := sha256.New()
	_, err = mb.encode(h, "")
	require.NoError(t, err)
	wantSum := sha256.Sum256(whole)
	assert.Equal(t, wantSum[:], h.Sum(nil))
}

// TestDecodeAmbiguousMembers checks that a member named twice, or spelled
// in another case or with an escape, is refused at every level of the
// document (top, scaler, training, cluster entries) with ErrModel, and not
// for its checksum. encoding/json accepts such documents (checked here),
// and a reader that keeps the first of two members sees another model
// than one that keeps the last.
func TestDecodeAmbiguousMembers(t *testing.T) {
	m, _, _ := demoModel(t, false)
	good, err := json.Marshal(m)
	require.NoError(t, err)
	g := string(good)
	// before puts text before the first occurrence of anchor.
	before := func(anchor, text string) string {
		require.Contains(t, g, anchor)
		return strings.Replace(g, anchor, text+anchor, 1)
	}
	rename := func(from, to string) string {
		require.Contains(t, g, from)
		return strings.Replace(g, from, to, 1)
	}
	cases := []struct{ name, doc string }{
		{"top: centers twice, differing", before(`"centers":`, `"centers":[[0,0,0,0,0,0],[1,1,1,1,1,1],[2,2,2,2,2,2],[3,3,3,3,3,3],[4,4,4,4,4,4]],`)},
		{"top: k twice, equal", before(`"k":`, `"k":5,`)},
		{"top: checksum twice", before(`"checksum":`, `"checksum":"sha256:00",`)},
		{"top: CHECKSUM beside checksum", before(`"checksum":`, `"CHECKSUM":"sha256:00",`)},
		{"top: Centers", rename(`"centers":`, `"Centers":`)},
		{"top: escaped name", rename(`"centers":`, `"\u0063enters":`)},
		{"scaler: kind twice", rename(`"scaler":{"kind":"zscore",`, `"scaler":{"kind":"minmax","kind":"zscore",`)},
		{"scaler: Kind", rename(`"scaler":{"kind":`, `"scaler":{"Kind":`)},
		{"scaler: offset twice", rename(`"scaler":{"kind":"zscore",`, `"scaler":{"kind":"zscore","offset":[0,0,0,0,0,0],`)},
		{"scaler: escaped name", rename(`"divisor":`, `"di\u0076isor":`)},
		{"training: rows twice", rename(`"training":{"rows":`, `"training":{"rows":1,"rows":`)},
		{"training: Rows", rename(`"training":{"rows":`, `"training":{"Rows":`)},
		{"training: clusters twice", rename(`"training":{"rows":500,`, `"training":{"rows":500,"clusters":[],`)},
		{"cluster: size twice", rename(`{"size":`, `{"size":0,"size":`)},
		{"cluster: SIZE", rename(`{"size":`, `{"SIZE":`)},
		{"cluster: escaped name", rename(`,"p50":`, `,"p\u0035\u0030":`)},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var lenient map[string]any
			require.NoError(t, json.Unmarshal([]byte(c.doc), &lenient), "encoding/json reads it")
			_, err := ReadModel(strings.NewReader(c.doc), nil)
			require.ErrorIs(t, err, ErrModel)
			require.NotErrorIs(t, err, ErrChecksum, "%v", err)
			var mm Model
			require.ErrorIs(t, json.Unmarshal([]byte(c.doc), &mm), ErrModel)
		})
	}

	// The differing centers are a real ambiguity: encoding/json keeps the
	// last member, for which the checksum holds, so a reader built on it
	// would have installed this document.
	var last struct{ Centers [][]float64 }
	require.NoError(t, json.Unmarshal([]byte(cases[0].doc), &last))
	assert.Equal(t, mat.DenseCopyOf(m.ScaledCenters()).RawMatrix().Data, slices.Concat(last.Centers...))
}

// TestFeatureNameCharacters checks which characters a feature name may
// hold, in Model.WithFeatures, in Problem.Features and in a document. The
// general categories named are those of the Unicode Character Database
// (UnicodeData.txt); default-ignorable and variation-selector code points
// per its DerivedCoreProperties.txt and PropList.txt.
func TestFeatureNameCharacters(t *testing.T) {
	cases := []struct {
		name string
		ok   bool
		why  string
	}{
		{"dock_count", true, "ASCII"},
		{"trips per day", true, "inner U+0020"},
		{"Höhe_m", true, "Latin letters"},
		{"距離_km", true, "Han"},
		{"e\u0301lan", true, "combining acute (Mn) shows on its base"},
		{"bike🚲", true, "emoji (So)"},
		{"a\u202eb", false, "RIGHT-TO-LEFT OVERRIDE, Cf (bidi)"},
		{"a\u202ab", false, "LEFT-TO-RIGHT EMBEDDING, Cf (bidi)"},
		{"a\u2066b", false, "LEFT-TO-RIGHT ISOLATE, Cf (bidi)"},
		{"a\u2069b", false, "POP DIRECTIONAL ISOLATE, Cf (bidi)"},
		{"a\u200fb", false, "RIGHT-TO-LEFT MARK, Cf"},
		{"a\u061cb", false, "ARABIC LETTER MARK, Cf"},
		{"a\u200bb", false, "ZERO WIDTH SPACE, Cf"},
		{"a\u200db", false, "ZERO WIDTH JOINER, Cf"},
		{"a\u2060b", false, "WORD JOINER, Cf"},
		{"a\ufeffb", false, "ZERO WIDTH NO-BREAK SPACE, Cf"},
		{"a\u00adb", false, "SOFT HYPHEN, Cf"},
		{"a\U000e0041b", false, "TAG LATIN CAPITAL LETTER A, Cf"},
		{"a\u034fb", false, "COMBINING GRAPHEME JOINER, Mn, default-ignorable"},
		{"a\ufe0fb", false, "VARIATION SELECTOR-16, Mn, variation selector"},
		{"a\U000e0100b", false, "VARIATION SELECTOR-17, Mn, variation selector"},
		{"a\u3164b", false, "HANGUL FILLER, Lo, default-ignorable"},
		{"a\u115fb", false, "HANGUL CHOSEONG FILLER, Lo, default-ignorable"},
		{"a\u2800b", false, "BRAILLE PATTERN BLANK, So, shows nothing"},
		{"a\u00a0b", false, "NO-BREAK SPACE, Zs"},
		{"a\u3000b", false, "IDEOGRAPHIC SPACE, Zs"},
		{"a\u2028b", false, "LINE SEPARATOR, Zl"},
		{"a\u2029b", false, "PARAGRAPH SEPARATOR, Zp"},
		{"a\u0085b", false, "NEXT LINE, Cc"},
		{"a\x7fb", false, "DELETE, Cc"},
		{"a\tb", false, "TAB, Cc"},
		{"a\ue000b", false, "private use, Co"},
		{"a\u0378b", false, "unassigned, Cn"},
		{" trips", false, "leading space"},
		{"trips ", false, "trailing space"},
	}
	m, _, _ := demoModel(t, false)
	good, err := json.Marshal(m)
	require.NoError(t, err)
	x := mat.NewDense(4, 2, []float64{0, 0, 1, 1, 5, 5, 6, 6})
	for _, c := range cases {
		t.Run(c.why, func(t *testing.T) {
			names := slices.Clone(bikeshare.Features())
			names[1] = c.name
			_, err := m.WithFeatures(names)
			_, clusterErr := Cluster(context.Background(), Problem{Data: x, K: 2, Features: []string{"x", c.name}}, &Settings{Restarts: 1}, nil)

			var d map[string]any
			require.NoError(t, json.Unmarshal(good, &d))
			d["features"].([]any)[1] = c.name
			doc, merr := json.Marshal(d)
			require.NoError(t, merr)
			_, docErr := ReadModel(bytes.NewReader(doc), nil)
			if c.ok {
				require.NoError(t, err)
				require.NoError(t, clusterErr)
				require.ErrorIs(t, docErr, ErrChecksum, "accepted, but the content changed")
				return
			}
			require.ErrorIs(t, err, ErrSchema)
			require.ErrorIs(t, clusterErr, ErrSchema)
			require.ErrorIs(t, docErr, ErrSchema)
			require.ErrorIs(t, docErr, ErrModel)
		})
	}
}

// hostileDoc returns a version 2 document of about size bytes that
// declares k = 1 and dim = 1 but whose array of the given shape is far
// longer; late puts "k" and "dim" after every array. Besides the long
// arrays, shapes "cosine-zero" and "bad-checksum" are documents whose
// arrays do fit their declared shape (k = 1, dim = size/2) and that fail
// late: on a zero center under Cosine, after the centers are stored, and
// on the checksum, after the whole content is checked.
func hostileDoc(shape string, size int, late bool) []byte {
	var b bytes.Buffer
	b.WriteString(`{"format":"centroid/kmeans-model","version":2,`)
	k, dim := "1", "1"
	metric := "euclidean"
	if shape == "cosine-zero" || shape == "bad-checksum" {
		dim = strconv.Itoa(size / 2)
		if shape == "cosine-zero" {
			metric = "cosine"
		}
	}
	if !late {
		fmt.Fprintf(&b, `"k":%s,"dim":%s,`, k, dim)
	}
	fmt.Fprintf(&b, `"metric":%q,`, metric)
	repeat := func(first, more string) {
		b.WriteString(first)
		for b.Len() < size {
			b.WriteString(more)
		}
	}
	switch shape {
	case "clusters": // empty entries, the cheapest to write
		b.WriteString(`"scaler":null,"centers":[[0]],"training":{"rows":1,"clusters":[`)
		repeat(`{}`, `,{}`)
		b.WriteString(`]}`)
	case "full-clusters": // complete entries
		b.WriteString(`"scaler":null,"centers":[[0]],"training":{"rows":1,"clusters":[`)
		const c = `{"size":1,"weight":1,"cost":0,"p50":0,"p90":0,"p99":0,"max":0}`
		repeat(c, ","+c)
		b.WriteString(`]}`)
	case "centers":
		b.WriteString(`"scaler":null,"centers":[`)
		repeat(`[0]`, `,[0]`)
		b.WriteString(`]`)
	case "row":
		b.WriteString(`"scaler":null,"centers":[[`)
		repeat(`0`, `,0`)
		b.WriteString(`]]`)
	case "features":
		b.WriteString(`"scaler":null,"centers":[[0]],"features":[`)
		repeat(`"a"`, `,"a"`)
		b.WriteString(`]`)
	case "offset":
		b.WriteString(`"centers":[[0]],"scaler":{"kind":"zscore","version":1,"dim":1,"divisor":[1],"offset":[`)
		repeat(`0`, `,0`)
		b.WriteString(`]}`)
	case "nested":
		b.WriteString(`"scaler":null,"centers":`)
		repeat(`[`, `[`)
	case "cosine-zero", "bad-checksum":
		b.WriteString(`"scaler":null,"centers":[[`)
		for i := range size / 2 {
			if i > 0 {
				b.WriteByte(',')
			}
			b.WriteByte('0')
		}
		b.WriteString(`]]`)
	default:
		panic(shape)
	}
	if late {
		fmt.Fprintf(&b, `,"k":%s,"dim":%s`, k, dim)
	}
	b.WriteString(`,"checksum":"sha256:00"}`)
	return b.Bytes()
}

// allocated returns the bytes allocated on the heap while f runs, by any
// goroutine, which bounds how far the heap grew meanwhile. Tests calling
// it do not run in parallel.
func allocated(f func()) uint64 {
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	f()
	runtime.ReadMemStats(&after)
	return after.TotalAlloc - before.TotalAlloc
}

// Budgets of the memory tests, in bytes allocated per document byte.
const (
	// hostileBudget bounds a refused document read from a bytes.Reader:
	// reading it (1×) and, if its arrays fit its shape, its centers (8
	// bytes per value of at least 2 bytes, 4×). Measured: 1.0× and 5.1×.
	hostileBudget = 6
	// streamBudget is hostileBudget for a reader that does not tell its
	// length, read with io.ReadAll: measured 2.25× for reading (4.5× under
	// the race detector, where the standard library allocates more), 6.3×
	// (8.6×) with the centers.
	streamBudget = 10
	// unmarshalBudget bounds a refused document given to json.Unmarshal,
	// which hands over its bytes: only the centers that fit the shape.
	unmarshalBudget = 5
)

// TestDecodeHostileMemory checks that documents whose arrays run far
// past their declared shape, with k and dim before or after the arrays,
// are refused at a cost of a small multiple of their size. Before the
// decoder held arrays to the shape while reading, 16 MiB of empty cluster
// entries claiming k = 1 took 2.2 GB of allocation (137× the document).
func TestDecodeHostileMemory(t *testing.T) {
	const size = 2 << 20
	for _, shape := range []string{"clusters", "full-clusters", "centers", "row", "features", "offset", "nested", "cosine-zero", "bad-checksum"} {
		for _, late := range []bool{false, true} {
			doc := hostileDoc(shape, size, late)
			var err error
			got := allocated(func() { _, err = ReadModel(bytes.NewReader(doc), nil) })
			require.ErrorIs(t, err, ErrModel, "%s late=%v", shape, late)
			if shape == "bad-checksum" {
				require.ErrorIs(t, err, ErrChecksum, "a consistent document fails only on its checksum")
			} else {
				require.NotErrorIs(t, err, ErrChecksum, "%v", err)
			}
			ratio := float64(got) / float64(len(doc))
			t.Logf("%-13s late=%-5v %d bytes: ReadModel allocates %.2f× (%v)", shape, late, len(doc), ratio, err)
			assert.LessOrEqual(t, ratio, float64(hostileBudget), "%s late=%v", shape, late)

			if !late {
				continue
			}
			// Half the size, for time under the race detector: a reader
			// that does not tell its length, read in growing pieces, and
			// json.Unmarshal.
			doc = hostileDoc(shape, size/2, late)
			got = allocated(func() { _, err = ReadModel(struct{ io.Reader }{bytes.NewReader(doc)}, nil) })
			require.ErrorIs(t, err, ErrModel)
			ratio = float64(got) / float64(len(doc))
			t.Logf("%-13s late=%-5v %d bytes: ReadModel of a plain io.Reader allocates %.2f×", shape, late, len(doc), ratio)
			assert.LessOrEqual(t, ratio, float64(streamBudget), "%s late=%v", shape, late)

			var m Model
			got = allocated(func() { err = json.Unmarshal(doc, &m) })
			if !errors.Is(err, ErrModel) {
				var se *json.SyntaxError // encoding/json checks syntax first
				require.ErrorAs(t, err, &se)
			}
			ratio = float64(got) / float64(len(doc))
			t.Logf("%-13s late=%-5v %d bytes: json.Unmarshal allocates %.2f×", shape, late, len(doc), ratio)
			assert.LessOrEqual(t, ratio, float64(unmarshalBudget), "%s late=%v: json.Unmarshal", shape, late)
		}
	}
}

// TestDecodeAcceptedMemory checks what an accepted document costs: reading
// it plus its model, whose centers take 8 bytes per value, however
// cheaply the document spells them (the decoder's copy and, in newModel,
// the model's and the raw units'). Measured: 13.3× for values spelled
// "0", 2.5× and 3.2× for realistic documents (17 significant digits per
// value).
func TestDecodeAcceptedMemory(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, c := range []struct {
		k, d    int
		zeros   bool // spell every value "0", the cheapest form
		scaler  bool
		maxRate float64 // bytes allocated per document byte
	}{
		{k: 2, d: 1 << 17, zeros: true, maxRate: 1 + 3*4 + 1}, // reading, three copies of the centers at 4 bytes per document byte
		{k: 128, d: 512, scaler: true, maxRate: 4},
		{k: 4096, d: 8, maxRate: 4},
	} {
		v := make([]float64, c.k*c.d)
		for i := range v {
			if !c.zeros {
				v[i] = rng.NormFloat64()
			}
		}
		var sc scale.Scaler
		if c.scaler {
			var err error
			sc, err = (&scale.ZScore{}).Learn(mat.NewDense(c.k, c.d, v), nil)
			require.NoError(t, err)
		}
		m, err := NewModel(mat.NewDense(c.k, c.d, v), nil, sc, nil)
		require.NoError(t, err)
		doc, err := json.Marshal(m)
		require.NoError(t, err)
		var got *Model
		n := allocated(func() { got, err = ReadModel(bytes.NewReader(doc), nil) })
		require.NoError(t, err)
		require.Equal(t, c.k, got.K())
		rate := float64(n) / float64(len(doc))
		t.Logf("k=%d d=%d zeros=%v scaler=%v: %d bytes, ReadModel allocates %.2f×", c.k, c.d, c.zeros, c.scaler, len(doc), rate)
		assert.LessOrEqual(t, rate, c.maxRate)
	}
}

// benchmarkReadHostile reads hostile documents of size bytes (see
// hostileDoc; MaxValues admits the consistent ones); equal MB/s across
// sizes shows time linear in the size.
func benchmarkReadHostile(b *testing.B, shape string, size int) {
	doc := hostileDoc(shape, size, true)
	lim := &DecodeLimits{MaxValues: size}
	b.SetBytes(int64(len(doc)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := ReadModel(bytes.NewReader(doc), lim); err == nil {
			b.Fatal("accepted")
		}
	}
}

func BenchmarkReadHostileClusters1MiB(b *testing.B)  { benchmarkReadHostile(b, "clusters", 1<<20) }
func BenchmarkReadHostileClusters16MiB(b *testing.B) { benchmarkReadHostile(b, "clusters", 16<<20) }
func BenchmarkReadHostileCenters1MiB(b *testing.B)   { benchmarkReadHostile(b, "centers", 1<<20) }
func BenchmarkReadHostileCenters16MiB(b *testing.B)  { benchmarkReadHostile(b, "centers", 16<<20) }
func BenchmarkReadHostileChecksum1MiB(b *testing.B)  { benchmarkReadHostile(b, "bad-checksum", 1<<20) }
func BenchmarkReadHostileChecksum16MiB(b *testing.B) { benchmarkReadHostile(b, "bad-checksum", 16<<20) }

// TestReaderValues checks the document reader's strings and numbers
// against encoding/json decoding the same literals, and that it refuses
// what RFC 8259 forbids, plus the lone surrogates and invalid UTF-8 that
// encoding/json replaces with U+FFFD.
func TestReaderValues(t *testing.T) {
	for _, lit := range []string{`""`, `"plain"`, `"\"\\\/\b\f\n\r\t"`, `"\u00e9\u4e2d"`, `"\ud83d\udeb2 bike"`, `"é中🚲"`,
		`"\u0000"`, `"a\u2028b"`, `"<&>"`} {
		var want string
		require.NoError(t, json.Unmarshal([]byte(lit), &want), lit)
		r := jsonReader{b: []byte(lit)}
		got, err := r.str(64, "a string")
		require.NoError(t, err, lit)
		assert.Equal(t, want, got, lit)
		r = jsonReader{b: []byte(lit)}
		require.NoError(t, r.skip(0), lit)
		assert.Equal(t, len(lit), r.i, "skip reads the whole literal %s", lit)
	}
	for _, lit := range []string{`"\ud800"`, `"\udc00x"`, `"\ud800\u0041"`, "\"\xff\"", "\"\xc3\"", "\"a\nb\"", `"\x41"`, `"\u12"`, `"abc`, `"\`} {
		r := jsonReader{b: []byte(lit)}
		_, err := r.str(64, "a string")
		require.ErrorIs(t, err, ErrModel, lit)
		r = jsonReader{b: []byte(lit)}
		require.ErrorIs(t, r.skip(0), ErrModel, lit)
	}
	r := jsonReader{b: []byte(`"\u00e9\u00e9"`)}
	_, err := r.str(3, "a name")
	require.ErrorIs(t, err, ErrModel, "4 bytes decoded, limit 3")

	for _, lit := range []string{"0", "-0", "1", "-12.5", "1e3", "1E+3", "2.5e-3", "1e-400", "123456789012345678901234567890",
		"0.30000000000000004", "4.9e-324", "1.7976931348623157e308"} {
		var want float64
		require.NoError(t, json.Unmarshal([]byte(lit), &want), lit)
		r := jsonReader{b: []byte(lit)}
		got, err := r.number("a value")
		require.NoError(t, err, lit)
		assert.Equal(t, math.Float64bits(want), math.Float64bits(got), lit)
		assert.Equal(t, len(lit), r.i, lit)
	}
	for _, lit := range []string{"-", "+1", ".5", "1.", "1e", "1e+", "01", "0x10", "NaN", "Infinity", "1e309", "-1e400000"} {
		var v float64
		require.Error(t, json.Unmarshal([]byte(lit), &v), "encoding/json refuses %s too", lit)
		r := jsonReader{b: []byte(lit)}
		_, err := r.number("a value")
		if err == nil {
			// A valid prefix ("0" of "01"), which the caller refuses for
			// what follows it.
			require.Less(t, r.i, len(lit), lit)
			continue
		}
		require.ErrorIs(t, err, ErrModel, lit)
	}
	for lit, want := range map[string]int{"0": 0, "-0": 0, "42": 42, "9223372036854775807": math.MaxInt64} {
		r := jsonReader{b: []byte(lit)}
		got, err := r.integer("k")
		require.NoError(t, err, lit)
		assert.Equal(t, want, got, lit)
	}
	for _, lit := range []string{"1.0", "1e2", "9223372036854775808", "-9223372036854775809"} {
		r := jsonReader{b: []byte(lit)}
		_, err := r.integer("k")
		require.ErrorIs(t, err, ErrModel, lit)
	}
}

// DecodeLimits above the serving cap mean the cap.
func TestDecodeLimitsCapped(t *testing.T) {
	l := (&DecodeLimits{MaxValues: math.MaxInt}).resolved()
	assert.Equal(t, MaxServedValues, l.MaxValues)
	l = (&DecodeLimits{MaxValues: 10}).resolved()
	assert.Equal(t, 10, l.MaxValues)
}
