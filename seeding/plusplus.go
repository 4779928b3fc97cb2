package seeding

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/centroidlab/centroid/internal/blocks"
	"github.com/centroidlab/centroid/internal/nearest"

	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
)

// PlusPlus is k-means++ seeding (D. Arthur and S. Vassilvitskii, "k-means++:
// the advantages of careful seeding", SODA 2007). The first center is a row
// drawn with probability proportional to its weight. Each further center is
// a row drawn with probability proportional to w·D(x), where D(x) is the
// loss from x to its nearest chosen center: the metric's Loss when it
// implements distance.Objective (the squared distance for Euclidean, the
// distance itself for Manhattan and Cosine), else the squared Distance.
//
// In the greedy variant, each step draws Candidates rows this way and keeps
// the one that leaves the lowest total weighted loss Σ w·D(x) (ties go to
// the earlier draw). Candidates = 1 is classic k-means++.
//
// Duplicates: a row with D(x) = 0 has zero probability, so PlusPlus never
// returns two equal centers. Rows count as distinct when their loss is
// positive, so under Cosine two rows pointing the same way (x and 2x) count
// as one when their computed dissimilarity is exactly 0. If every
// positive-weight row is at loss 0 from the centers chosen so far before k
// are found, Seed returns an error wrapping ErrK. If the weighted losses
// overflow float64, it returns an error wrapping distance.ErrNotFinite.
//
// Parallelism and determinism: rows are split into at most 64 fixed blocks
// of at least 1024 rows, a split that depends only on n. Each pass hands
// whole blocks to Workers goroutines; sums are taken within a block in row
// order and then added in block order. A draw takes u·total, finds the
// block by a scan over the block sums and then the row by a scan within the
// block. The centers are therefore bit-identical for any Workers value.
//
// Cost: each step evaluates all its L candidates in one pass over the data
// and then updates the nearest losses for the kept one in a second pass, so
// a call makes n·(1 + (k−1)·(L+1)) loss evaluations of d coordinates each
// (n·k for classic k-means++): O(n·d·k·L) time, divided among Workers
// goroutines. Each draw scans at most 64 block sums and the rows of one
// block. Memory: n float64 for the nearest losses plus O(L) per block; no
// n×k matrix. Seed allocates its scratch once per call.
type PlusPlus struct {
	// Candidates is the number of rows drawn at each step, of which the one
	// giving the lowest total weighted loss is kept. Zero means 2 + ⌊ln k⌋;
	// 1 is classic k-means++; negative values are invalid (ErrParameter).
	Candidates int
	// Workers is the number of goroutines Seed uses. Zero means 1
	// (kmeans.Cluster replaces a zero with its goroutines per restart);
	// negative values are invalid (ErrParameter). The centers do not depend
	// on it.
	Workers int
}

// WithWorkers returns p with Workers = n if p.Workers is zero, else p
// (see Concurrent).
func (p PlusPlus) WithWorkers(n int) Seeder {
	if p.Workers == 0 {
		p.Workers = n
	}
	return p
}

var (
	_ Concurrent    = PlusPlus{}
	_ ContextSeeder = PlusPlus{}
)

// candidates returns the number of draws per step for k centers.
func (p PlusPlus) candidates(k int) int {
	if p.Candidates > 0 {
		return p.Candidates
	}
	return 2 + int(math.Log(float64(k)))
}

// isEuclidean reports whether m's loss is the squared Euclidean distance,
// which sqEuclidean2 computes two at a time.
func isEuclidean(m distance.Metric) bool {
	return distance.ArithmeticOf(m) == distance.SquaredDifferences
}

// MaxCandidates is the largest PlusPlus.Candidates accepted: each step
// keeps one partial sum per candidate and block.
const MaxCandidates = 1 << 10

// Seed implements Seeder.
func (p PlusPlus) Seed(dst *mat.Dense, data *mat.Dense, weights []float64, m distance.Metric, rnd *rand.Rand) error {
	return p.SeedContext(context.Background(), dst, data, weights, m, rnd)
}

// SeedContext is Seed that stops early when ctx is done, returning an error
// wrapping ctx.Err() and leaving dst unchanged. It checks ctx between the
// blocks of every pass over the data, so it returns within about one
// block of work (see ContextSeeder).
func (p PlusPlus) SeedContext(ctx context.Context, dst *mat.Dense, data *mat.Dense, weights []float64, m distance.Metric, rnd *rand.Rand) error {
	if err := p.check(); err != nil {
		return err
	}
	in, err := checkInput(dst, data, weights, m, rnd)
	if err != nil {
		return err
	}
	return p.seed(ctx, in, rnd)
}

// SeedFloat32 implements Float32Seeder: SeedContext on float32 data, read
// in place. Rows are widened (exactly) to float64 one at a time as a pass
// reads them, into per-block buffers, and the losses are those of the
// float64 rows bit for bit, so the centers are those of SeedContext on the
// float64 conversion of data. Extra memory: that of SeedContext plus
// 2·d float64 per block and d per candidate.
func (p PlusPlus) SeedFloat32(ctx context.Context, dst *mat.Dense, data blas32.General, weights []float64, m distance.Metric, rnd *rand.Rand) error {
	if err := p.check(); err != nil {
		return err
	}
	in, err := checkInput32(dst, data, weights, m, rnd)
	if err != nil {
		return err
	}
	return p.seed(ctx, in, rnd)
}

// check validates the options.
func (p PlusPlus) check() error {
	if p.Candidates < 0 || p.Candidates > MaxCandidates {
		return fmt.Errorf("%w: PlusPlus.Candidates = %d, want 0 ≤ Candidates ≤ %d", ErrParameter, p.Candidates, MaxCandidates)
	}
	if p.Workers < 0 {
		return fmt.Errorf("%w: PlusPlus.Workers = %d, want ≥ 0", ErrParameter, p.Workers)
	}
	return nil
}

// seed runs k-means++ on the checked input.
func (p PlusPlus) seed(ctx context.Context, in *input, rnd *rand.Rand) error {
	L := p.candidates(in.k)
	st := newPlusState(in, L, max(1, p.Workers))
	st.stop = ctx.Done()
	chosen := make([]int, 1, in.k)
	idx := make([]int, 0, L)

	if !st.each(st.initFn) {
		return canceled(ctx)
	}
	weightSum := st.total()
	if math.IsInf(weightSum, 0) {
		return fmt.Errorf("%w: the sum of the weights overflows", ErrWeights)
	}
	chosen[0] = st.draw(rnd, weightSum)
	if !st.update(in.rowTo(st.center64, chosen[0]), true) {
		return canceled(ctx)
	}
	for len(chosen) < in.k {
		total := st.total()
		if total == 0 {
			return fmt.Errorf("%w: k = %d but data has only %d distinct rows with positive weight under %s", ErrK, in.k, len(chosen), in.m.Name())
		}
		if math.IsNaN(total) || math.IsInf(total, 0) {
			return fmt.Errorf("seeding: %w: the weighted losses overflow float64; rescale the data", distance.ErrNotFinite)
		}
		idx = idx[:0]
		for range L {
			if i := st.draw(rnd, total); !repeated(idx, i) {
				idx = append(idx, i)
			}
		}
		best := idx[0]
		if len(idx) > 1 {
			e, ok := st.evaluate(idx)
			if !ok {
				return canceled(ctx)
			}
			best = idx[e]
		}
		if !st.update(in.rowTo(st.center64, best), false) {
			return canceled(ctx)
		}
		chosen = append(chosen, best)
	}
	in.writeRows(chosen)
	return nil
}

// canceled returns the error of a seeding stopped by ctx.
func canceled(ctx context.Context) error {
	return fmt.Errorf("seeding: stopped: %w", context.Cause(ctx))
}

// each runs fn on every block, or stops early and returns false once the
// caller's context ends.
func (st *plusState) each(fn func(b int)) bool {
	return st.bl.EachUntil(st.workers, st.stop, fn)
}

// repeated reports whether i is in idx.
func repeated(idx []int, i int) bool {
	for _, j := range idx {
		if j == i {
			return true
		}
	}
	return false
}

// plusState is the scratch of one PlusPlus.Seed call.
type plusState struct {
	*input
	loss    func(x, c []float64) float64
	bl      blocks.Split
	workers int
	near    []float64   // loss from row i to its nearest center (0 for weight 0)
	sums    []float64   // sums[b] = Σ w_i·near[i] over block b, in row order
	pots    []float64   // pots[b·L+c]: the same sum once candidate c is added
	cands   [][]float64 // rows of the candidates being evaluated
	potLen  int         // L: the number of pots per block
	euclid  bool        // the loss is distance.SqEuclidean
	center  []float64   // the center update adds
	first   bool        // update adds the first center

	// Float32 data: the rows a block reads, widened (2·d per block), the
	// widened candidates (d each) and the center being added.
	rowBufs  []float64
	candBufs [][]float64
	center64 []float64

	stop <-chan struct{} // closed when the caller's context ends

	// Bound once so that passes do not allocate.
	initFn, updateFn, evalFn func(b int)
}

func newPlusState(in *input, L, workers int) *plusState {
	bl := blocks.Of(in.n)
	st := &plusState{
		input:   in,
		loss:    lossFunc(in.m),
		euclid:  isEuclidean(in.m),
		bl:      bl,
		workers: workers,
		near:    make([]float64, in.n),
		sums:    make([]float64, bl.Count()),
	}
	st.initFn, st.updateFn, st.evalFn = st.initBlock, st.updateBlock, st.evalBlock
	if L > 1 {
		st.potLen = L
		st.pots = make([]float64, bl.Count()*L)
		st.cands = make([][]float64, 0, L)
	}
	if in.x32 != nil {
		st.rowBufs = make([]float64, 2*in.d*bl.Count())
		st.center64 = make([]float64, in.d)
		st.candBufs = make([][]float64, L)
		for c := range st.candBufs {
			st.candBufs[c] = make([]float64, in.d)
		}
	}
	return st
}

// rowIn returns row i as block b reads it: a view of float64 data, or the
// float32 row widened into the block's buffer slot (0 or 1).
func (st *plusState) rowIn(b, slot, i int) []float64 {
	if st.x32 == nil {
		return st.row(i)
	}
	o := (2*b + slot) * st.d
	return st.rowTo(st.rowBufs[o:o+st.d], i)
}

// term returns w_i·near[i], the unnormalized probability of drawing row i.
func (st *plusState) term(i int) float64 {
	if st.w == nil {
		return st.near[i]
	}
	return st.w[i] * st.near[i]
}

// total returns the sum of the block sums in block order.
func (st *plusState) total() float64 {
	var t float64
	for _, s := range st.sums {
		t += s
	}
	return t
}

// draw returns a row i drawn with probability term(i)/total, where total is
// st.total(), positive and finite. A row whose term is zero is never drawn.
func (st *plusState) draw(rnd *rand.Rand, total float64) int {
	u := rnd.Float64() * total
	if u >= total {
		u = math.Nextafter(total, 0)
	}
	// Smallest block b with prefix(b) + sums[b] > u, where prefix(b) is the
	// block-ordered sum of the earlier blocks, added as total() adds them.
	// Then prefix(b) ≤ u, so sums[b] > 0.
	var prefix float64
	b := 0
	for last := st.bl.Count() - 1; b < last && prefix+st.sums[b] <= u; b++ {
		prefix += st.sums[b]
	}
	// Smallest row of the block whose running sum (taken as in the block
	// sum) exceeds u − prefix ≥ 0; rounding may leave the whole block at or
	// below it, and then the last row of positive term is taken.
	u -= prefix
	var t float64
	last := -1
	for i := st.bl[b]; i < st.bl[b+1]; i++ {
		if v := st.term(i); v > 0 {
			last = i
			if t += v; t > u {
				return i
			}
		}
	}
	return last
}

// initBlock sets near to 1 in block b, so that the first draw follows the
// weights.
func (st *plusState) initBlock(b int) {
	var s float64
	for i := st.bl[b]; i < st.bl[b+1]; i++ {
		st.near[i] = 1
		s += st.weight(i)
	}
	st.sums[b] = s
}

// update adds center c: near[i] becomes the loss to c, or the smaller of
// near[i] and that loss unless first, and the block sums follow. It
// returns false if the caller's context ended first.
func (st *plusState) update(c []float64, first bool) bool {
	st.center, st.first = c, first
	return st.each(st.updateFn)
}

// updateBlock does update's work on block b.
func (st *plusState) updateBlock(b int) {
	if st.x32 != nil {
		updateRows(st, st.x32, b)
		return
	}
	updateRows(st, st.x, b)
}

// updateRows is updateBlock on the rows x (the data's backing slice, of
// either width): the same losses, bit for bit, for float32 rows as for
// their float64 conversion.
func updateRows[T nearest.Float](st *plusState, x []T, b int) {
	c, first := st.center, st.first
	var s float64
	lo, hi := st.bl[b], st.bl[b+1]
	for i := lo; i < hi; i++ {
		w := st.weight(i)
		if w == 0 {
			st.near[i] = 0
			continue
		}
		if st.euclid {
			if i+1 < hi && st.weight(i+1) != 0 {
				// Two rows at once; (c−x)² has the bits of (x−c)².
				l0, l1 := sqEuclidean2(c, rowOf(x, st.stride, st.d, i), rowOf(x, st.stride, st.d, i+1))
				s += w * st.lower(i, l0, first)
				i++
				s += st.weight(i) * st.lower(i, l1, first)
				continue
			}
			s += w * st.lower(i, nearest.SqDist(rowOf(x, st.stride, st.d, i), c), first)
			continue
		}
		s += w * st.lower(i, st.loss(st.rowIn(b, 0, i), c), first)
	}
	st.sums[b] = s
}

// rowOf returns row i of x with the given stride and d columns.
func rowOf[T nearest.Float](x []T, stride, d, i int) []T {
	o := i * stride
	return x[o : o+d : o+d]
}

// lower sets near[i] to l, or to min(near[i], l) unless first, and returns
// the new value.
func (st *plusState) lower(i int, l float64, first bool) float64 {
	if !first {
		l = min2(st.near[i], l)
	}
	st.near[i] = l
	return l
}

// evaluate computes, in one pass over the data, the total weighted loss
// once each of the distinct rows idx is added as a center, and returns the
// position in idx of the lowest (the earliest on ties). It leaves near and
// sums unchanged. ok is false if the caller's context ended first.
func (st *plusState) evaluate(idx []int) (best int, ok bool) {
	st.cands = st.cands[:0]
	for c, i := range idx {
		if st.x32 != nil {
			st.cands = append(st.cands, st.rowTo(st.candBufs[c], i))
			continue
		}
		st.cands = append(st.cands, st.row(i))
	}
	L := len(st.cands)
	if !st.each(st.evalFn) {
		return 0, false
	}
	best, bestPot := -1, 0.0
	for c := range L {
		var pot float64
		for b := range st.bl.Count() {
			pot += st.pots[b*st.potLen+c]
		}
		if best < 0 || pot < bestPot {
			best, bestPot = c, pot
		}
	}
	return best, true
}

// evalBlock sets pots[b·potLen+c] to Σ w_i·min(near[i], loss(x_i, c)) over
// block b for every candidate c.
func (st *plusState) evalBlock(b int) {
	if st.x32 != nil {
		evalRows(st, st.x32, b)
		return
	}
	evalRows(st, st.x, b)
}

// evalRows is evalBlock on the rows x (of either width).
func evalRows[T nearest.Float](st *plusState, x []T, b int) {
	L := len(st.cands)
	// Sum in a local array so that blocks on other goroutines never share
	// a cache line with this one while it runs.
	var local [16]float64
	pot := local[:]
	if L > len(local) {
		pot = st.pots[b*st.potLen : b*st.potLen+L]
	}
	pot = pot[:L]
	clear(pot)
	for i := st.bl[b]; i < st.bl[b+1]; i++ {
		w := st.weight(i)
		if w == 0 {
			continue
		}
		nr := st.near[i]
		if st.euclid {
			xi := rowOf(x, st.stride, st.d, i)
			c := 0
			for ; c+1 < L; c += 2 {
				l0, l1 := sqEuclidean2(xi, st.cands[c], st.cands[c+1])
				l0, l1 = min2(nr, l0), min2(nr, l1)
				pot[c] += w * l0
				pot[c+1] += w * l1
			}
			for ; c < L; c++ {
				pot[c] += w * min2(nr, nearest.SqDist(xi, st.cands[c]))
			}
			continue
		}
		xw := st.rowIn(b, 0, i)
		for c := range L {
			pot[c] += w * min2(nr, st.loss(xw, st.cands[c]))
		}
	}
	copy(st.pots[b*st.potLen:], pot)
}

// min2 returns l, or near when near < l.
func min2(near, l float64) float64 {
	if near < l {
		return near
	}
	return l
}

// sqEuclidean2 returns distance.SqEuclidean(x, a) and SqEuclidean(x, b),
// bit for bit (same pairs of running sums), computed together so that the
// four sums can advance in parallel, for float64 values of either width
// (float32 values are widened exactly). a and b must have len(x)
// elements.
func sqEuclidean2[X, Y nearest.Float](x []X, a, b []Y) (float64, float64) {
	a, b = a[:len(x)], b[:len(x)]
	var a0, a1, b0, b1 float64
	i := 0
	for ; i+1 < len(x); i += 2 {
		x0, x1 := float64(x[i]), float64(x[i+1])
		d0, d1 := x0-float64(a[i]), x1-float64(a[i+1])
		e0, e1 := x0-float64(b[i]), x1-float64(b[i+1])
		a0 += d0 * d0
		a1 += d1 * d1
		b0 += e0 * e0
		b1 += e1 * e1
	}
	if i < len(x) {
		d, e := float64(x[i])-float64(a[i]), float64(x[i])-float64(b[i])
		a0 += d * d
		b0 += e * e
	}
	return a0 + a1, b0 + b1
}
