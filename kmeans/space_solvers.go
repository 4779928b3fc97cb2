package kmeans

import (
	"fmt"
	"math"
	"sync"

	"github.com/centroidlab/centroid/distance"
)

// This file holds what the bound-based solvers (Elkan, Hamerly, Yinyang)
// share: the metric check, conservative floating-point bounds and scratch.
//
// # Exactness under floating point
//
// The solvers keep, per row, an upper bound on the true distance to its
// center and lower bounds on the true distances to other centers, and skip
// a center j only when a lower bound of δ_j provably exceeds an upper bound
// of δ_a, the distance to the row's current best center a. With u = 2⁻⁵³,
// a directly computed loss (Σ(x_t−c_t)² for Euclidean, Σ|x_t−c_t| for
// Manhattan, in any summation order) is within (d+2)·u of the true value,
// relatively, apart from underflow. Every bound is therefore rounded
// outwards by the relative epsilon E = 4·(d+8)·u (up: ×(1+E), down: ×(1−E),
// clamped at zero), which also covers the rounding of the additions and
// subtractions that move the bounds, and a center is skipped only if
//
//	lower > upper·(1+E) + 2⁻⁵⁰⁰
//
// (beats). Then δ_j > δ_a·(1+E) + 2⁻⁵⁰⁰, hence the computed losses satisfy
// f_j > f_a strictly: j can neither be nearer nor tie with a. Every center
// that is not skipped has its loss computed directly (Space.Loss, the very
// function Lloyd uses) and compared as Lloyd does: the smaller loss wins,
// the lower index on equal losses. So the assignments equal Lloyd's bit for
// bit. The absolute term covers underflow (each of the d terms of a loss
// loses at most 2⁻¹⁰⁷⁴).
//
// Bounds are stored as float32, rounded outwards (lo32, hi32), which halves
// their memory; bounds beyond the float32 range become 0 (lower) or +Inf
// (upper), which only costs pruning.
//
// Overflow would break the relative error model (an infinite loss says
// nothing about the distance), so when any |x| or weight exceeds 2⁴⁰⁰ the
// bound solvers run Lloyd's pass instead (same answer, no pruning).

// tauBound is the absolute slack of beats, far above underflow errors.
const tauBound = 0x1p-500

// safeMagnitude is the largest |x| and weight for which the bound solvers
// prune: squared distances of such rows and their weighted means cannot
// overflow for any d < 2²⁰⁰.
const safeMagnitude = 0x1p400

// rounding holds the outward rounding of one dimension d.
type rounding struct{ eps float64 }

func newRounding(d int) rounding { return rounding{eps: 4 * float64(d+8) * 0x1p-53} }

// up returns v rounded outwards to an upper bound.
func (r rounding) up(v float64) float64 { return v * (1 + r.eps) }

// down returns v rounded outwards to a lower bound, at least 0 (also for
// NaN).
func (r rounding) down(v float64) float64 {
	v *= 1 - r.eps
	if !(v > 0) {
		return 0
	}
	return v
}

// beats reports whether the lower bound lo of one distance certainly exceeds
// the upper bound hi of another, so that their computed losses compare
// strictly the same way. NaN never beats.
func (r rounding) beats(lo, hi float64) bool { return lo > hi*(1+r.eps)+tauBound }

// lo32 returns the largest float32 ≤ v, at least 0.
func lo32(v float64) float32 {
	f := float32(v)
	if float64(f) > v {
		f = math.Nextafter32(f, float32(math.Inf(-1)))
	}
	if !(f > 0) {
		return 0
	}
	return f
}

// hi32 returns the smallest float32 ≥ v (+Inf beyond the float32 range).
func hi32(v float64) float32 {
	f := float32(v)
	if float64(f) < v {
		f = math.Nextafter32(f, float32(math.Inf(1)))
	}
	return f
}

// bounds is the state the bound solvers share for one restart.
type bounds struct {
	sp     *Space
	k, d   int
	euclid bool // the loss is the squared distance (else Manhattan: the distance)
	rounding
	move []float64 // move[j]: upper bound of how far center j moved in the last update
	// half[j·k+q] is a lower bound on half the distance between centers j
	// and q, nearestHalf[j] the smallest over q ≠ j (+Inf if k = 1); see
	// halves.
	half, nearestHalf []float64
}

// newBounds checks that the metric suits a bound solver. It returns a nil
// *bounds and no error when the data is too large in magnitude (see
// safeMagnitude): the caller then runs Lloyd's pass.
func newBounds(sp *Space, k int, name string) (*bounds, error) {
	t, ok := sp.Metric.(distance.Triangle)
	if !ok || !t.Triangle() {
		return nil, fmt.Errorf("%w: %s needs a metric with the triangle inequality, %s has none (use Lloyd)", ErrMetric, name, sp.Metric.Name())
	}
	b := &bounds{sp: sp, k: k, d: sp.D, rounding: newRounding(sp.D), move: make([]float64, k), half: make([]float64, k*k), nearestHalf: make([]float64, k)}
	switch sp.arith {
	case distance.SquaredDifferences:
		b.euclid = true
	case distance.AbsoluteDifferences:
	default:
		return nil, fmt.Errorf("%w: %s supports Euclidean and Manhattan, not %s (use Lloyd)", ErrMetric, name, sp.Metric.Name())
	}
	if !sp.withinMagnitude(safeMagnitude) {
		return nil, nil
	}
	return b, nil
}

// startBound is the Start of a bound solver: pass builds its state on the
// shared bounds; data beyond the safe magnitude gets Lloyd's pass instead.
func startBound(sp *Space, k int, name string, pass func(*bounds) Pass) (Pass, error) {
	b, err := newBounds(sp, k, name)
	if err != nil {
		return nil, err
	}
	if b == nil {
		return Lloyd{}.Start(sp, k)
	}
	return pass(b), nil
}

// withinMagnitude reports whether every |x| and every weight is ≤ limit.
func (sp *Space) withinMagnitude(limit float64) bool {
	for _, v := range sp.X {
		if math.Abs(v) > limit {
			return false
		}
	}
	for _, w := range sp.W {
		if w > limit {
			return false
		}
	}
	return true
}

// dist turns a loss into a distance (the square root for Euclidean).
func (b *bounds) dist(f float64) float64 {
	if b.euclid {
		return math.Sqrt(f)
	}
	return f
}

// loss returns Metric.Loss(x, c) without the interface call: the very
// function Lloyd calls (distance.Euclidean.Loss is distance.SqEuclidean,
// distance.Manhattan.Loss its Distance), so the bits are the same.
func (b *bounds) loss(x, c []float64) float64 {
	if b.euclid {
		return distance.SqEuclidean(x, c)
	}
	return distance.Manhattan{}.Distance(x, c)
}

// rowLoss returns the loss of row i against center j of centers.
func (b *bounds) rowLoss(i int, centers []float64, j int) float64 {
	return b.loss(b.sp.X[i*b.d:(i+1)*b.d], centers[j*b.d:(j+1)*b.d])
}

// centerDist returns the computed distance between two centers, by the same
// loss function as row distances so the same error model holds.
func (b *bounds) centerDist(x, y []float64) float64 { return b.dist(b.loss(x, y)) }

// center returns row j of the k×d matrix c.
func (b *bounds) center(c []float64, j int) []float64 { return c[j*b.d : (j+1)*b.d] }

// moves fills b.move with upper bounds of how far each center moved from
// prev to cur and returns the largest move, its center and the second
// largest (so that the largest move of the centers other than a is
// largest unless a == arg).
func (b *bounds) moves(cur, prev []float64) (largest float64, arg int, second float64) {
	arg = -1
	for j := range b.k {
		m := b.up(b.centerDist(b.center(cur, j), b.center(prev, j)))
		b.move[j] = m
		switch {
		case m > largest || arg < 0:
			second, largest, arg = largest, m, j
		case m > second:
			second = m
		}
	}
	return largest, arg, second
}

// halves fills half and nearestHalf for the given centers: k(k−1)/2
// center–center distances.
func (b *bounds) halves(centers []float64) {
	k := b.k
	for j := range k {
		b.nearestHalf[j] = inf
		b.half[j*k+j] = 0
	}
	for j := range k {
		for q := j + 1; q < k; q++ {
			h := b.down(b.centerDist(b.center(centers, j), b.center(centers, q))) / 2
			b.half[j*k+q], b.half[q*k+j] = h, h
			b.nearestHalf[j] = min(b.nearestHalf[j], h)
			b.nearestHalf[q] = min(b.nearestHalf[q], h)
		}
	}
}

// eachBlock runs fn on every block of rows in parallel, with a scratch
// from pool (nil if pool is nil) and the block's Partial reset, and adds
// the moved rows and evaluated losses that fn returns to st.
func (b *bounds) eachBlock(st *Step, pool *scratchPool[scratch], fn func(ks *scratch, part *Partial, lo, hi int) (moved, evals int)) {
	b.sp.Parallel(func(blk int) {
		var ks *scratch
		if pool != nil {
			ks = pool.get()
			defer pool.put(ks)
		}
		part := &st.Blocks[blk]
		part.Reset()
		lo, hi := b.sp.Block(blk)
		moved, evals := fn(ks, part, lo, hi)
		st.Moved.Add(int64(moved))
		st.Distances.Add(int64(evals))
	})
}

// settle records center a for row i in st and adds the row to part. fa is
// the row's loss to a if known; otherwise it is computed only when
// st.NeedCost asks for the cost. It returns 1 if the row moved and the
// number of losses computed (0 or 1).
func (b *bounds) settle(st *Step, part *Partial, i, a int, fa float64, known bool) (moved, evals int) {
	if st.Assign[i] != a {
		st.Assign[i] = a
		moved = 1
	}
	var loss float64
	if st.NeedCost {
		if !known {
			fa = b.rowLoss(i, st.Centers, a)
			evals = 1
		}
		loss = fa
	}
	b.sp.Add(part, i, a, loss)
	return moved, evals
}

// less reports whether loss f of center j beats loss fb of center jb under
// Lloyd's rule: the smaller loss, the lower index on equal losses.
func less(f float64, j int, fb float64, jb int) bool { return f < fb || (f == fb && j < jb) }

// scratchPool hands out per-goroutine scratch inside Space.Parallel.
type scratchPool[T any] struct {
	mu   sync.Mutex
	free []*T
}

func (p *scratchPool[T]) get() *T {
	p.mu.Lock()
	defer p.mu.Unlock()
	if n := len(p.free); n > 0 {
		s := p.free[n-1]
		p.free = p.free[:n-1]
		return s
	}
	return new(T)
}

func (p *scratchPool[T]) put(s *T) {
	p.mu.Lock()
	p.free = append(p.free, s)
	p.mu.Unlock()
}

// growFloats returns s with length n, reallocating only if needed.
func growFloats(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

// inf is +Inf.
var inf = math.Inf(1)
