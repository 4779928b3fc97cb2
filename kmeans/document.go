package kmeans

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"sync"
	"time"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/scale"
)

// LibraryVersion is the version of this library. Models made by Cluster
// record it, and their documents carry it in the "library" field.
const LibraryVersion = "0.1.0"

// Model documents: format name and the version MarshalJSON writes.
// Decoding reads versions 1 and 2.
const (
	modelFormat  = "centroid/kmeans-model"
	ModelVersion = 2 // version written by MarshalJSON
)

// Default decoding limits (see DecodeLimits).
const (
	DefaultMaxModelBytes  = 64 << 20 // 64 MiB
	DefaultMaxModelValues = 1 << 22  // k·d; 4 Mi values, 32 MiB of centers
)

// Limits on names stored in a document.
const (
	// MaxFeatureName is the longest feature name accepted, in bytes.
	MaxFeatureName = 256
	maxLibraryName = 64
)

// DecodeLimits bound the size of a model document that ReadModel accepts,
// so that a service can read documents from untrusted sources. The zero
// value means the defaults.
type DecodeLimits struct {
	// MaxBytes is the largest document in bytes. Zero or negative means
	// DefaultMaxModelBytes.
	MaxBytes int64
	// MaxValues is the largest number of center values k·d. Zero or
	// negative means DefaultMaxModelValues.
	MaxValues int
}

func (l *DecodeLimits) resolved() DecodeLimits {
	var r DecodeLimits
	if l != nil {
		r = *l
	}
	if r.MaxBytes <= 0 {
		r.MaxBytes = DefaultMaxModelBytes
	}
	if r.MaxValues <= 0 {
		r.MaxValues = DefaultMaxModelValues
	}
	return r
}

// ReadModel reads one model document of version 1 or 2 from r, within the
// limits lim (nil means the defaults), and returns the decoded Model. It
// reads at most lim.MaxBytes+1 bytes. Every problem returns an error
// wrapping ErrModel; ErrTooLarge, ErrChecksum and ErrVersion single out the
// size, integrity and version failures. See Model.UnmarshalJSON for the
// checks.
func ReadModel(r io.Reader, lim *DecodeLimits) (*Model, error) {
	l := lim.resolved()
	b, err := io.ReadAll(io.LimitReader(r, l.MaxBytes+1))
	if err != nil {
		return nil, fmt.Errorf("%w: reading: %w", ErrModel, err)
	}
	return decodeModel(b, l)
}

// digest caches a model's checksum; it is computed at most once.
type digest struct {
	once sync.Once
	sum  string
	err  error
}

// Checksum returns the checksum of the model's canonical document,
// "sha256:" followed by 64 lowercase hexadecimal digits: the value
// MarshalJSON writes in the "checksum" field. It returns an error wrapping
// ErrModel if the model cannot be encoded (zero Model, or a scaler type
// that package scale cannot encode).
func (m *Model) Checksum() (string, error) {
	if m == nil || m.k == 0 {
		return "", fmt.Errorf("%w: model has no centers", ErrModel)
	}
	m.digest.once.Do(func() {
		canon, err := m.canonical()
		if err != nil {
			m.digest.err = err
			return
		}
		m.digest.sum = checksumOf(canon)
	})
	return m.digest.sum, m.digest.err
}

func checksumOf(canon []byte) string {
	h := sha256.Sum256(canon)
	return checksumPrefix + hex.EncodeToString(h[:])
}

const checksumPrefix = "sha256:"

// document returns the version 2 document of m with an empty checksum.
func (m *Model) document() (*modelDoc, error) {
	sc, err := scale.Encode(m.scaler)
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrModel, err)
	}
	doc := &modelDoc{
		Format: modelFormat, Version: ModelVersion, Library: m.library,
		Metric: m.metric.Name(), K: m.k, Dim: m.d, Features: m.features, Scaler: sc,
	}
	if !m.created.IsZero() {
		doc.Created = m.created.Format(time.RFC3339Nano)
	}
	doc.Centers = make([]numbers, m.k)
	for j := range m.k {
		row := make(numbers, m.d)
		for i, v := range m.centers[j*m.d : (j+1)*m.d] {
			row[i] = number(v)
		}
		doc.Centers[j] = row
	}
	if t := m.training; t != nil {
		td := &trainingDoc{Rows: t.Rows, Clusters: make([]clusterDoc, len(t.Clusters))}
		for j, c := range t.Clusters {
			q := c.Distances
			td.Clusters[j] = clusterDoc{Size: c.Size, Weight: number(c.Weight), Cost: number(c.Cost),
				P50: number(q.P50), P90: number(q.P90), P99: number(q.P99), Max: number(q.Max)}
		}
		doc.Training = td
	}
	return doc, nil
}

// canonical returns the canonical encoding of m: the compact JSON that
// encoding/json writes for the version 2 document with fields in the order
// of modelDoc, optional fields omitted when empty, floats in the shortest
// form that parses back to the same bits, and "checksum":"" last.
func (m *Model) canonical() ([]byte, error) {
	doc, err := m.document()
	if err != nil {
		return nil, err
	}
	b, err := json.Marshal(doc)
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrModel, err)
	}
	return b, nil
}

// emptyChecksum is how the canonical encoding ends.
const emptyChecksum = `"checksum":""}`

// MarshalJSON encodes the model as a version 2 document:
//
//	{"format":"centroid/kmeans-model","version":2,"library":"0.1.0",
//	 "created":"2025-03-01T09:30:00Z","metric":"euclidean","k":5,"dim":6,
//	 "features":["trips_per_day",...],"scaler":{...}|null,
//	 "centers":[[...],...],"training":{"rows":500,"clusters":[{"size":98,
//	 "weight":98,"cost":41.2,"p50":0.61,"p90":1.02,"p99":1.57,"max":1.74},...]},
//	 "checksum":"sha256:..."}
//
// The centers are in the clustering space (exact); created, features and
// training are omitted when the model has none. The checksum is SHA-256
// over the canonical encoding: the compact JSON of this same document,
// written by this package with its fields in the order above, and with
// "checksum":"" (see Checksum). A reader re-encodes what it decoded the same
// way, so reformatting a document (indentation, key order, number
// spelling) keeps it valid, while any change of content does not.
func (m *Model) MarshalJSON() ([]byte, error) {
	if m == nil || m.k == 0 {
		return nil, fmt.Errorf("%w: model has no centers", ErrModel)
	}
	canon, err := m.canonical()
	if err != nil {
		return nil, err
	}
	sum, err := m.Checksum()
	if err != nil {
		return nil, err
	}
	if !bytes.HasSuffix(canon, []byte(emptyChecksum)) {
		return nil, fmt.Errorf("%w: canonical encoding does not end with the checksum", ErrModel)
	}
	out := make([]byte, 0, len(canon)+len(sum))
	out = append(out, canon[:len(canon)-2]...)
	out = append(out, sum...)
	return append(out, `"}`...), nil
}

// UnmarshalJSON decodes a version 1 or 2 document within the default
// DecodeLimits, checking everything: format and known version; no unknown
// fields, no null where a number belongs and no trailing data; a known
// metric with a center rule; k·d within the limits and k and dim against
// the centers; finite values (unit-length centers under Cosine); a valid
// scaler of the same dimension; for version 2 also the feature names (see
// WithFeatures), an RFC 3339 creation time in UTC, a consistent training
// summary (one entry per cluster, sizes adding up to rows, finite
// non-negative values, ordered quantiles) and the checksum (see
// MarshalJSON). Any problem returns an error wrapping ErrModel and leaves m
// unchanged. Do not decode into a Model that other goroutines are using.
func (m *Model) UnmarshalJSON(b []byte) error {
	d, err := decodeModel(b, (*DecodeLimits)(nil).resolved())
	if err != nil {
		return err
	}
	*m = *d
	return nil
}

// decodeModel decodes and validates a document of any supported version.
func decodeModel(b []byte, lim DecodeLimits) (*Model, error) {
	if int64(len(b)) > lim.MaxBytes {
		return nil, fmt.Errorf("%w: more than %d bytes", ErrTooLarge, lim.MaxBytes)
	}
	var head struct {
		Format  string `json:"format"`
		Version int    `json:"version"`
	}
	if err := json.Unmarshal(b, &head); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrModel, err)
	}
	if head.Format != modelFormat {
		return nil, fmt.Errorf("%w: format %q, want %q", ErrModel, head.Format, modelFormat)
	}
	switch head.Version {
	case 1:
		var doc modelDocV1
		if err := strictDecode(b, &doc); err != nil {
			return nil, err
		}
		return buildModel(doc.Metric, doc.K, doc.Dim, doc.Centers, doc.Scaler, lim)
	case 2:
		var doc modelDoc
		if err := strictDecode(b, &doc); err != nil {
			return nil, err
		}
		return decodeV2(&doc, lim)
	}
	return nil, fmt.Errorf("%w: version %d (this build reads 1 and %d)", ErrVersion, head.Version, ModelVersion)
}

// strictDecode decodes exactly one JSON value into v, rejecting unknown
// fields and trailing data.
func strictDecode(b []byte, v any) error {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return fmt.Errorf("%w: %w", ErrModel, err)
	}
	if _, err := dec.Token(); err != io.EOF {
		return fmt.Errorf("%w: data after the document", ErrModel)
	}
	return nil
}

// buildModel checks the content shared by all versions and makes the model.
func buildModel(metricName string, k, dim int, rows []numbers, scRaw json.RawMessage, lim DecodeLimits) (*Model, error) {
	if k < 1 || dim < 1 {
		return nil, fmt.Errorf("%w: k = %d, dim = %d", ErrModel, k, dim)
	}
	if k > lim.MaxValues/dim {
		return nil, fmt.Errorf("%w: k·dim = %d·%d exceeds %d values", ErrTooLarge, k, dim, lim.MaxValues)
	}
	if len(rows) != k {
		return nil, fmt.Errorf("%w: k = %d with %d centers", ErrModel, k, len(rows))
	}
	metric, err := distance.ByName(metricName)
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrModel, err)
	}
	obj, ok := metric.(distance.Objective)
	if !ok {
		return nil, fmt.Errorf("%w: metric %q has no center rule", ErrModel, metricName)
	}
	centers := make([]float64, 0, k*dim)
	for j, c := range rows {
		if len(c) != dim {
			return nil, fmt.Errorf("%w: center %d has %d values, want %d", ErrModel, j, len(c), dim)
		}
		for _, v := range c {
			centers = append(centers, float64(v))
		}
	}
	if err := checkCenters(centers, k, dim, obj); err != nil {
		return nil, err
	}
	var sc scale.Scaler
	if len(scRaw) > 0 {
		sc, err = scale.Decode(scRaw)
		if err != nil {
			return nil, fmt.Errorf("%w: %w", ErrModel, err)
		}
		if sc != nil && sc.Dim() != dim {
			return nil, fmt.Errorf("%w: scaler has %d columns, model has %d", ErrModel, sc.Dim(), dim)
		}
	}
	m := newModel(centers, k, dim, obj, sc)
	m.library = ""
	return m, nil
}

// decodeV2 checks the version 2 content and the checksum.
func decodeV2(doc *modelDoc, lim DecodeLimits) (*Model, error) {
	m, err := buildModel(doc.Metric, doc.K, doc.Dim, doc.Centers, doc.Scaler, lim)
	if err != nil {
		return nil, err
	}
	if doc.Library != "" {
		if err := checkName(doc.Library, maxLibraryName); err != nil {
			return nil, fmt.Errorf("%w: library: %v", ErrModel, err)
		}
		m.library = doc.Library
	}
	if doc.Created != "" {
		t, err := time.Parse(time.RFC3339Nano, doc.Created)
		if err != nil {
			return nil, fmt.Errorf("%w: created: %v", ErrModel, err)
		}
		if _, off := t.Zone(); off != 0 {
			return nil, fmt.Errorf("%w: created %q is not in UTC", ErrModel, doc.Created)
		}
		m.created = t.UTC()
	}
	if doc.Features != nil {
		cols, err := checkFeatures(doc.Features, doc.Dim)
		if err != nil {
			return nil, fmt.Errorf("%w: %w", ErrModel, err)
		}
		m.features, m.columns = doc.Features, cols
	}
	if doc.Training != nil {
		t, err := decodeTraining(doc.Training, doc.K)
		if err != nil {
			return nil, err
		}
		m.training = t
	}
	want, err := m.Checksum()
	if err != nil {
		return nil, err
	}
	switch {
	case doc.Checksum == "":
		return nil, fmt.Errorf("%w: the document has no checksum", ErrChecksum)
	case doc.Checksum != want:
		return nil, fmt.Errorf("%w: document says %q, content hashes to %q", ErrChecksum, doc.Checksum, want)
	}
	return m, nil
}

// decodeTraining converts and checks a training summary of k clusters.
func decodeTraining(td *trainingDoc, k int) (*Training, error) {
	t := &Training{Rows: td.Rows, Clusters: make([]ClusterSummary, len(td.Clusters))}
	for j, c := range td.Clusters {
		t.Clusters[j] = ClusterSummary{Size: c.Size, Weight: float64(c.Weight), Cost: float64(c.Cost),
			Distances: Quantiles{P50: float64(c.P50), P90: float64(c.P90), P99: float64(c.P99), Max: float64(c.Max)}}
	}
	if err := t.check(k); err != nil {
		return nil, err
	}
	return t, nil
}
