package kmeans

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"sync"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/scale"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"
)

// Model is a fitted clustering: k centers in the clustering space, the
// metric, and the learned scaler that maps raw rows into that space.
//
// A Model is immutable once made by Cluster or decoded, and safe for
// concurrent use by multiple goroutines. Its zero value has no centers;
// its methods return an error wrapping ErrModel.
type Model struct {
	k, d    int
	centers []float64 // k×d, clustering space
	raw     []float64 // k×d, raw units (or clustering space if not invertible)
	metric  distance.Objective
	kind    metricKind
	scaler  scale.Scaler
	shift   []float64 // affine scaler: z = (x − shift)/div
	div     []float64
	pool    *sync.Pool // *[]float64 scratch of length d, for the general path
}

type metricKind int

const (
	otherMetric metricKind = iota
	euclidean
	manhattan
	cosine
)

// stackDim is the largest dimension served from a stack buffer in Nearest.
const stackDim = 64

func newModel(centers []float64, k, d int, metric distance.Objective, sc scale.Scaler) *Model {
	m := &Model{k: k, d: d, centers: append([]float64(nil), centers...), metric: metric, scaler: sc}
	switch metric.(type) {
	case distance.Euclidean:
		m.kind = euclidean
	case distance.Manhattan:
		m.kind = manhattan
	case distance.Cosine:
		m.kind = cosine
	}
	if a, ok := sc.(scale.Affine); ok {
		m.shift, m.div = a.Affine()
	}
	m.raw = append([]float64(nil), m.centers...)
	if sc != nil {
		for j := range k {
			if err := sc.Invert(m.raw[j*d:(j+1)*d], m.centers[j*d:(j+1)*d]); err != nil {
				copy(m.raw[j*d:(j+1)*d], m.centers[j*d:(j+1)*d])
			}
		}
	}
	m.pool = &sync.Pool{New: func() any { s := make([]float64, d); return &s }}
	return m
}

// K returns the number of clusters.
func (m *Model) K() int { return m.k }

// Dim returns the number of features of a raw row.
func (m *Model) Dim() int { return m.d }

// Metric returns the clustering metric.
func (m *Model) Metric() distance.Objective { return m.metric }

// Scaler returns the learned scaler, or nil if rows are not scaled.
func (m *Model) Scaler() scale.Scaler { return m.scaler }

// Centers returns a new k×d matrix of the centers in the units of the raw
// data (the scaler inverted). If the scaler cannot be inverted
// (scale.UnitLength), the centers are returned in the clustering space.
func (m *Model) Centers() *mat.Dense {
	if m.k == 0 {
		return nil
	}
	return mat.NewDense(m.k, m.d, append([]float64(nil), m.raw...))
}

// ScaledCenters returns a new k×d matrix of the centers in the clustering
// (scaled) space, where distances and Cost are measured.
func (m *Model) ScaledCenters() *mat.Dense {
	if m.k == 0 {
		return nil
	}
	return mat.NewDense(m.k, m.d, append([]float64(nil), m.centers...))
}

// Nearest returns the cluster whose center is nearest to the raw row x and
// the distance to it in the clustering space (Euclidean distance, Manhattan
// distance or cosine dissimilarity 1−cos). Ties go to the lowest index, as
// in Cluster, so the training rows get their Result.Assignments back.
//
// It allocates nothing and is safe for concurrent use. It returns an error
// wrapping ErrDimension if len(x) != Dim(), ErrNotFinite if x holds NaN or
// ±Inf, ErrMetric if the metric rejects the scaled row (a zero row under
// Cosine), or ErrModel for a zero Model.
func (m *Model) Nearest(x []float64) (int, float64, error) {
	if err := m.check(x); err != nil {
		return -1, 0, err
	}
	if m.kind != otherMetric && (m.scaler == nil || m.shift != nil) && m.d <= stackDim {
		var buf [stackDim]float64
		z := buf[:m.d]
		if m.shift != nil {
			for j, v := range x {
				z[j] = (v - m.shift[j]) / m.div[j]
			}
		} else {
			copy(z, x)
		}
		return m.nearestKnown(z)
	}
	p := m.pool.Get().(*[]float64)
	defer m.pool.Put(p)
	z := *p
	if m.scaler != nil {
		m.scaler.Apply(z, x)
	} else {
		copy(z, x)
	}
	if m.kind != otherMetric {
		return m.nearestKnown(z)
	}
	if rc, ok := m.metric.(distance.RowChecker); ok {
		if err := rc.CheckRow(z); err != nil {
			return -1, 0, fmt.Errorf("%w: %w", ErrMetric, err)
		}
	}
	best, bestLoss := 0, math.Inf(1)
	for j := range m.k {
		if l := m.metric.Loss(z, m.centers[j*m.d:(j+1)*m.d]); l < bestLoss {
			best, bestLoss = j, l
		}
	}
	return best, m.metric.Distance(z, m.centers[best*m.d:(best+1)*m.d]), nil
}

func (m *Model) check(x []float64) error {
	if m == nil || m.k == 0 {
		return fmt.Errorf("%w: model has no centers", ErrModel)
	}
	if len(x) != m.d {
		return fmt.Errorf("%w: row has %d values, model has %d features", ErrDimension, len(x), m.d)
	}
	for j, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%w: feature %d is %v", ErrNotFinite, j, v)
		}
	}
	return nil
}

// nearestKnown is Nearest in the clustering space for the built-in metrics,
// computing exactly the losses that Cluster used.
func (m *Model) nearestKnown(z []float64) (int, float64, error) {
	d := m.d
	best, bestLoss := 0, math.Inf(1)
	switch m.kind {
	case euclidean:
		for j := range m.k {
			if l := distance.SqEuclidean(z, m.centers[j*d:(j+1)*d]); l < bestLoss {
				best, bestLoss = j, l
			}
		}
		return best, math.Sqrt(bestLoss), nil
	case manhattan:
		for j := range m.k {
			if l := (distance.Manhattan{}).Distance(z, m.centers[j*d:(j+1)*d]); l < bestLoss {
				best, bestLoss = j, l
			}
		}
		return best, bestLoss, nil
	default: // cosine
		zero := true
		for _, v := range z {
			if v != 0 {
				zero = false
				break
			}
		}
		if zero {
			return -1, 0, fmt.Errorf("%w: %w under cosine", ErrMetric, distance.ErrZeroVector)
		}
		for j := range m.k {
			if l := (distance.Cosine{}).Distance(z, m.centers[j*d:(j+1)*d]); l < bestLoss {
				best, bestLoss = j, l
			}
		}
		return best, bestLoss, nil
	}
}

// NearestBatch labels every row of the raw matrix X into dst (len = rows of
// X) and, if dist is not nil, writes each row's distance into dist. It
// returns an error naming the first bad row; dst is then only partly
// written.
func (m *Model) NearestBatch(dst []int, dist []float64, X mat.Matrix) error {
	if m == nil || m.k == 0 {
		return fmt.Errorf("%w: model has no centers", ErrModel)
	}
	if X == nil {
		return fmt.Errorf("%w: nil matrix", ErrDimension)
	}
	n, d := X.Dims()
	if d != m.d {
		return fmt.Errorf("%w: matrix has %d columns, model has %d features", ErrDimension, d, m.d)
	}
	if len(dst) != n || (dist != nil && len(dist) != n) {
		return fmt.Errorf("%w: %d rows but len(dst) = %d, len(dist) = %d", ErrDimension, n, len(dst), len(dist))
	}
	var raw blas64.General
	rm, fast := X.(mat.RawMatrixer)
	if fast {
		raw = rm.RawMatrix()
	}
	row := make([]float64, d)
	for i := range n {
		if fast {
			row = raw.Data[i*raw.Stride : i*raw.Stride+d]
		} else {
			mat.Row(row, i, X)
		}
		c, dd, err := m.Nearest(row)
		if err != nil {
			return fmt.Errorf("row %d: %w", i, err)
		}
		dst[i] = c
		if dist != nil {
			dist[i] = dd
		}
	}
	return nil
}

// Distances writes the distance from the raw row x to every center, in the
// clustering space, into dst (len K; nil allocates) and returns it.
func (m *Model) Distances(dst, x []float64) ([]float64, error) {
	if err := m.check(x); err != nil {
		return nil, err
	}
	if dst == nil {
		dst = make([]float64, m.k)
	}
	if len(dst) != m.k {
		return nil, fmt.Errorf("%w: len(dst) = %d, model has %d clusters", ErrDimension, len(dst), m.k)
	}
	z := make([]float64, m.d)
	if m.scaler != nil {
		m.scaler.Apply(z, x)
	} else {
		copy(z, x)
	}
	if rc, ok := m.metric.(distance.RowChecker); ok {
		if err := rc.CheckRow(z); err != nil {
			return nil, fmt.Errorf("%w: %w", ErrMetric, err)
		}
	}
	for j := range m.k {
		dst[j] = m.metric.Distance(z, m.centers[j*m.d:(j+1)*m.d])
	}
	return dst, nil
}

// Model documents: format name and versions this package reads.
const (
	modelFormat  = "centroid/kmeans-model"
	ModelVersion = 1 // version written by MarshalJSON
)

type modelDoc struct {
	Format  string          `json:"format"`
	Version int             `json:"version"`
	Metric  string          `json:"metric"`
	K       int             `json:"k"`
	Dim     int             `json:"dim"`
	Centers [][]float64     `json:"centers"`
	Scaler  json.RawMessage `json:"scaler"`
}

// MarshalJSON encodes the model as a versioned document: format name,
// version, metric name, k, dim, the centers in the clustering space (exact)
// and the learned scaler (null if none).
func (m *Model) MarshalJSON() ([]byte, error) {
	if m == nil || m.k == 0 {
		return nil, fmt.Errorf("%w: model has no centers", ErrModel)
	}
	doc := modelDoc{Format: modelFormat, Version: ModelVersion, Metric: m.metric.Name(), K: m.k, Dim: m.d}
	for j := range m.k {
		doc.Centers = append(doc.Centers, m.centers[j*m.d:(j+1)*m.d])
	}
	sc, err := scale.Encode(m.scaler)
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrModel, err)
	}
	doc.Scaler = sc
	return json.Marshal(doc)
}

// UnmarshalJSON decodes a document written by MarshalJSON, checking
// everything: format and version, known metric with a center rule, k and
// dim against the centers, finite values (unit-length centers under
// Cosine), and a valid scaler of the same dimension. Any problem returns an
// error wrapping ErrModel and leaves m unchanged. Do not decode into a Model
// that other goroutines are using.
func (m *Model) UnmarshalJSON(b []byte) error {
	var doc modelDoc
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&doc); err != nil {
		return fmt.Errorf("%w: %w", ErrModel, err)
	}
	if dec.More() {
		return fmt.Errorf("%w: trailing data after the document", ErrModel)
	}
	if doc.Format != modelFormat {
		return fmt.Errorf("%w: format %q, want %q", ErrModel, doc.Format, modelFormat)
	}
	if doc.Version != ModelVersion {
		return fmt.Errorf("%w: unknown version %d (this build reads %d)", ErrModel, doc.Version, ModelVersion)
	}
	metric, err := distance.ByName(doc.Metric)
	if err != nil {
		return fmt.Errorf("%w: %w", ErrModel, err)
	}
	obj, ok := metric.(distance.Objective)
	if !ok {
		return fmt.Errorf("%w: metric %q has no center rule", ErrModel, doc.Metric)
	}
	if doc.K < 1 || doc.Dim < 1 || len(doc.Centers) != doc.K {
		return fmt.Errorf("%w: k = %d, dim = %d with %d centers", ErrModel, doc.K, doc.Dim, len(doc.Centers))
	}
	centers := make([]float64, 0, doc.K*doc.Dim)
	for j, c := range doc.Centers {
		if len(c) != doc.Dim {
			return fmt.Errorf("%w: center %d has %d values, want %d", ErrModel, j, len(c), doc.Dim)
		}
		if err := distance.CheckRow(obj, c); err != nil {
			return fmt.Errorf("%w: center %d: %w", ErrModel, j, err)
		}
		centers = append(centers, c...)
	}
	var sc scale.Scaler
	if len(doc.Scaler) > 0 {
		sc, err = scale.Decode(doc.Scaler)
		if err != nil {
			return fmt.Errorf("%w: %w", ErrModel, err)
		}
		if sc != nil && sc.Dim() != doc.Dim {
			return fmt.Errorf("%w: scaler has %d columns, model has %d", ErrModel, sc.Dim(), doc.Dim)
		}
	}
	*m = *newModel(centers, doc.K, doc.Dim, obj, sc)
	return nil
}
