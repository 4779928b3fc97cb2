package kmeans

import (
	"fmt"
	"math"
	"sync"
	"time"

	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/asm/f64"
	"github.com/centroidlab/centroid/internal/check"
	"github.com/centroidlab/centroid/internal/nearest"
	"github.com/centroidlab/centroid/scale"
)

// Model is a fitted clustering: k centers in the clustering space, the
// metric, and the learned scaler that maps raw rows into that space. A
// Model may also carry a schema (feature names, see WithFeatures), its
// creation time (WithCreated), the library version that made it and a
// summary of its training data (Training).
//
// A Model is immutable once made by Cluster or decoded, and safe for
// concurrent use by multiple goroutines; the With methods return modified
// copies. Its zero value has no centers; its methods return an error
// wrapping ErrModel.
type Model struct {
	k, d    int
	centers []float64 // k×d, clustering space
	raw     []float64 // k×d, raw units (or clustering space if not invertible)
	metric  distance.Objective
	kind    metricKind
	scaler  scale.Scaler
	shift   []float64 // affine scaler: z = (x − shift)/div
	div     []float64
	pool    *sync.Pool   // *[]float64 scratch of length 2d (raw row, scaled row), for the general path
	set     *nearest.Set // Euclidean and Manhattan: the serving search

	// Document content (see document.go).
	features []string       // nil: no schema
	columns  map[string]int // feature name → column
	created  time.Time      // zero: unknown
	library  string         // LibraryVersion of the code that made the model
	training *Training      // nil: no summary (version 1 documents)
	digest   *digest        // lazily computed checksum of the canonical document
}

type metricKind int

const (
	otherMetric metricKind = iota
	euclidean
	manhattan
	cosine
)

// stackDim is the largest dimension served from a stack buffer in Nearest;
// smallDim the largest served from a smaller one (less to clear per call).
const (
	stackDim = 64
	smallDim = 16
)

func newModel(centers []float64, k, d int, metric distance.Objective, sc scale.Scaler) *Model {
	m := &Model{k: k, d: d, centers: append([]float64(nil), centers...), metric: metric, scaler: sc, library: LibraryVersion, digest: new(digest)}
	switch distance.ArithmeticOf(metric) {
	case distance.SquaredDifferences:
		m.kind = euclidean
	case distance.AbsoluteDifferences:
		m.kind = manhattan
	case distance.CosineDissimilarity:
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
	switch m.kind {
	case euclidean:
		m.set = nearest.NewSet(m.centers, k, d, nearest.SquaredEuclidean)
	case manhattan:
		m.set = nearest.NewSet(m.centers, k, d, nearest.Manhattan)
	}
	m.pool = &sync.Pool{New: func() any { s := make([]float64, 2*d); return &s }}
	return m
}

// MaxServedValues is the largest k·d of a Model: NewModel refuses more,
// and so do the decoders whatever their DecodeLimits. The serving search
// keeps the centers packed for its kernel (8·k·d bytes, 128 MiB at the
// maximum) and measures a row against every center.
const MaxServedValues = nearest.MaxValues

// NewModel returns the model of the k×d centers, given in the clustering
// space (the space after scaler, where Cluster measures distances), with
// the metric (nil means distance.Euclidean), the learned scaler that maps
// raw rows into that space (nil means none) and the feature names (nil
// means no schema). It is how code outside Cluster — streaming and
// distributed fitting, a model computed elsewhere — makes a Model; it
// copies centers and features.
//
// It checks everything a decoded document is checked for: the centers are
// finite and, under Cosine, of unit length (within 1e-6); the metric has a
// center rule; the scaler has d columns; the features are valid (see
// WithFeatures). It returns an error wrapping ErrModel (ErrTooLarge when
// k·d exceeds MaxServedValues), ErrMetric or ErrSchema. The model has no training summary; add one with
// WithTraining.
func NewModel(centers mat.Matrix, metric distance.Objective, scaler scale.Scaler, features []string) (*Model, error) {
	k, d, err := check.Matrix(centers, ErrModel)
	if err != nil {
		return nil, err
	}
	if k > MaxServedValues/d {
		return nil, fmt.Errorf("%w: k·d = %d·%d exceeds %d values", ErrTooLarge, k, d, MaxServedValues)
	}
	if metric == nil {
		metric = distance.Euclidean{}
	}
	if err := distance.Check(metric); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrMetric, err)
	}
	c, _ := check.RowMajor(centers)
	if err := checkCenters(c, k, d, metric); err != nil {
		return nil, err
	}
	if scaler != nil && scaler.Dim() != d {
		return nil, fmt.Errorf("%w: scaler has %d columns, centers have %d", ErrModel, scaler.Dim(), d)
	}
	m := newModel(c, k, d, metric, scaler)
	if features != nil {
		return m.WithFeatures(features)
	}
	return m, nil
}

// checkCenters checks k×d centers in the clustering space for metric:
// finite, accepted by the metric, of unit length under the unit-mean rule.
func checkCenters(c []float64, k, d int, metric distance.Objective) error {
	for j := range k {
		row := c[j*d : (j+1)*d]
		if err := distance.CheckRow(metric, row); err != nil {
			return fmt.Errorf("%w: center %d: %w", ErrModel, j, err)
		}
		if metric.Rule() == distance.UnitMeanRule {
			var s float64
			for _, v := range row {
				s += v * v
			}
			if math.Abs(math.Sqrt(s)-1) > 1e-6 {
				return fmt.Errorf("%w: center %d has norm %v under %s, want 1", ErrModel, j, math.Sqrt(s), metric.Name())
			}
		}
	}
	return nil
}

// WithTraining returns a copy of the model that carries the training
// summary t (copied), for a model made by NewModel. t must hold one entry
// per cluster whose sizes add up to t.Rows ≥ 1, with finite, non-negative
// weights, costs and ordered distance quantiles, a positive total weight,
// and nothing but zeros for a cluster without rows; otherwise it returns an
// error wrapping ErrModel. A nil t removes the summary.
func (m *Model) WithTraining(t *Training) (*Model, error) {
	if m == nil || m.k == 0 {
		return nil, fmt.Errorf("%w: model has no centers", ErrModel)
	}
	c := m.clone()
	if t == nil {
		c.training = nil
		return c, nil
	}
	if err := t.check(m.k); err != nil {
		return nil, err
	}
	cp := *t
	cp.Clusters = append([]ClusterSummary(nil), t.Clusters...)
	c.training = &cp
	return c, nil
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

// Assignment is the answer for one row: its cluster, the distance to that
// cluster's center and the margin to the runner-up.
type Assignment struct {
	// Cluster is the index of the nearest center (lowest index on ties).
	Cluster int
	// Distance is the distance from the row to that center in the
	// clustering space, as returned by Nearest.
	Distance float64
	// Margin is the distance to the second-nearest center minus Distance:
	// zero when two centers are equally near, large when the label is
	// clear-cut. It is +Inf when the model has a single cluster.
	Margin float64
}

// Nearest returns the cluster whose center is nearest to the raw row x and
// the distance to it in the clustering space (Euclidean distance, Manhattan
// distance or cosine dissimilarity 1−cos). Ties go to the lowest index, as
// in Cluster, so the training rows get their Result.Assignments back.
//
// It allocates nothing and is safe for concurrent use. It returns an error
// wrapping ErrDimension if len(x) != Dim(), ErrNotFinite if x holds NaN or
// ±Inf (or scales to ±Inf), ErrMetric if the metric rejects the scaled row
// (a zero row under Cosine), or ErrModel for a zero Model.
//
// The answer is the one Cluster's assignment gives, bit for bit: under
// Euclidean a vector kernel finds the nearest center (see
// internal/nearest.Set) and is trusted only when no other center is within
// its rounding bound, otherwise, and under Manhattan, every center is
// measured with exactly the arithmetic of the metric's Loss.
func (m *Model) Nearest(x []float64) (int, float64, error) {
	j, loss, _, err := m.locate(x, false)
	if err != nil {
		return -1, 0, err
	}
	return j, m.lossToDistance(loss), nil
}

// Assign is Nearest with the margin to the second-nearest center. It
// allocates nothing, is safe for concurrent use and returns the same
// errors as Nearest (with Cluster = -1).
func (m *Model) Assign(x []float64) (Assignment, error) {
	j, loss, second, err := m.locate(x, true)
	if err != nil {
		return Assignment{Cluster: -1}, err
	}
	d := m.lossToDistance(loss)
	return Assignment{Cluster: j, Distance: d, Margin: m.lossToDistance(second) - d}, nil
}

// lossToDistance converts a loss of the model's metric to a distance.
func (m *Model) lossToDistance(l float64) float64 {
	if m.kind == euclidean {
		return math.Sqrt(l)
	}
	return l // Manhattan and Cosine losses are distances; locateOther returns distances
}

// locate finds the nearest center of the raw row x and, if second, the
// loss of the second-nearest (+Inf if k = 1). Built-in metrics return
// losses, other metrics distances.
func (m *Model) locate(x []float64, second bool) (int, float64, float64, error) {
	if m == nil || m.k == 0 {
		return -1, 0, 0, fmt.Errorf("%w: model has no centers", ErrModel)
	}
	if len(x) != m.d {
		return -1, 0, 0, fmt.Errorf("%w: row has %d values, model has %d features", ErrDimension, len(x), m.d)
	}
	if m.kind != otherMetric && m.scaler == nil {
		// A NaN or ±Inf in x makes every loss NaN or +Inf, so the search
		// fails; only then is x checked, to name the feature.
		j, l, l2, err := m.searchKnown(x, second)
		if err != nil {
			if ferr := checkFinite1(x, ""); ferr != nil {
				return -1, 0, 0, ferr
			}
		}
		return j, l, l2, err
	}
	if m.kind != otherMetric && m.shift != nil {
		switch {
		case m.d <= smallDim:
			var buf [smallDim]float64
			return m.locateKnown(buf[:m.d], x, second)
		case m.d <= stackDim:
			var buf [stackDim]float64
			return m.locateKnown(buf[:m.d], x, second)
		}
	}
	if err := checkFinite1(x, ""); err != nil {
		return -1, 0, 0, err
	}
	// The row is copied before any interface call (Scaler.Apply,
	// Metric.Loss), so that x never escapes: callers may pass a stack
	// buffer without an allocation.
	p := m.pool.Get().(*[]float64)
	defer m.pool.Put(p)
	raw, z := (*p)[:m.d], (*p)[m.d:]
	copy(raw, x)
	if m.scaler != nil {
		m.scaler.Apply(z, raw)
		if err := checkFinite1(z, " after scaling"); err != nil {
			return -1, 0, 0, err
		}
	} else {
		copy(z, raw)
	}
	if m.kind != otherMetric {
		return m.searchKnown(z, second)
	}
	return m.locateOther(z, second)
}

// checkFinite1 returns an error wrapping ErrNotFinite naming the first NaN
// or ±Inf of x.
func checkFinite1(x []float64, where string) error {
	for j, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%w: feature %d is %v%s", ErrNotFinite, j, v, where)
		}
	}
	return nil
}

// locateKnown scales x into z by the affine scaler, checks it and
// searches. z is a stack buffer of the caller: nothing here may let it
// escape (the kernels it reaches do not keep their arguments).
func (m *Model) locateKnown(z, x []float64, second bool) (int, float64, float64, error) {
	x = x[:len(z)]
	if j := f64.Affine(z, x, m.shift, m.div); j >= 0 {
		return -1, 0, 0, notFinite(x, j, z[j])
	}
	return m.searchKnown(z, second)
}

// notFinite reports the non-finite value s of column j of x (or of its
// scaled form).
func notFinite(x []float64, j int, s float64) error {
	if v := x[j]; math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("%w: feature %d is %v", ErrNotFinite, j, v)
	}
	return fmt.Errorf("%w: feature %d is %v after scaling", ErrNotFinite, j, s)
}

// searchKnown finds the nearest (and second-nearest) center of the scaled
// row z under a built-in metric, computing exactly the losses that Cluster
// used.
func (m *Model) searchKnown(z []float64, second bool) (int, float64, float64, error) {
	var best int
	var bestLoss, secondLoss float64
	switch m.kind {
	case cosine:
		if (distance.Cosine{}).CheckRow(z) != nil {
			return -1, 0, 0, fmt.Errorf("%w: %w under cosine", ErrMetric, distance.ErrZeroVector)
		}
		best, bestLoss, secondLoss = 0, math.Inf(1), math.Inf(1)
		d := m.d
		for j := range m.k {
			l := (distance.Cosine{}).Distance(z, m.centers[j*d:(j+1)*d])
			if l < bestLoss {
				best, bestLoss, secondLoss = j, l, bestLoss
			} else if l < secondLoss {
				secondLoss = l
			}
		}
	default:
		if second {
			best, bestLoss, secondLoss = m.set.Nearest2(z)
		} else {
			best, bestLoss = m.set.Nearest(z)
		}
	}
	if math.IsInf(bestLoss, 1) {
		return -1, 0, 0, fmt.Errorf("%w: the distance to every center overflows", ErrNotFinite)
	}
	return best, bestLoss, secondLoss, nil
}

// locateOther serves a metric that is not built in, through its methods.
func (m *Model) locateOther(z []float64, second bool) (int, float64, float64, error) {
	if rc, ok := m.metric.(distance.RowChecker); ok {
		if err := rc.CheckRow(z); err != nil {
			return -1, 0, 0, fmt.Errorf("%w: %w", ErrMetric, err)
		}
	}
	d := m.d
	best, bestLoss, runner, runnerLoss := 0, math.Inf(1), -1, math.Inf(1)
	for j := range m.k {
		l := m.metric.Loss(z, m.centers[j*d:(j+1)*d])
		if l < bestLoss {
			best, bestLoss, runner, runnerLoss = j, l, best, bestLoss
		} else if l < runnerLoss {
			runner, runnerLoss = j, l
		}
	}
	if math.IsInf(bestLoss, 1) {
		return -1, 0, 0, fmt.Errorf("%w: the distance to every center overflows", ErrNotFinite)
	}
	secondDist := math.Inf(1)
	if second && runner >= 0 && !math.IsInf(runnerLoss, 1) {
		secondDist = m.metric.Distance(z, m.centers[runner*d:(runner+1)*d])
	}
	return best, m.metric.Distance(z, m.centers[best*d:(best+1)*d]), secondDist, nil
}

// NearestBatch labels every row of the raw matrix X into dst (len = rows of
// X) and, if dist is not nil, writes each row's distance into dist. It
// returns an error naming the first bad row; dst is then only partly
// written. It allocates nothing for a mat.RawMatrixer such as *mat.Dense.
func (m *Model) NearestBatch(dst []int, dist []float64, X mat.Matrix) error {
	n, err := m.checkBatch(X, len(dst), dist != nil, len(dist))
	if err != nil {
		return err
	}
	return m.eachRow(X, n, func(i int, row []float64) error {
		c, dd, err := m.Nearest(row)
		if err != nil {
			return err
		}
		dst[i] = c
		if dist != nil {
			dist[i] = dd
		}
		return nil
	})
}

// AssignBatch writes the Assignment of every row of the raw matrix X into
// dst (len = rows of X). It returns an error naming the first bad row; dst
// is then only partly written. It allocates nothing for a mat.RawMatrixer
// such as *mat.Dense.
func (m *Model) AssignBatch(dst []Assignment, X mat.Matrix) error {
	n, err := m.checkBatch(X, len(dst), false, 0)
	if err != nil {
		return err
	}
	return m.eachRow(X, n, func(i int, row []float64) error {
		a, err := m.Assign(row)
		dst[i] = a
		return err
	})
}

// checkBatch checks the shapes of a batch call and returns the row count.
func (m *Model) checkBatch(X mat.Matrix, lenDst int, hasDist bool, lenDist int) (int, error) {
	if m == nil || m.k == 0 {
		return 0, fmt.Errorf("%w: model has no centers", ErrModel)
	}
	if X == nil {
		return 0, fmt.Errorf("%w: nil matrix", ErrDimension)
	}
	if d, ok := X.(*mat.Dense); ok && d == nil {
		return 0, fmt.Errorf("%w: nil *mat.Dense", ErrDimension)
	}
	n, d := X.Dims()
	if d != m.d {
		return 0, fmt.Errorf("%w: matrix has %d columns, model has %d features", ErrDimension, d, m.d)
	}
	if lenDst != n || (hasDist && lenDist != n) {
		return 0, fmt.Errorf("%w: %d rows but len(dst) = %d, len(dist) = %d", ErrDimension, n, lenDst, lenDist)
	}
	return n, nil
}

// eachRow calls fn with every row of X in order, reading a mat.RawMatrixer
// in place, and stops at the first error, which it returns naming the row.
func (m *Model) eachRow(X mat.Matrix, n int, fn func(i int, row []float64) error) error {
	var raw blas64.General
	rm, fast := X.(mat.RawMatrixer)
	var row []float64
	if fast {
		raw = rm.RawMatrix()
	} else {
		row = make([]float64, m.d)
	}
	for i := range n {
		if fast {
			row = raw.Data[i*raw.Stride : i*raw.Stride+m.d]
		} else {
			mat.Row(row, i, X)
		}
		if err := fn(i, row); err != nil {
			return fmt.Errorf("row %d: %w", i, err)
		}
	}
	return nil
}

// Distances writes the distance from the raw row x to every center, in the
// clustering space, into dst (len K; nil allocates) and returns it. It
// checks x as Nearest does: an error wrapping ErrDimension for a row of
// the wrong length, ErrNotFinite for NaN or ±Inf in x, after scaling, or in
// a distance that overflows, ErrMetric for a row the metric rejects, and
// ErrModel for a zero Model. It allocates the scaled row.
func (m *Model) Distances(dst, x []float64) ([]float64, error) {
	if m == nil || m.k == 0 {
		return nil, fmt.Errorf("%w: model has no centers", ErrModel)
	}
	if len(x) != m.d {
		return nil, fmt.Errorf("%w: row has %d values, model has %d features", ErrDimension, len(x), m.d)
	}
	if err := checkFinite1(x, ""); err != nil {
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
		if err := checkFinite1(z, " after scaling"); err != nil {
			return nil, err
		}
	} else {
		copy(z, x)
	}
	if rc, ok := m.metric.(distance.RowChecker); ok {
		if err := rc.CheckRow(z); err != nil {
			return nil, fmt.Errorf("%w: %w", ErrMetric, err)
		}
	}
	for j := range m.k {
		v := m.metric.Distance(z, m.centers[j*m.d:(j+1)*m.d])
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%w: the distance to center %d is %v", ErrNotFinite, j, v)
		}
		dst[j] = v
	}
	return dst, nil
}

// HasSchema reports whether the model carries feature names (see
// WithFeatures), which rows given by name need.
func (m *Model) HasSchema() bool { return m != nil && m.columns != nil }

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
// of a raw row is the feature names[j]. Names must be d distinct, valid
// UTF-8 strings of at most MaxFeatureName bytes made only of visible
// characters: no control, format or default-ignorable characters, and no
// space but an inner U+0020; otherwise it returns an error wrapping
// ErrSchema. A nil names removes the schema.
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
