package kmeans

import (
	"fmt"
	"math"
	"slices"
	"sync"
	"sync/atomic"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/blocks"
	"github.com/centroidlab/centroid/internal/check"
	"github.com/centroidlab/centroid/internal/nearest"
	"github.com/centroidlab/centroid/internal/rowset"
	"github.com/centroidlab/centroid/scale"
)

// Space is a prepared problem as a Method sees it: the rows in the
// clustering space (scaled), their weights, the metric and the fixed block
// split that every pass uses. It is read-only and shared by concurrent
// restarts.
type Space struct {
	// N rows of D columns, row-major in X or X32.
	N, D int
	// X holds the rows in the clustering space, or is nil when they are
	// float32 (X32). Never modify it: it may be the caller's data.
	X []float64
	// X32 holds the rows when the data is float32 (a RawMatrixer32 such
	// as Dense32) and there is no scaler, in the space Cluster passes to
	// a Method: the caller's values, read in place (NewSpace widens them
	// into X). Exactly one of X and X32 is non-nil. RowTo, Loss and Add work
	// on either; a Method that reads X directly must handle X32 too (the
	// float64 conversion of its values is the clustering space).
	X32 []float32
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
	widened *widened            // float32 rows: the float64 copy for seeders without a float32 path
}

// widened is a float64 copy of float32 rows, made at most once and shared
// by the copies of a Space.
type widened struct {
	once sync.Once
	x    []float64
}

// rows64 returns the rows in float64: X, or for float32 rows a float64
// copy made on the first call (n·d float64) and shared by every restart.
// Only seeders that do not implement seeding.Float32Seeder need it.
func (sp *Space) rows64() []float64 {
	if sp.X32 == nil {
		return sp.X
	}
	w := sp.widened
	w.once.Do(func() { w.x = nearest.Widen(make([]float64, len(sp.X32)), sp.X32) })
	return w.x
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
//
// Float32 data (p.Data implements RawMatrixer32, as Dense32 does) gets a
// float64 space here: X holds its float64 conversion (n·d float64),
// because callers of NewSpace read X. Cluster does not make that copy: the
// space it hands its Methods keeps the caller's float32 rows in X32 when
// there is no scaler. With a scaler the scaled space is float64, as for
// any data.
func NewSpace(p Problem) (*Space, error) {
	sp, err := newProblemSpace(p)
	if err != nil || sp.X32 == nil {
		return sp, err
	}
	x := sp.rows64()
	wsp := newSpaceOf(x, nil, sp.N, sp.D, sp.W, sp.Metric, 1)
	wsp.Scaler, wsp.rawW, wsp.wscale = sp.Scaler, sp.rawW, sp.wscale
	return wsp, nil
}

// newProblemSpace is NewSpace keeping float32 rows without a scaler in
// place (X32, copied to float32 only if the stride exceeds the columns):
// the space of Cluster.
func newProblemSpace(p Problem) (sp *Space, err error) {
	stage := fmt.Sprintf("scaler %T", p.Scaler)
	defer func() {
		if v := recover(); v != nil {
			sp, err = nil, panicError(stage, v)
		}
	}()
	if check.NilPointer(p.Data) {
		return nil, fmt.Errorf("%w: data is a nil %T", ErrData, p.Data)
	}
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
	var (
		x   []float64
		x32 []float32
	)
	if rm, ok := p.Data.(RawMatrixer32); ok {
		if x32, err = rowMajor32(rm, n, d); err != nil {
			return nil, err
		}
	} else {
		x, _ = check.RowMajor(p.Data)
		if err := check.Finite(x, d, ErrData); err != nil {
			return nil, err
		}
	}
	buf := make([]float64, d) // one widened float32 row
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
			learned.Apply(scaled[i*d:(i+1)*d], rowOf(x, x32, d, i, buf))
		}
		if err := check.Finite(scaled, d, ErrData); err != nil {
			return nil, fmt.Errorf("%w after scaling", err)
		}
		x, x32 = scaled, nil
	}
	stage = fmt.Sprintf("metric %T", metric)
	if err := checkMagnitude(x, x32, distance.ArithmeticOf(metric)); err != nil {
		return nil, err
	}
	if rc, ok := metric.(distance.RowChecker); ok {
		for i := range n {
			if err := rc.CheckRow(rowOf(x, x32, d, i, buf)); err != nil {
				return nil, fmt.Errorf("%w: row %d: %w", ErrMetric, i, err)
			}
		}
	}
	if p.K > 0 {
		if distinct := countDistinct(x, x32, n, d, p.Weights, p.K); distinct < p.K {
			return nil, fmt.Errorf("%w: K = %d but only %d distinct rows with positive weight", ErrK, p.K, distinct)
		}
	}
	w, wscale := normalWeights(p.Weights)
	sp = newSpaceOf(x, x32, n, d, w, obj, 1)
	sp.Scaler = learned
	sp.rawW, sp.wscale = p.Weights, wscale
	return sp, nil
}

// checkMagnitude returns an error wrapping ErrData when the largest |x|
// (of x or x32, whichever holds the rows) is outside the range the
// arithmetic can measure distances in.
func checkMagnitude(x []float64, x32 []float32, a distance.Arithmetic) error {
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
	for _, v := range x32 {
		m = max(m, math.Abs(float64(v)))
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

// countDistinct counts distinct rows (of x, or of x32 widened) of
// positive weight, stopping at limit. Float32 rows the set keeps are
// widened into new slices: at most limit of them.
func countDistinct(x []float64, x32 []float32, n, d int, w []float64, limit int) int {
	set := rowset.New(limit)
	buf := make([]float64, d)
	for i := 0; i < n && set.Len() < limit; i++ {
		if w == nil || w[i] > 0 {
			r := rowOf(x, x32, d, i, buf)
			if x32 != nil && !set.Has(r) {
				r = slices.Clone(r)
			}
			set.Add(r)
		}
	}
	return set.Len()
}

func newSpace(x []float64, n, d int, w []float64, m distance.Objective, workers int) *Space {
	return newSpaceOf(x, nil, n, d, w, m, workers)
}

// newSpaceOf is newSpace for rows in x or, if x is nil, in x32.
func newSpaceOf(x []float64, x32 []float32, n, d int, w []float64, m distance.Objective, workers int) *Space {
	sp := &Space{N: n, D: d, X: x, X32: x32, W: w, Metric: m, Rule: m.Rule(), workers: max(1, workers), rawW: w, wscale: 1}
	if x32 != nil {
		sp.widened = new(widened)
	}
	sp.arith = distance.ArithmeticOf(m)
	sp.blocks = blocks.Of(n)
	if sp.Rule == distance.UnitMeanRule {
		sp.invNorm = make([]float64, n)
		buf := make([]float64, d)
		for i := range n {
			sp.invNorm[i] = 1 / norm(sp.RowTo(buf, i))
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

// Row returns row i: a view into X (do not modify), or for float32 rows
// (X32) a new float64 copy, which allocates; loops use RowTo.
func (sp *Space) Row(i int) []float64 {
	if sp.X32 != nil {
		return nearest.Widen(make([]float64, sp.D), sp.row32(i))
	}
	return sp.X[i*sp.D : (i+1)*sp.D : (i+1)*sp.D]
}

// RowTo returns row i in float64: a view into X (buf unused; do not
// modify it), or for float32 rows (X32) the row widened into buf[:D]. It
// panics if the rows are float32 and len(buf) < D.
func (sp *Space) RowTo(buf []float64, i int) []float64 {
	if sp.X32 != nil {
		return nearest.Widen(buf, sp.row32(i))
	}
	return sp.X[i*sp.D : (i+1)*sp.D : (i+1)*sp.D]
}

// row32 returns float32 row i (a view into X32).
func (sp *Space) row32(i int) []float32 { return sp.X32[i*sp.D : (i+1)*sp.D : (i+1)*sp.D] }

// at returns coordinate t of row i.
func (sp *Space) at(i, t int) float64 {
	if sp.X32 != nil {
		return float64(sp.X32[i*sp.D+t])
	}
	return sp.X[i*sp.D+t]
}

// sameRow reports whether rows i and q are equal, coordinate by
// coordinate (==: −0 equals +0, NaN equals nothing).
func (sp *Space) sameRow(i, q int) bool {
	if sp.X32 != nil {
		return slices.Equal(sp.row32(i), sp.row32(q))
	}
	return slices.Equal(sp.Row(i), sp.Row(q))
}

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

// Loss returns the metric's loss of row i against center c. On float32
// rows it allocates one row under a metric without built-in arithmetic
// (distance.Custom); the solvers use their own buffers.
func (sp *Space) Loss(i int, c []float64) float64 {
	if sp.X32 != nil && sp.arith == distance.Custom {
		return sp.loss(i, c, make([]float64, sp.D))
	}
	return sp.loss(i, c, nil)
}

// loss is Loss with a buffer of at least D values for widening a float32
// row under a metric without built-in arithmetic (unused otherwise). On
// float32 rows the built-in losses are computed from the float32 values
// with the bits of their float64 conversion (nearest.SqDist, AbsDist).
func (sp *Space) loss(i int, c, buf []float64) float64 {
	if sp.X32 == nil {
		return sp.Metric.Loss(sp.Row(i), c)
	}
	switch sp.arith {
	case distance.SquaredDifferences:
		return nearest.SqDist(sp.row32(i), c)
	case distance.AbsoluteDifferences:
		return nearest.AbsDist(sp.row32(i), c)
	}
	return sp.Metric.Loss(sp.RowTo(buf, i), c)
}

// Add adds row i, assigned to cluster j with the given loss, to p, applying
// the center rule's row scaling (unit rows for Cosine).
func (sp *Space) Add(p *Partial, i, j int, loss float64) {
	w := sp.Weight(i)
	s := w
	if sp.invNorm != nil {
		s = w * sp.invNorm[i]
	}
	if sp.X32 != nil {
		p.addScaled32(j, sp.row32(i), s, w, loss)
		return
	}
	p.addScaled(j, sp.Row(i), s, w, loss)
}

// rowOf returns row i of x (a view) or, if x is nil, of x32 widened into
// buf.
func rowOf(x []float64, x32 []float32, d, i int, buf []float64) []float64 {
	if x != nil {
		return x[i*d : (i+1)*d : (i+1)*d]
	}
	return nearest.Widen(buf, x32[i*d:(i+1)*d])
}

// rowMajor32 returns the n×d float32 values of rm row-major with stride d:
// its storage when the stride is d (no copy), else a float32 copy. It
// returns an error wrapping ErrData if the storage does not match the
// dimensions or holds NaN or ±Inf.
func rowMajor32(rm RawMatrixer32, n, d int) ([]float32, error) {
	g := rm.RawMatrix32()
	if g.Rows != n || g.Cols != d || g.Stride < d || len(g.Data) < (n-1)*g.Stride+d {
		return nil, fmt.Errorf("%w: float32 storage %d×%d (stride %d, %d values) does not match the %d×%d matrix", ErrData, g.Rows, g.Cols, g.Stride, len(g.Data), n, d)
	}
	x := g.Data[: n*d : n*d]
	if g.Stride != d && n > 1 {
		x = make([]float32, n*d)
		for i := range n {
			copy(x[i*d:(i+1)*d], g.Data[i*g.Stride:i*g.Stride+d])
		}
	}
	for i, v := range x {
		if f := float64(v); math.IsNaN(f) || math.IsInf(f, 0) {
			return nil, fmt.Errorf("%w: row %d column %d is %v", ErrData, i/d, i%d, f)
		}
	}
	return x, nil
}
