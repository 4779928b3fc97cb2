package kmeans

import (
	"fmt"
	"math"
	"sync/atomic"

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
	// W holds the row weights as the passes use them, or nil for all ones:
	// weights that are all equal become nil, and weights beyond
	// [2⁻⁶⁴, 2⁶⁴] are scaled by a power of two (exactly) so that the
	// largest is below 1. WeightScale undoes it.
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
	rawW    []float64           // the caller's weights (nil: all ones)
	wscale  float64             // caller's weight = wscale × W (or wscale when W is nil)
	done    <-chan struct{}     // Parallel stops between blocks once closed (nil: never)
	cut     *atomic.Bool        // set when Parallel stopped early
}

// Magnitude limits of the rows for the built-in arithmetics: squared
// differences of values beyond maxSquaredMagnitude can overflow and those
// of nonzero values below minSquaredMagnitude underflow to zero, so every
// distance would tie; absolute differences have wider limits.
const (
	maxSquaredMagnitude  = 0x1p480
	minSquaredMagnitude  = 0x1p-480
	maxAbsoluteMagnitude = 0x1p1000
	minAbsoluteMagnitude = 0x1p-1000
	// weightRange: weights within [1/weightRange, weightRange] are used as
	// given; others are scaled by a power of two.
	weightRange = 0x1p64
)

// NewSpace checks p as Cluster does and returns its clustering space: the
// metric (nil means Euclidean), the scaler learned on p.Data and p.Weights
// (if p.Scaler is set) and the rows mapped by it, row-major. A *mat.Dense
// without a scaler is used in place, not copied. p.K is checked against
// the rows (1 ≤ K ≤ distinct rows of positive weight) unless it is zero.
//
// It returns an error wrapping ErrData (nil, empty or non-finite data, a
// scaler that fails or maps a row to NaN or ±Inf, or rows whose distances
// the metric cannot measure in float64: under Euclidean, values beyond
// 2⁴⁸⁰ in magnitude, whose squares overflow, or data whose largest
// |value| is below 2⁻⁴⁸⁰ but not zero, whose squares underflow; under
// Manhattan the limits are 2¹⁰⁰⁰ and 2⁻¹⁰⁰⁰; scale such data), ErrK, ErrWeights, ErrMetric (a
// metric without a center rule, or a row it rejects, such as a zero row
// under Cosine), ErrSchema (bad p.Features) or ErrPanic (the scaler or the
// metric panicked). p is never modified.
func NewSpace(p Problem) (sp *Space, err error) {
	stage := fmt.Sprintf("scaler %T", p.Scaler)
	defer func() {
		if v := recover(); v != nil {
			sp, err = nil, panicError(stage, v)
		}
	}()
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
	stage = fmt.Sprintf("metric %T", metric)
	if err := checkMagnitude(x, distance.ArithmeticOf(metric)); err != nil {
		return nil, err
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
	w, wscale := normalWeights(p.Weights)
	sp = newSpace(x, n, d, w, obj, 1)
	sp.Scaler = learned
	sp.rawW, sp.wscale = p.Weights, wscale
	return sp, nil
}

// checkMagnitude returns an error wrapping ErrData when the largest |x|
// is outside the range the arithmetic can measure distances in.
func checkMagnitude(x []float64, a distance.Arithmetic) error {
	var hi, lo float64
	switch a {
	case distance.SquaredDifferences:
		hi, lo = maxSquaredMagnitude, minSquaredMagnitude
	case distance.AbsoluteDifferences:
		hi, lo = maxAbsoluteMagnitude, minAbsoluteMagnitude
	default:
		return nil
	}
	var m float64
	for _, v := range x {
		m = max(m, math.Abs(v))
	}
	switch {
	case m > hi:
		return fmt.Errorf("%w: values as large as %g, beyond %g: distances would overflow (scale the data, for example with scale.ZScore)", ErrData, m, hi)
	case m > 0 && m < lo:
		return fmt.Errorf("%w: no value larger than %g in magnitude, below %g: distances would underflow to zero (scale the data, for example with scale.ZScore)", ErrData, m, lo)
	}
	return nil
}

// normalWeights returns the weights the passes use and the factor that
// turns them back into the caller's: all-equal positive weights (zeros
// aside) become 1, and weights beyond [1/weightRange, weightRange] are
// multiplied by a power of two, which is exact, so that the largest is
// below 1. So uniform weights give the partition of no weights at all, and
// huge or tiny weights neither overflow nor underflow in sums. w (checked
// by check.Weights) is never modified.
func normalWeights(w []float64) ([]float64, float64) {
	if w == nil {
		return nil, 1
	}
	var first, top float64
	uniform, zeros := true, false
	for _, v := range w {
		switch {
		case v == 0:
			zeros = true
		case first == 0:
			first = v
		case v != first:
			uniform = false
		}
		top = max(top, v)
	}
	if uniform {
		if !zeros {
			return nil, first
		}
		out := make([]float64, len(w))
		for i, v := range w {
			if v > 0 {
				out[i] = 1
			}
		}
		return out, first
	}
	if top >= 1/weightRange && top <= weightRange {
		return w, 1
	}
	_, e := math.Frexp(top)
	out := make([]float64, len(w))
	for i, v := range w {
		out[i] = math.Ldexp(v, -e)
	}
	return out, math.Ldexp(1, e)
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
	sp := &Space{N: n, D: d, X: x, W: w, Metric: m, Rule: m.Rule(), workers: max(1, workers), rawW: w, wscale: 1}
	sp.arith = distance.ArithmeticOf(m)
	sp.blocks = blocks.Of(n)
	if sp.Rule == distance.UnitMeanRule {
		sp.invNorm = make([]float64, n)
		for i := range n {
			sp.invNorm[i] = 1 / norm(sp.Row(i))
		}
	}
	return sp
}

// norm returns the Euclidean norm of x without overflow or underflow in
// the squares: rows whose squared norm leaves [2⁻⁹⁰⁰, 2⁹⁰⁰] are measured
// after scaling by their largest |x_i|.
func norm(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v * v
	}
	if s >= 0x1p-900 && s <= 0x1p900 {
		return math.Sqrt(s)
	}
	var m float64
	for _, v := range x {
		m = max(m, math.Abs(v))
	}
	if m == 0 || math.IsInf(m, 0) || math.IsNaN(m) {
		return m
	}
	s = 0
	for _, v := range x {
		t := v / m
		s += t * t
	}
	return m * math.Sqrt(s)
}

// WeightScale returns the factor that turns W back into the caller's
// weights (1 when they are used as given): the cost of the caller's
// problem is WeightScale times the cost computed with W.
func (sp *Space) WeightScale() float64 { return sp.wscale }

// rawWeight returns the caller's weight of row i.
func (sp *Space) rawWeight(i int) float64 {
	if sp.rawW == nil {
		return 1
	}
	return sp.rawW[i]
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
//
// In the space a Method's Start receives, Parallel stops handing out
// blocks once the call's context ends; the driver then discards the pass,
// so a Method needs no cancellation logic of its own. A panic in fn is
// raised again on the calling goroutine.
func (sp *Space) Parallel(fn func(b int)) {
	if !sp.blocks.EachUntil(sp.workers, sp.done, fn) && sp.cut != nil {
		sp.cut.Store(true)
	}
}

// stoppable returns a copy of sp whose Parallel stops between blocks once
// done is closed, and records that it did (wasCut).
func (sp *Space) stoppable(done <-chan struct{}) *Space {
	c := *sp
	c.done, c.cut = done, new(atomic.Bool)
	return &c
}

// wasCut reports whether a Parallel call of this space stopped early.
func (sp *Space) wasCut() bool { return sp.cut != nil && sp.cut.Load() }

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
