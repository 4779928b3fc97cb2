package kmeans

import (
	"cmp"
	"context"
	"math"
	"math/rand/v2"
	"slices"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/nearest"
)

// Random-swap refinement (P. Fränti, "Efficiency of random swap
// clustering", Journal of Big Data 5:13, 2018). k-means stops at a local
// optimum: with many clusters, some true cluster often holds two centers
// while two others share one, and no Lloyd pass can move a center across
// the gap. A swap trial moves one center, chosen uniformly at random, to a
// row drawn with probability proportional to its share of the cost (as
// k-means++ draws; the paper draws rows uniformly, which needs about k
// times more trials to hit the region where a center is missing),
// repartitions, moves the centers of the clusters that changed
// and repartitions again (two k-means iterations, done locally), and keeps
// the new solution only if its cost is lower. After the last trial the
// driver runs the Method from the kept centers to a fixed point, so the
// result is an ordinary k-means result: its assignments are the nearest of
// its centers and its cost never exceeds that of the restart it refined.
//
// Local work: a trial measures only the rows of clusters whose center moved
// against the centers they may now be nearer to, and the rows of nearby
// clusters against the moved centers, pruning with the triangle
// inequality; far clusters are not visited. So a trial costs about the
// rows of a few clusters, instead of the two passes over n·k distances of
// the paper's version.
//
// Determinism: the trials draw from their own generator, seeded by
// Settings.Seed, and run sequentially, so the result is bit-identical for
// any number of workers.

// swapStream separates the generator of the swap trials from those of the
// restarts (which use stream = restart index).
const swapStream = 0x73776170 // "swap"

// Defaults of the refinement (Settings.SwapTrials, SwapPatience).
const (
	// DefaultSwapPatience: stop after this many trials in a row without
	// an accepted swap, times k (see Settings.SwapPatience).
	DefaultSwapPatience = 6
	// DefaultSwapTrialsPerK: the automatic budget is this many trials per
	// cluster (see Settings.SwapTrials).
	DefaultSwapTrialsPerK = 100
	// MinSwapK is the smallest k the automatic rule refines: with few
	// clusters the restarts already find the best solution.
	MinSwapK = 10
	// MaxSwapDim is the largest dimension the automatic rule refines. In
	// more dimensions distances concentrate, the triangle-inequality
	// pruning of a trial skips little and a trial costs nearly a full
	// pass, while the gain shrinks (on the 16-dimensional letter set 527
	// trials cost 1.5 times the ten restarts and gained 0.5 %; see
	// BENCHMARKS.md).
	MaxSwapDim = 8
	// DefaultRefinedRestarts replaces DefaultRestarts when the automatic
	// refinement runs and Settings.Restarts is zero: swaps find better
	// solutions than further restarts for the same time.
	DefaultRefinedRestarts = 2
)

// swapPlan returns the number of trials and the patience the refinement
// uses for k clusters, or 0 trials when it does not run.
func swapPlan(set Settings, sp *Space, k int) (trials, patience int) {
	if set.SwapTrials < 0 || sp.arith != distance.SquaredDifferences || k < 2 || k >= sp.N {
		return 0, 0
	}
	trials = set.SwapTrials
	if trials == 0 {
		if k < MinSwapK || sp.D > MaxSwapDim {
			return 0, 0
		}
		trials = DefaultSwapTrialsPerK * k
	}
	patience = set.SwapPatience
	if patience == 0 {
		patience = DefaultSwapPatience * k
	}
	return trials, patience
}

// swapper holds the solution being refined: centers, assignments, each
// row's loss to its center, and per cluster its members, weight, cost and
// largest member loss. Trials touch only the clusters near the moved
// center, so they run sequentially; their order, and so the result, does
// not depend on the number of workers.
type swapper struct {
	sp      *Space
	k, d    int
	c       []float64 // k×d centers
	a       []int     // cluster of every row
	at      []int     // position of every row in its cluster's members
	loss    []float64 // loss of every row to its center (unweighted)
	members [][]int   // rows of every cluster
	wt      []float64 // per cluster: Σ w
	cost    []float64 // per cluster: Σ w·loss
	top     []float64 // per cluster: the largest member loss

	// A trial's undo log and scratch.
	oldC, oldWt, oldCost, oldTop []float64
	moved                        []move // changes of rows, in the order applied
	pending                      []move // changes found by a repartition
	inM                          []bool // per cluster: changed in this trial
	list                         []int  // the changed clusters
	pos                          []int  // per cluster: position in list
	half, near                   []float64
	order                        []int     // scratch: centers by distance
	dref                         []float64 // scratch: their distances
	sum                          []float64 // scratch: one center's weighted sum
	evals                        int64
}

// move is a change of one row: to cluster to with loss l, from cluster
// from with loss old.
type move struct {
	i        int
	from, to int
	old, l   float64
}

func newSwapper(sp *Space, centers []float64, assign []int, k int) *swapper {
	s := &swapper{sp: sp, k: k, d: sp.D,
		c: slices.Clone(centers), a: slices.Clone(assign), at: make([]int, sp.N),
		loss: make([]float64, sp.N), members: make([][]int, k),
		wt: make([]float64, k), cost: make([]float64, k), top: make([]float64, k),
		oldC: make([]float64, k*sp.D), oldWt: make([]float64, k), oldCost: make([]float64, k), oldTop: make([]float64, k),
		inM: make([]bool, k), pos: make([]int, k), near: make([]float64, k), sum: make([]float64, sp.D),
	}
	for i, j := range s.a {
		s.at[i] = len(s.members[j])
		s.members[j] = append(s.members[j], i)
	}
	for j := range k {
		s.mark(j)
	}
	if !s.restat() {
		return nil // a cluster without weight: nothing to refine
	}
	s.unmark()
	return s
}

// total returns the cost of the solution, summed in cluster order.
func (s *swapper) total() float64 {
	var t float64
	for _, v := range s.cost {
		t += v
	}
	return t
}

// lossTo returns the loss of row i to center j.
func (s *swapper) lossTo(i, j int) float64 {
	c := s.c[j*s.d : (j+1)*s.d]
	if s.sp.X32 != nil {
		return nearest.SqDist(s.sp.row32(i), c)
	}
	return distance.SqEuclidean(s.sp.Row(i), c)
}

// mark adds cluster j to the changed clusters.
func (s *swapper) mark(j int) {
	if !s.inM[j] {
		s.inM[j] = true
		s.list = append(s.list, j)
	}
}

// unmark empties the changed clusters.
func (s *swapper) unmark() {
	for _, j := range s.list {
		s.inM[j] = false
	}
	s.list = s.list[:0]
}

// relocate moves row i from its cluster to cluster to with loss l.
func (s *swapper) relocate(i, to int, l float64) {
	from := s.a[i]
	if to != from {
		ms := s.members[from]
		last := ms[len(ms)-1]
		ms[s.at[i]] = last
		s.at[last] = s.at[i]
		s.members[from] = ms[:len(ms)-1]
		s.at[i] = len(s.members[to])
		s.members[to] = append(s.members[to], i)
		s.a[i] = to
	}
	s.loss[i] = l
}

// repartition reassigns rows near the changed centers (swapped: the first
// repartition of a trial, after the swap alone): a row of a changed
// cluster (whose center moved) goes to its nearest center; a row of
// another cluster moves to a changed center nearer than its own (the lower
// index on a tie). A row at distance r from its center c never gets nearer
// to a center farther than 2r from c (triangle inequality), so such
// centers, and whole clusters whose every member is that close to its own
// center, are skipped. This only prunes a heuristic; the passes after the
// refinement are exact.
func (s *swapper) repartition(swapped bool) {
	k := s.k
	targets := s.list
	// half[p·k+q]: the square of half the distance between changed center
	// targets[p] and center q; near[q]: the least of them over p.
	half := growFloats(s.half, len(targets)*k)
	near := s.near
	for q := range near {
		near[q] = math.Inf(1)
	}
	for p, c := range targets {
		s.pos[c] = p
		for q := range k {
			h := 0.25 * distance.SqEuclidean(s.c[c*s.d:(c+1)*s.d], s.c[q*s.d:(q+1)*s.d])
			half[p*k+q] = h
			near[q] = min(near[q], h)
		}
	}
	s.half = half
	s.evals += int64(len(targets) * k)
	s.pending = s.pending[:0]
	for from := range k {
		if s.inM[from] {
			// Its center moved: measure it, then every center that can be
			// nearer. Centers are taken by their distance from a reference
			// point p, and a center q farther from x than ‖c_q−p‖ − ‖x−p‖
			// ends the scan once that exceeds the best distance. p is the
			// center's position before the trial when it was just swapped
			// (its members' losses still refer to it), else its position now.
			ref := s.c[from*s.d : (from+1)*s.d]
			if swapped {
				ref = s.oldC[from*s.d : (from+1)*s.d]
			}
			dref := growFloats(s.dref, k)
			order := s.order[:0]
			for q := range k {
				if q != from {
					order = append(order, q)
					dref[q] = math.Sqrt(distance.SqEuclidean(ref, s.c[q*s.d:(q+1)*s.d]))
				}
			}
			s.dref = dref
			s.evals += int64(k)
			slices.SortFunc(order, func(a, b int) int { return cmp.Compare(dref[a], dref[b]) })
			s.order = order
			for _, i := range s.members[from] {
				to, l := from, s.lossTo(i, from)
				dx := math.Sqrt(l)
				if swapped {
					dx = math.Sqrt(s.loss[i])
				}
				s.evals++
				for _, q := range order {
					if g := dref[q] - dx; g > 0 && g*g > l {
						break
					}
					s.evals++
					if lq := s.lossTo(i, q); lq < l || (lq == l && q < to) {
						to, l = q, lq
					}
				}
				if to != from {
					s.pending = append(s.pending, move{i: i, from: from, to: to, old: s.loss[i], l: l})
				}
			}
			continue
		}
		if near[from] > s.top[from] {
			continue // no member can reach a changed center
		}
		for _, i := range s.members[from] {
			to, l := from, s.loss[i]
			if near[from] > l {
				continue
			}
			for p, q := range targets {
				if half[p*k+from] > l {
					continue
				}
				s.evals++
				if lq := s.lossTo(i, q); lq < l || (lq == l && q < to) {
					to, l = q, lq
				}
			}
			if to != from {
				s.pending = append(s.pending, move{i: i, from: from, to: to, old: s.loss[i], l: l})
			}
		}
	}
	for _, m := range s.pending {
		s.moved = append(s.moved, m)
		s.relocate(m.i, m.to, m.l)
		s.mark(m.from)
		s.mark(m.to)
	}
}

// restat recomputes, exactly, the weights, centers (means), member losses,
// costs and largest losses of the changed clusters. It returns false if a
// changed cluster has no weight.
func (s *swapper) restat() bool {
	sp, d := s.sp, s.d
	for _, j := range s.list {
		var wt float64
		sum := s.sum
		clear(sum)
		for _, i := range s.members[j] {
			w := sp.Weight(i)
			wt += w
			if sp.X32 != nil {
				addRow(sum, w, sp.row32(i))
			} else {
				addRow(sum, w, sp.Row(i))
			}
		}
		if !(wt > 0) {
			return false
		}
		s.wt[j] = wt
		for t := range d {
			s.c[j*d+t] = sum[t] / wt
		}
		var cost, top float64
		for _, i := range s.members[j] {
			l := s.lossTo(i, j)
			s.loss[i] = l
			cost += sp.Weight(i) * l
			top = max(top, l)
		}
		s.cost[j], s.top[j] = cost, top
		s.evals += int64(len(s.members[j]))
	}
	return true
}

// addRow adds w·x to sum, element by element, for a row of either width
// (one source for both, so that a float32 row adds the bits of its float64
// conversion).
func addRow[T nearest.Float](sum []float64, w float64, x []T) {
	sum = sum[:len(x)]
	for t, v := range x {
		sum[t] += w * float64(v)
	}
}

// trial tries moving center j to row r and keeps the result if it lowers
// the cost. It reports whether it did.
func (s *swapper) trial(j, r int) bool {
	before := s.total()
	copy(s.oldC, s.c)
	copy(s.oldWt, s.wt)
	copy(s.oldCost, s.cost)
	copy(s.oldTop, s.top)
	s.moved = s.moved[:0]
	s.unmark()

	c := s.c[j*s.d : (j+1)*s.d]
	copy(c, s.sp.RowTo(c, r))
	s.mark(j)
	s.repartition(true)
	ok := s.restat()
	if ok {
		s.repartition(false)
		ok = s.restat()
	}
	if ok && s.total() < before {
		return true
	}
	// Undo the row changes in reverse order, then the cluster values, and
	// measure the members of the changed clusters again (restat changed
	// their losses).
	for i := len(s.moved) - 1; i >= 0; i-- {
		m := s.moved[i]
		s.relocate(m.i, m.from, m.old)
	}
	copy(s.c, s.oldC)
	copy(s.wt, s.oldWt)
	copy(s.cost, s.oldCost)
	copy(s.top, s.oldTop)
	for _, j := range s.list {
		for _, i := range s.members[j] {
			s.loss[i] = s.lossTo(i, j)
		}
		s.evals += int64(len(s.members[j]))
	}
	return false
}

// draw returns a row drawn with probability proportional to its share of
// the cost, w·loss (a cluster by its cost, then a member by its share), or
// -1 if the cost is zero. Rows far from every center lie where a center is
// missing, so they are the ones worth a center.
func (s *swapper) draw(rnd *rand.Rand) int {
	total := s.total()
	if !(total > 0) {
		return -1
	}
	u := rnd.Float64() * total
	j := -1
	var acc float64
	for q, c := range s.cost {
		if c > 0 {
			j = q
			if acc += c; acc > u {
				break
			}
		}
	}
	u = rnd.Float64() * s.cost[j]
	acc = 0
	last := -1
	for _, i := range s.members[j] {
		if v := s.sp.Weight(i) * s.loss[i]; v > 0 {
			last = i
			if acc += v; acc > u {
				return i
			}
		}
	}
	return last
}

// refine runs random-swap trials on the outcome o until patience trials
// in a row are rejected, trials have run, or ctx ends. It returns the
// refined centers (nil if no swap was accepted), the trials run, the
// swaps accepted and the distance evaluations.
func refine(ctx context.Context, sp *Space, o *outcome, k int, seed uint64, trials, patience int) (centers []float64, tried, accepted int, evals int64) {
	s := newSwapper(sp, o.centers, o.assign, k)
	if s == nil {
		return nil, 0, 0, 0
	}
	rnd := rand.New(rand.NewPCG(seed, swapStream))
	quiet := 0
	for tried < trials && quiet < patience && ctx.Err() == nil {
		tried++
		j := rnd.IntN(k)
		r := s.draw(rnd)
		if r < 0 { // every row sits on its center
			break
		}
		if s.trial(j, r) {
			accepted++
			quiet = 0
		} else {
			quiet++
		}
	}
	if accepted == 0 {
		return nil, tried, 0, s.evals
	}
	return s.c, tried, accepted, s.evals
}
