package kmeans

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"math"
	"os"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/scale"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
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

	// A huge claimed k·d is refused before the centers are looked at.
	huge := `{"format":"centroid/kmeans-model","version":1,"metric":"euclidean","k":4611686018427387904,"dim":4,"centers":[],"scaler":null}`
	_, err = ReadModel(strings.NewReader(huge), nil)
	require.ErrorIs(t, err, ErrTooLarge)

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
