package kmeans

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"
	"sync"
	"time"
	"unicode"
	"unicode/utf8"

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

// Training summarises the rows a Model was made from, measured in the
// clustering space by Cluster from the final assignments.
type Training struct {
	// Rows is the number of rows clustered, weight-zero rows included.
	Rows int
	// Clusters holds one summary per cluster.
	Clusters []ClusterSummary
}

// ClusterSummary describes the training members of one cluster.
type ClusterSummary struct {
	// Size is the number of rows assigned to the cluster.
	Size int
	// Weight is their total weight (equal to Size without weights).
	Weight float64
	// Cost is the cluster's share of Result.Cost.
	Cost float64
	// Distances are quantiles of the members' distances to the center.
	Distances Quantiles
}

// Quantiles of the distances from a cluster's members to its center, in
// the clustering space and in the units of Model.Nearest. Only members of
// positive weight count, each as often as its weight: the q-quantile is the
// smallest member distance v such that the members at distance ≤ v hold at
// least the fraction q of the cluster's weight (the inverse of the weighted
// empirical distribution function; without weights the ⌈q·n⌉-th smallest
// of n distances). All are zero for a cluster without weight.
type Quantiles struct {
	P50, P90, P99 float64
	Max           float64
}

// Shares returns each cluster's share of the total training weight.
func (t *Training) Shares() []float64 {
	s := make([]float64, len(t.Clusters))
	var total float64
	for _, c := range t.Clusters {
		total += c.Weight
	}
	for j, c := range t.Clusters {
		s[j] = c.Weight / total
	}
	return s
}

// Cost returns the total cost, the sum of the clusters' costs in order.
func (t *Training) Cost() float64 {
	var s float64
	for _, c := range t.Clusters {
		s += c.Cost
	}
	return s
}

// Training returns a copy of the training summary, or nil if the model has
// none (it was decoded from a version 1 document).
func (m *Model) Training() *Training {
	if m == nil || m.training == nil {
		return nil
	}
	t := *m.training
	t.Clusters = append([]ClusterSummary(nil), t.Clusters...)
	return &t
}

// Features returns a copy of the feature names (the schema), or nil if the
// model has none.
func (m *Model) Features() []string {
	if m == nil || m.features == nil {
		return nil
	}
	return append([]string(nil), m.features...)
}

// Column returns the column of the named feature and whether the model's
// schema has it.
func (m *Model) Column(name string) (int, bool) {
	if m == nil {
		return 0, false
	}
	j, ok := m.columns[name]
	return j, ok
}

// Created returns the model's creation time in UTC, or the zero time if
// unknown. Cluster leaves it zero so that its results stay deterministic;
// set it with WithCreated.
func (m *Model) Created() time.Time {
	if m == nil {
		return time.Time{}
	}
	return m.created
}

// Library returns the version of the library that made the model, or ""
// for a model decoded from a version 1 document.
func (m *Model) Library() string {
	if m == nil {
		return ""
	}
	return m.library
}

// WithFeatures returns a copy of the model whose schema is names: column j
// of a raw row is the feature names[j]. Names must be d non-empty, distinct,
// valid UTF-8 strings of at most MaxFeatureName bytes without control
// characters; otherwise it returns an error wrapping ErrSchema. A nil names
// removes the schema.
func (m *Model) WithFeatures(names []string) (*Model, error) {
	if m == nil || m.k == 0 {
		return nil, fmt.Errorf("%w: model has no centers", ErrModel)
	}
	c := m.clone()
	if names == nil {
		c.features, c.columns = nil, nil
		return c, nil
	}
	cols, err := checkFeatures(names, m.d)
	if err != nil {
		return nil, err
	}
	c.features, c.columns = append([]string(nil), names...), cols
	return c, nil
}

// WithCreated returns a copy of the model whose creation time is t in UTC
// (monotonic clock reading dropped). The zero time means unknown.
func (m *Model) WithCreated(t time.Time) *Model {
	if m == nil {
		return nil
	}
	c := m.clone()
	c.created = t.UTC()
	if t.IsZero() {
		c.created = time.Time{}
	}
	return c
}

// clone returns a shallow copy with a fresh checksum cache. The slices are
// never written after construction, so sharing them is safe.
func (m *Model) clone() *Model {
	c := *m
	c.digest = new(digest)
	return &c
}

// checkFeatures validates a schema of d names and returns the name → column
// map.
func checkFeatures(names []string, d int) (map[string]int, error) {
	if len(names) != d {
		return nil, fmt.Errorf("%w: %d feature names for %d columns", ErrSchema, len(names), d)
	}
	cols := make(map[string]int, d)
	for j, name := range names {
		if err := checkName(name, MaxFeatureName); err != nil {
			return nil, fmt.Errorf("%w: feature %d: %v", ErrSchema, j, err)
		}
		if i, dup := cols[name]; dup {
			return nil, fmt.Errorf("%w: features %d and %d are both named %q", ErrSchema, i, j, name)
		}
		cols[name] = j
	}
	return cols, nil
}

// checkName checks a stored name: non-empty, at most max bytes, valid UTF-8
// without control characters.
func checkName(s string, max int) error {
	switch {
	case s == "":
		return errors.New("empty name")
	case len(s) > max:
		return fmt.Errorf("name of %d bytes, longer than %d", len(s), max)
	case !utf8.ValidString(s):
		return fmt.Errorf("name %q is not valid UTF-8", s)
	case strings.IndexFunc(s, unicode.IsControl) >= 0:
		return fmt.Errorf("name %q holds a control character", s)
	}
	return nil
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

// number is a float64 that, unlike a plain float64, rejects JSON null
// (which encoding/json would silently skip).
type number float64

// UnmarshalJSON decodes a JSON number and rejects null.
func (n *number) UnmarshalJSON(b []byte) error {
	if string(b) == "null" {
		return errors.New("null where a number is required")
	}
	return json.Unmarshal(b, (*float64)(n))
}

// numbers is a JSON array of numbers that rejects null entries.
type numbers []number

// modelDocV1 is the version 1 document.
type modelDocV1 struct {
	Format  string          `json:"format"`
	Version int             `json:"version"`
	Metric  string          `json:"metric"`
	K       int             `json:"k"`
	Dim     int             `json:"dim"`
	Centers []numbers       `json:"centers"`
	Scaler  json.RawMessage `json:"scaler"`
}

// modelDoc is the version 2 document. Its field order is the canonical
// order; Checksum must stay last (MarshalJSON splices it in).
type modelDoc struct {
	Format   string          `json:"format"`
	Version  int             `json:"version"`
	Library  string          `json:"library,omitempty"`
	Created  string          `json:"created,omitempty"`
	Metric   string          `json:"metric"`
	K        int             `json:"k"`
	Dim      int             `json:"dim"`
	Features []string        `json:"features,omitempty"`
	Scaler   json.RawMessage `json:"scaler"`
	Centers  []numbers       `json:"centers"`
	Training *trainingDoc    `json:"training,omitempty"`
	Checksum string          `json:"checksum"`
}

type trainingDoc struct {
	Rows     int          `json:"rows"`
	Clusters []clusterDoc `json:"clusters"`
}

type clusterDoc struct {
	Size   int    `json:"size"`
	Weight number `json:"weight"`
	Cost   number `json:"cost"`
	P50    number `json:"p50"`
	P90    number `json:"p90"`
	P99    number `json:"p99"`
	Max    number `json:"max"`
}

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
		if err := distance.CheckRow(obj, centers[j*dim:]); err != nil {
			return nil, fmt.Errorf("%w: center %d: %w", ErrModel, j, err)
		}
		if obj.Rule() == distance.UnitMeanRule {
			var s float64
			for _, v := range centers[j*dim:] {
				s += v * v
			}
			if math.Abs(math.Sqrt(s)-1) > 1e-6 {
				return nil, fmt.Errorf("%w: center %d has norm %v under %s, want 1", ErrModel, j, math.Sqrt(s), metricName)
			}
		}
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

// decodeTraining checks a training summary of k clusters.
func decodeTraining(td *trainingDoc, k int) (*Training, error) {
	bad := func(format string, args ...any) error {
		return fmt.Errorf("%w: training: %s", ErrModel, fmt.Sprintf(format, args...))
	}
	if td.Rows < 1 {
		return nil, bad("rows = %d", td.Rows)
	}
	if len(td.Clusters) != k {
		return nil, bad("%d clusters, model has %d", len(td.Clusters), k)
	}
	t := &Training{Rows: td.Rows, Clusters: make([]ClusterSummary, k)}
	rows := 0
	var weight float64
	for j, c := range td.Clusters {
		if c.Size < 0 || c.Size > td.Rows-rows {
			return nil, bad("cluster %d: size %d does not fit %d rows", j, c.Size, td.Rows)
		}
		rows += c.Size
		vals := []float64{float64(c.Weight), float64(c.Cost), float64(c.P50), float64(c.P90), float64(c.P99), float64(c.Max)}
		for _, v := range vals {
			if !(v >= 0) || math.IsInf(v, 1) {
				return nil, bad("cluster %d: value %v, want finite and ≥ 0", j, v)
			}
		}
		if !(c.P50 <= c.P90 && c.P90 <= c.P99 && c.P99 <= c.Max) {
			return nil, bad("cluster %d: quantiles %v ≤ %v ≤ %v ≤ %v out of order", j, c.P50, c.P90, c.P99, c.Max)
		}
		if c.Size == 0 && (c.Weight != 0 || c.Cost != 0 || c.Max != 0) {
			return nil, bad("cluster %d: no rows but weight, cost or distances", j)
		}
		weight += float64(c.Weight)
		t.Clusters[j] = ClusterSummary{Size: c.Size, Weight: float64(c.Weight), Cost: float64(c.Cost),
			Distances: Quantiles{P50: float64(c.P50), P90: float64(c.P90), P99: float64(c.P99), Max: float64(c.Max)}}
	}
	if rows != td.Rows {
		return nil, bad("sizes add up to %d, rows = %d", rows, td.Rows)
	}
	if !(weight > 0) || math.IsInf(weight, 1) {
		return nil, bad("total weight %v", weight)
	}
	return t, nil
}
