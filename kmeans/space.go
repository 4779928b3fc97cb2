package kmeans

import (
	"fmt"
	"math"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/blocks"
	"github.com/centroidlab/centroid/internal/check"
	"github.com/centroidlab/centroid/internal/rowset"
	"github.com/centroidlab/centroid/scale"
)

// Space is a prepared problem as a Method sees it: the rows in the
// clustering space (scaled), their weights, the metric and the fixed block
// split that every pass uses. It is read-only and shared by concurrent
// restarts.
type Space struct {
	// N rows of D columns, row-major in X.
	N, D int
	// X holds the rows in the clustering space. Never modify it: it may be
	// the caller's data.
	X []float64
	// W holds the row weights, or nil for all ones.
	W []float64
	// Metric is the clustering metric; Rule is its center rule.
	Metric distance.Objective
	Rule   distance.CenterRule
	// Scaler is the scaler learned on the data (Problem.Scaler after
	// Learn), or nil when the raw rows are the clustering space.
	Scaler scale.Scaler

	arith   distance.Arithmetic // the metric's built-in arithmetic, if any
	invNorm []float64           // 1/‖x_i‖ for the Cosine rule, else nil
	blocks  blocks.Split        // fixed split of the rows (depends only on N)
	workers int                 // goroutines per restart
}

// NewSpace checks p as Cluster does and returns its clustering space: the
// metric (nil means Euclidean), the scaler learned on p.Data and p.Weights
// (if p.Scaler is set) and the rows mapped by it, row-major. A *mat.Dense
// without a scaler is used in place, not copied. p.K is checked against
// the rows (1 ≤ K ≤ distinct rows of positive weight) unless it is zero.
//
// It returns an error wrapping ErrData (nil, empty or non-finite data, or
// a scaler that fails or maps a row to NaN or ±Inf), ErrK, ErrWeights,
// ErrMetric (a metric without a center rule, or a row it rejects, such as
// a zero row under Cosine) or ErrSchema (bad p.Features). p is never
// modified.
func NewSpace(p Problem) (*Space, error) {
	n, d, err := check.Matrix(p.Data, ErrData)
	if err != nil {
		return nil, err
	}
	if p.K < 0 || p.K > n {
		return nil, fmt.Errorf("%w: K = %d with %d rows", ErrK, p.K, n)
	}
	metric := p.Metric
	if metric == nil {
		metric = distance.Euclidean{}
	}
	if err := distance.Check(metric); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrMetric, err)
	}
	obj, ok := metric.(distance.Objective)
	if !ok {
		return nil, fmt.Errorf("%w: %s has no k-means center rule (use Euclidean, Manhattan or Cosine)", ErrMetric, metric.Name())
	}
	if p.Features != nil {
		if _, err := checkFeatures(p.Features, d); err != nil {
			return nil, err
		}
	}
	if _, err := check.Weights(p.Weights, n, ErrWeights); err != nil {
		return nil, err
	}
	x, _ := check.RowMajor(p.Data)
	if err := check.Finite(x, d, ErrData); err != nil {
		return nil, err
	}
	var learned scale.Scaler
	if p.Scaler != nil {
		learned, err = p.Scaler.Learn(p.Data, p.Weights)
		if err != nil {
			return nil, fmt.Errorf("%w: scaler: %w", ErrData, err)
		}
		if learned.Dim() != d {
			return nil, fmt.Errorf("%w: scaler learned %d columns, data has %d", ErrData, learned.Dim(), d)
		}
		scaled := make([]float64, n*d)
		for i := range n {
			learned.Apply(scaled[i*d:(i+1)*d], x[i*d:(i+1)*d])
		}
		if err := check.Finite(scaled, d, ErrData); err != nil {
			return nil, fmt.Errorf("%w after scaling", err)
		}
		x = scaled
	}
	if rc, ok := metric.(distance.RowChecker); ok {
		for i := range n {
			if err := rc.CheckRow(x[i*d : (i+1)*d]); err != nil {
				return nil, fmt.Errorf("%w: row %d: %w", ErrMetric, i, err)
			}
		}
	}
	if p.K > 0 {
		if distinct := countDistinct(x, n, d, p.Weights, p.K); distinct < p.K {
			return nil, fmt.Errorf("%w: K = %d but only %d distinct rows with positive weight", ErrK, p.K, distinct)
		}
	}
	sp := newSpace(x, n, d, p.Weights, obj, 1)
	sp.Scaler = learned
	return sp, nil
}

// countDistinct counts distinct rows of positive weight, stopping at limit.
func countDistinct(x []float64, n, d int, w []float64, limit int) int {
	set := rowset.New(limit)
	for i := 0; i < n && set.Len() < limit; i++ {
		if w == nil || w[i] > 0 {
			set.Add(x[i*d : (i+1)*d])
		}
	}
	return set.Len()
}

func newSpace(x []float64, n, d int, w []float64, m distance.Objective, workers int) *Space {
	sp := &Space{N: n, D: d, X: x, W: w, Metric: m, Rule: m.Rule(), workers: max(1, workers)}
	sp.arith = distance.ArithmeticOf(m)
	sp.blocks = blocks.Of(n)
	if sp.Rule == distance.UnitMeanRule {
		sp.invNorm = make([]float64, n)
		for i := range n {
			var s float64
			for _, v := range sp.Row(i) {
				s += v * v
			}
			sp.invNorm[i] = 1 / math.Sqrt(s)
		}
	}
	return sp
}

// Row returns row i (a view into X; do not modify).
func (sp *Space) Row(i int) []float64 { return sp.X[i*sp.D : (i+1)*sp.D : (i+1)*sp.D] }

// Weight returns the weight of row i.
func (sp *Space) Weight(i int) float64 {
	if sp.W == nil {
		return 1
	}
	return sp.W[i]
}

// Arithmetic returns the built-in arithmetic of the metric's loss
// (distance.ArithmeticOf), which selects the fast paths of the solvers.
func (sp *Space) Arithmetic() distance.Arithmetic { return sp.arith }

// Blocks returns the number of fixed row blocks.
func (sp *Space) Blocks() int { return sp.blocks.Count() }

// Block returns the rows [lo, hi) of block b.
func (sp *Space) Block(b int) (lo, hi int) { return sp.blocks.Bounds(b) }

// Workers returns the number of goroutines Parallel uses.
func (sp *Space) Workers() int { return sp.workers }

// WithWorkers returns a shallow copy of sp whose Parallel uses n
// goroutines (at least one). The rows are shared, not copied.
func (sp *Space) WithWorkers(n int) *Space {
	c := *sp
	c.workers = max(1, n)
	return &c
}

// Parallel calls fn(b) once for every block b, on up to Workers()
// goroutines, and returns when all calls have returned. fn must write only
// to state owned by block b so that results do not depend on scheduling.
func (sp *Space) Parallel(fn func(b int)) { sp.blocks.Each(sp.workers, fn) }

// Loss returns the metric's loss of row i against center c.
func (sp *Space) Loss(i int, c []float64) float64 { return sp.Metric.Loss(sp.Row(i), c) }

// Add adds row i, assigned to cluster j with the given loss, to p, applying
// the center rule's row scaling (unit rows for Cosine).
func (sp *Space) Add(p *Partial, i, j int, loss float64) {
	w := sp.Weight(i)
	s := w
	if sp.invNorm != nil {
		s = w * sp.invNorm[i]
	}
	p.addScaled(j, sp.Row(i), s, w, loss)
}
