package kmeans

import (
	"fmt"
	"math"
	"sync"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/nearest"
)

// safeMagnitude is the largest |x| and weight for which the bound solvers
// prune: squared distances of such rows and their weighted means cannot
// overflow for any d < 2²⁰⁰.
const safeMagnitude = 0x1p400

// rounding is the outward rounding of one dimension d that the bound
// solvers share with the serving search and the kernel: nearest.Rounding,
// whose documentation derives it.
type rounding struct{ r nearest.Rounding }

func newRounding(d int) rounding { return rounding{nearest.NewRounding(d)} }

// up returns v rounded outwards to an upper bound.
func (r rounding) up(v float64) float64 { return r.r.Up(v) }

// down returns v rounded outwards to a lower bound, at least 0 (also for
// NaN).
func (r rounding) down(v float64) float64 { return r.r.Down(v) }

// beats reports whether the lower bound lo of one distance certainly exceeds
// the upper bound hi of another, so that their computed losses compare
// strictly the same way. NaN never beats.
func (r rounding) beats(lo, hi float64) bool { return r.r.Beats(lo, hi) }

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
	if sp.X32 != nil && limit < math.MaxFloat32 {
		for _, v := range sp.X32 {
			if math.Abs(float64(v)) > limit {
				return false
			}
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

// rowLoss returns the loss of row i against center j of centers (for
// float32 rows, the bits of their float64 conversion).
func (b *bounds) rowLoss(i int, centers []float64, j int) float64 {
	c := centers[j*b.d : (j+1)*b.d]
	if x := b.sp.X32; x != nil {
		if b.euclid {
			return nearest.SqDist(x[i*b.d:(i+1)*b.d], c)
		}
		return nearest.AbsDist(x[i*b.d:(i+1)*b.d], c)
	}
	return b.loss(b.sp.X[i*b.d:(i+1)*b.d], c)
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

// kernelTile returns how many rows a kernel pass loads at a time: about
// 64 KiB of shifted rows, a multiple of four between 16 and 256.
func kernelTile(d int) int { return min(256, max(16, (8192/d)&^3)) }

// scratch is one goroutine's working memory inside Space.Parallel.
type scratch struct {
	s      nearest.Searcher
	s32    nearest.Searcher32
	res    []int
	f      []float64 // k: losses of one row (Hamerly)
	groupV []float64 // per group: new lower bounds of one row (Yinyang)
	old    []float64 // per group: lower bounds before the pass (Yinyang)
	m1, m2 []float64 // per group: two smallest member lower bounds
	i1     []int     // per group: member with the smallest lower bound
}

// grouping partitions the k centers into t groups: group g holds the
// centers order[start[g]:start[g+1]]; group[j] is center j's group.
type grouping struct {
	t     int
	order []int
	start []int
	group []int
}

// oneGroup puts all k centers in one group.
func oneGroup(k int) *grouping {
	g := &grouping{t: 1, order: make([]int, k), start: []int{0, k}, group: make([]int, k)}
	for j := range g.order {
		g.order[j] = j
	}
	return g
}

// members returns the centers of group g.
func (g *grouping) members(q int) []int { return g.order[g.start[q]:g.start[q+1]] }

// firstPass assigns every row for the first time and sets its bounds:
// upper[i] ≥ δ(x_i, c_a) and lower[i·t+g] ≤ min{δ(x_i, c_j) : j in group g,
// j ≠ a} (+Inf for a group with no such j). It runs an Elkan-style scan: centers in index order, a
// center skipped when half its distance to the best center so far exceeds
// that center's distance (its lower bound is then 2h − u), so that on
// clustered data most distances are never computed.
func (b *bounds) firstPass(st *Step, grp *grouping, upper, lower []float32, pool *scratchPool[scratch]) {
	k, t := b.k, grp.t
	b.halves(st.Centers)
	b.eachBlock(st, pool, func(ks *scratch, part *Partial, lo, hi int) (moved, evals int) {
		ks.growGroups(t)
		for i := lo; i < hi; i++ {
			for g := range t {
				ks.m1[g], ks.m2[g], ks.i1[g] = inf, inf, -1
			}
			record := func(j int, l float64) {
				g := grp.group[j]
				switch {
				case l < ks.m1[g]:
					ks.m1[g], ks.m2[g], ks.i1[g] = l, ks.m1[g], j
				case l < ks.m2[g]:
					ks.m2[g] = l
				}
			}
			a, fa := 0, b.rowLoss(i, st.Centers, 0)
			evals++
			da := b.dist(fa)
			u := b.up(da)
			record(0, b.down(da))
			for j := 1; j < k; j++ {
				if h := b.half[a*k+j]; b.beats(h, u) {
					record(j, b.down(2*h-u)) // δ_j ≥ 2h − δ_a ≥ 2h − u
					continue
				}
				fj := b.rowLoss(i, st.Centers, j)
				evals++
				dj := b.dist(fj)
				record(j, b.down(dj))
				if less(fj, j, fa, a) {
					a, fa, u = j, fj, b.up(dj)
				}
			}
			L := lower[i*t : (i+1)*t]
			for g := range t {
				v := ks.m1[g]
				if ks.i1[g] == a {
					v = ks.m2[g]
				}
				L[g] = lo32(v)
			}
			upper[i] = hi32(u)
			mv, _ := b.settle(st, part, i, a, fa, true)
			moved += mv
		}
		return moved, evals
	})
}

// growGroups sizes the per-group scratch for t groups.
func (ks *scratch) growGroups(t int) {
	ks.m1 = growFloats(ks.m1, t)
	ks.m2 = growFloats(ks.m2, t)
	ks.i1 = growInts(ks.i1, t)
}

func growInts(s []int, n int) []int {
	if cap(s) < n {
		return make([]int, n)
	}
	return s[:n]
}
