package seeding

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/blocks"
	"github.com/centroidlab/centroid/internal/nearest"
	"github.com/centroidlab/centroid/internal/rowset"
)

// DefaultRounds is the number of sampling rounds of Parallel when
// Parallel.Rounds is zero: the r = 5 of Bahmani et al., whose experiments
// found more rounds unnecessary (from memory).
const DefaultRounds = 5

// Parallel is k-means‖ seeding (B. Bahmani, B. Moseley, A. Vattani,
// R. Kumar, S. Vassilvitskii, "Scalable k-means++", PVLDB 5(7), 2012): a
// version of k-means++ that needs a few passes over the data instead of k,
// so that it suits data too large to hold (package kmeans/stream) and
// distributed engines.
//
// The first candidate is a row drawn with probability proportional to its
// weight. Each of Rounds sampling rounds then makes one pass over the data
// and keeps every row x independently with probability
// min(1, ℓ·w·D(x)/φ), where D(x) is the loss from x to its nearest
// candidate so far (the metric's Loss, as in PlusPlus), φ = Σ w·D(x) over
// all rows in that same pass, and ℓ the oversampling factor (Oversampling,
// 2k by default, the paper's ℓ = 2k). About ℓ rows join the candidates per
// round. One more pass weighs every candidate by the total weight of the
// rows nearest to it (ties to the lower candidate), and weighted k-means++
// (PlusPlus, greedy) on the weighted candidates picks the k centers.
//
// Passes over the data: Rounds + 1 (the first candidate is drawn from the
// weights alone), 6 by default; fewer when a round leaves every row on a
// candidate (φ = 0). While fewer than k candidates exist after Rounds
// rounds, further rounds run, at most 64.
//
// One pass must see φ before it can decide, yet φ is only known at its
// end. Each row therefore draws its uniform u before the pass, and it is
// kept exactly when u·φ < ℓ·w·D(x), i.e. when its key w·D(x)/u exceeds
// φ/ℓ: a pass keeps the rows with the largest keys (at most 4ℓ + 64; the
// chance that more qualify is below 10⁻¹⁰ for any ℓ, and Plan reports it)
// and the reduce step decides once φ is known. The draw u of a row comes
// from a counter-based hash of the seed, the round and the row's index, so
// it depends on neither the order of the rows nor how they are split: the
// per-block results of a pass merge (ParallelPart.Merge) into the same
// answer on any number of workers or machines.
//
// Duplicates: a row at loss 0 from a candidate is never kept, rows kept in
// one round that are equal are kept once, and the final PlusPlus never
// returns two equal centers; with fewer than k distinct rows of positive
// weight Seed returns an error wrapping ErrK.
//
// Cost: each pass computes the loss of every row to every candidate
// (1 + about ℓ per round), O(n·d·ℓ·Rounds²) in all, through the blocked
// Euclidean kernel of internal/nearest under Euclidean; memory O(ℓ·Rounds·d)
// for the candidates and O(d·(4ℓ+64)) per block for the kept rows.
type Parallel struct {
	// Rounds is the number of sampling rounds. Zero means DefaultRounds
	// (5); negative is invalid (ErrParameter).
	Rounds int
	// Oversampling is ℓ, the expected number of rows kept per round. Zero
	// means 2k; negative, NaN or infinite is invalid (ErrParameter).
	Oversampling float64
	// Workers is the number of goroutines Seed uses. Zero means 1
	// (kmeans.Cluster replaces a zero with its goroutines per restart);
	// negative is invalid. The centers do not depend on it.
	Workers int
}

var _ Concurrent = Parallel{}

// WithWorkers returns p with Workers = n if p.Workers is zero, else p
// (see Concurrent).
func (p Parallel) WithWorkers(n int) Seeder {
	if p.Workers == 0 {
		p.Workers = n
	}
	return p
}

// Seed implements Seeder. It draws the seed of the row hashes and the
// first candidate from rnd, runs the rounds over the fixed blocks of
// internal/blocks (in parallel on Workers goroutines, merged in block
// order) and reduces the candidates with PlusPlus using rnd.
func (p Parallel) Seed(dst *mat.Dense, data *mat.Dense, weights []float64, m distance.Metric, rnd *rand.Rand) error {
	if p.Workers < 0 {
		return fmt.Errorf("%w: Parallel.Workers = %d, want ≥ 0", ErrParameter, p.Workers)
	}
	in, err := checkInput(dst, data, weights, m, rnd)
	if err != nil {
		return err
	}
	inner := p
	inner.Workers = 1 // the blocks run in parallel, each Add on one goroutine
	pl, err := inner.Plan(in.k, in.d, in.m, rnd.Uint64())
	if err != nil {
		return err
	}
	cum := make([]float64, in.n)
	in.cumWeights(cum)
	if err := pl.SetFirst(in.row(pick(cum, rnd))); err != nil {
		return err
	}
	cum = nil
	bl := blocks.Of(in.n)
	parts := make([]*ParallelPart, bl.Count())
	var copies [][]float64 // contiguous copies of strided blocks
	if in.stride != in.d {
		copies = make([][]float64, bl.Count())
	}
	errs := make([]error, bl.Count())
	for !pl.Done() {
		for b := range parts {
			parts[b] = pl.NewPart()
		}
		bl.Each(max(1, p.Workers), func(b int) {
			lo, hi := bl.Bounds(b)
			x := in.x[lo*in.stride:]
			if copies != nil {
				if copies[b] == nil {
					copies[b] = make([]float64, (hi-lo)*in.d)
					for i := lo; i < hi; i++ {
						copy(copies[b][(i-lo)*in.d:], in.row(i))
					}
				}
				x = copies[b]
			}
			var w []float64
			if in.w != nil {
				w = in.w[lo:hi]
			}
			errs[b] = pl.Add(parts[b], uint64(lo), x[:(hi-lo)*in.d], w)
		})
		merged := pl.NewPart()
		for b, part := range parts {
			if errs[b] != nil {
				return errs[b]
			}
			merged.Merge(part)
		}
		if err := pl.Next(merged); err != nil {
			return err
		}
	}
	return pl.Centers(dst, rnd)
}

// maxExtraRounds bounds the rounds run beyond Rounds to reach k candidates.
const maxExtraRounds = 64

// ParallelPlan is the state of one k-means‖ seeding between passes over the
// data, for callers that hold the rows elsewhere: a stream read block by
// block, or a distributed job whose workers each see part of the data.
//
// A pass goes: every worker makes a NewPart and calls Add with its rows
// (any split, each row with its own index); the parts are merged with
// ParallelPart.Merge; Next ends the pass with the merged part. When Done
// reports true, Centers returns the k centers. Candidates, the state the
// workers need, is small (O(ℓ·rounds·d)) and can be shipped to them.
//
// Without SetFirst, the first pass draws the first candidate (the row with
// the smallest key −ln(u)/w, a weighted draw by the exponential race), so
// that it too can run split; the Add calls of that pass need no
// candidates. A ParallelPlan is not safe for concurrent use, except that
// Add may run concurrently on distinct parts.
type ParallelPlan struct {
	k, d     int
	metric   distance.Metric
	loss     func(x, c []float64) float64
	euclid   bool
	seed     uint64
	ell      float64
	rounds   int
	maxPicks int
	workers  int

	round     int       // sampling rounds done
	first     bool      // the first candidate is known
	done      bool      // no more passes
	cands     []float64 // candidates, row-major
	weights   []float64 // per candidate, from the last pass that saw all of them
	packed    nearest.Centers
	passes    int
	cost      float64
	truncated int
	scratch   sync.Pool // *addScratch
}

// Plan returns the k-means‖ state for k centers of dimension d under
// metric m (nil means Euclidean), with row draws derived from seed. Each
// Add computes nearest candidates on p.Workers goroutines (zero means 1)
// and adds the rows up in order, so its result does not depend on them.
// It returns an error wrapping ErrParameter for invalid options and ErrK
// for k < 1 or d < 1.
func (p Parallel) Plan(k, d int, m distance.Metric, seed uint64) (*ParallelPlan, error) {
	if k < 1 || d < 1 {
		return nil, fmt.Errorf("%w: k = %d, d = %d, want both ≥ 1", ErrK, k, d)
	}
	if p.Rounds < 0 {
		return nil, fmt.Errorf("%w: Parallel.Rounds = %d, want ≥ 0", ErrParameter, p.Rounds)
	}
	if !(p.Oversampling >= 0) || math.IsInf(p.Oversampling, 1) {
		return nil, fmt.Errorf("%w: Parallel.Oversampling = %v, want ≥ 0 and finite", ErrParameter, p.Oversampling)
	}
	if m == nil {
		m = distance.Euclidean{}
	}
	if err := distance.Check(m); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrParameter, err)
	}
	if p.Workers < 0 {
		return nil, fmt.Errorf("%w: Parallel.Workers = %d, want ≥ 0", ErrParameter, p.Workers)
	}
	pl := &ParallelPlan{k: k, d: d, metric: m, loss: lossFunc(m), euclid: isEuclidean(m), seed: seed, rounds: p.Rounds, ell: p.Oversampling, workers: max(1, p.Workers)}
	if pl.rounds == 0 {
		pl.rounds = DefaultRounds
	}
	if pl.ell == 0 {
		pl.ell = 2 * float64(k)
	}
	pl.maxPicks = int(math.Min(4*pl.ell+64, 1<<24))
	pl.scratch.New = func() any { return new(addScratch) }
	return pl, nil
}

// SetFirst makes x (copied) the first candidate, so that no pass is spent
// drawing it; x must be a row of the data. It returns an error wrapping
// ErrParameter if a first candidate is already known, x has the wrong
// length or the metric rejects it.
func (pl *ParallelPlan) SetFirst(x []float64) error {
	if pl.first {
		return fmt.Errorf("%w: the first candidate is already set", ErrParameter)
	}
	if len(x) != pl.d {
		return fmt.Errorf("%w: first candidate has %d values, want %d", ErrParameter, len(x), pl.d)
	}
	if err := distance.CheckRow(pl.metric, x); err != nil {
		return fmt.Errorf("%w: first candidate: %w", ErrParameter, err)
	}
	pl.cands = append(pl.cands[:0], x...)
	pl.first = true
	pl.pack()
	return nil
}

func (pl *ParallelPlan) pack() {
	if pl.euclid {
		pl.packed.Pack(pl.cands, len(pl.cands)/pl.d, pl.d)
	}
}

// Done reports whether the passes are over and Centers can be called.
func (pl *ParallelPlan) Done() bool { return pl.done }

// Passes returns the number of passes ended by Next.
func (pl *ParallelPlan) Passes() int { return pl.passes }

// Rounds returns the number of sampling rounds done.
func (pl *ParallelPlan) Rounds() int { return pl.round }

// Cost returns φ of the last sampling pass: Σ w·D(x) to the candidates
// that pass measured (0 before the first).
func (pl *ParallelPlan) Cost() float64 { return pl.cost }

// Truncated returns the number of rounds in which more rows qualified than
// a pass keeps (4ℓ + 64), so that some qualifying rows were left out.
func (pl *ParallelPlan) Truncated() int { return pl.truncated }

// Candidates returns a copy of the candidates so far, one per row, or nil
// before the first is known.
func (pl *ParallelPlan) Candidates() *mat.Dense {
	n := len(pl.cands) / pl.d
	if n == 0 {
		return nil
	}
	return mat.NewDense(n, pl.d, slices.Clone(pl.cands))
}

// ParallelPart is the result of one pass of k-means‖ over a subset of the
// rows. Parts of disjoint subsets merge into the part of their union; the
// merge is exact and order-free for Rows, Weight counts of integer weights
// and the kept rows, and associative up to floating-point rounding for
// Cost and Weight: merge in a fixed order for bit-identical results. The
// exported fields let a part be encoded and shipped between processes.
type ParallelPart struct {
	// Rows is the number of rows added.
	Rows int64
	// Cost is Σ w·D(x) over the rows, in the order added.
	Cost float64
	// Weight[j] is the total weight of the rows whose nearest candidate is
	// j (ties to the lower index).
	Weight []float64
	// Picks holds the rows with the largest keys, best first (ties to the
	// lower Index), at most the plan's limit.
	Picks []ParallelPick

	limit int // picks kept (0: all)
}

// addScratch is the working memory of one Add call, pooled by the plan so
// that parts stay small (a pass may hold one part per block).
type addScratch struct {
	res  []int     // nearest candidate per row of a chunk
	loss []float64 // loss per row of a chunk
	s    []*nearest.Searcher
}

// ParallelPick is a row kept by a pass with its key.
type ParallelPick struct {
	// Index is the row's index given to Add.
	Index uint64
	// Key orders the picks (larger is better): w·D(x)/u in a sampling
	// pass, ln(u)/w in the first pass.
	Key float64
	// U is the row's uniform draw in (0, 1); WD is w·D(x).
	U, WD float64
	// X holds the row's values.
	X []float64
}

// NewPart returns an empty part for the next pass; make new parts for
// every pass, since the candidates change between passes.
func (pl *ParallelPlan) NewPart() *ParallelPart {
	q := &ParallelPart{Weight: make([]float64, len(pl.cands)/pl.d), limit: pl.maxPicks}
	if !pl.first {
		q.limit = 1
	}
	return q
}

// Merge adds r into q, keeping the picks within the limit of the plan that
// made q (all of them for a decoded part). It panics if the parts belong
// to different passes (different numbers of candidates).
func (q *ParallelPart) Merge(r *ParallelPart) {
	if len(q.Weight) != len(r.Weight) {
		panic("seeding: ParallelPart.Merge of parts of different passes")
	}
	q.Rows += r.Rows
	q.Cost += r.Cost
	for j, v := range r.Weight {
		q.Weight[j] += v
	}
	if len(r.Picks) == 0 {
		return
	}
	q.Picks = append(q.Picks, r.Picks...)
	slices.SortFunc(q.Picks, comparePicks)
	if q.limit > 0 && len(q.Picks) > q.limit {
		q.Picks = q.Picks[:q.limit]
	}
}

func comparePicks(a, b ParallelPick) int {
	if c := cmp.Compare(b.Key, a.Key); c != 0 {
		return c
	}
	return cmp.Compare(a.Index, b.Index)
}

// uniform returns the draw u ∈ (0, 1) of row i in round r: a counter-based
// hash (SplitMix64's finaliser, applied twice) of the seed, the round and
// the index, so that it depends on nothing else.
func (pl *ParallelPlan) uniform(r int, i uint64) float64 {
	z := mix64(pl.seed ^ mix64(uint64(r)+0x9e3779b97f4a7c15) ^ mix64(i^0x5851f42d4c957f2d))
	return (float64(z>>11) + 0.5) * 0x1p-53
}

// mix64 is the finaliser of SplitMix64 (Steele, Lea and Flood, "Fast
// splittable pseudorandom number generators", OOPSLA 2014).
func mix64(z uint64) uint64 {
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// Add adds the rows of x (m×d row-major, m = len(x)/d) with weights w (nil
// means all ones) to the part; row t has index first+t, which must be
// unique over the whole pass and the same in every pass (a row number, or
// a file and line packed into 64 bits). It computes every row's nearest
// candidate and loss, the pass's cost and weights, and keeps the rows with
// the largest keys.
//
// Rows must be in the clustering space; Add returns an error wrapping
// ErrShape if len(x) is not a multiple of d or len(w) does not match, and
// the metric's error for a row it rejects (NaN, ±Inf, a zero row under
// Cosine), and ErrWeights for a negative or non-finite weight. Add after
// Done returns an error wrapping ErrParameter.
func (pl *ParallelPlan) Add(q *ParallelPart, first uint64, x []float64, w []float64) error {
	d := pl.d
	if pl.done {
		return fmt.Errorf("%w: Add after the last pass", ErrParameter)
	}
	if len(x)%d != 0 {
		return fmt.Errorf("%w: %d values is not a whole number of rows of %d", ErrShape, len(x), d)
	}
	m := len(x) / d
	if w != nil && len(w) != m {
		return fmt.Errorf("%w: %d weights for %d rows", ErrShape, len(w), m)
	}
	for t := range m {
		if err := distance.CheckRow(pl.metric, x[t*d:(t+1)*d]); err != nil {
			return fmt.Errorf("seeding: row %d: %w", first+uint64(t), err)
		}
		if w != nil && (!(w[t] >= 0) || math.IsInf(w[t], 1)) {
			return fmt.Errorf("%w: row %d has weight %v", ErrWeights, first+uint64(t), w[t])
		}
	}
	weight := func(t int) float64 {
		if w == nil {
			return 1
		}
		return w[t]
	}
	q.Rows += int64(m)
	if !pl.first {
		for t := range m {
			if wt := weight(t); wt > 0 {
				i := first + uint64(t)
				u := pl.uniform(0, i)
				pl.keep(q, ParallelPick{Index: i, Key: math.Log(u) / wt, U: u}, x[t*d:(t+1)*d], max(1, q.limit))
			}
		}
		return nil
	}
	nc := len(pl.cands) / d
	if len(q.Weight) != nc {
		return fmt.Errorf("%w: part made for %d candidates, the plan has %d", ErrParameter, len(q.Weight), nc)
	}
	sc := pl.scratch.Get().(*addScratch)
	defer pl.scratch.Put(sc)
	for t0 := 0; t0 < m; t0 += addChunk {
		t1 := min(m, t0+addChunk)
		pl.nearest(sc, x[t0*d:t1*d], t1-t0)
		for t := t0; t < t1; t++ {
			wt := weight(t)
			if wt == 0 {
				continue
			}
			j, l := sc.res[t-t0], sc.loss[t-t0]
			q.Weight[j] += wt
			wd := wt * l
			q.Cost += wd
			if wd > 0 {
				i := first + uint64(t)
				u := pl.uniform(pl.round+1, i)
				pl.keep(q, ParallelPick{Index: i, Key: wd / u, U: u, WD: wd}, x[t*d:(t+1)*d], pl.maxPicks)
			}
		}
	}
	return nil
}

// addChunk is the number of rows whose nearest candidates Add computes
// (in parallel) before adding them up in order; tile the rows of one
// goroutine's share.
const (
	addChunk = 4096
	tile     = 256
)

// keep inserts p (with a copy of x) into q's picks if it is among the
// limit best, keeping them sorted.
func (pl *ParallelPlan) keep(q *ParallelPart, p ParallelPick, x []float64, limit int) {
	n := len(q.Picks)
	if n == limit && comparePicks(p, q.Picks[n-1]) >= 0 {
		return
	}
	pos, _ := slices.BinarySearchFunc(q.Picks, p, comparePicks)
	if n == limit {
		// Reuse the dropped pick's row buffer.
		p.X = append(q.Picks[n-1].X[:0], x...)
		copy(q.Picks[pos+1:], q.Picks[pos:n-1])
		q.Picks[pos] = p
		return
	}
	p.X = append([]float64(nil), x...)
	q.Picks = slices.Insert(q.Picks, pos, p)
}

// nearest fills q.res and q.loss with the nearest candidate and its loss
// for the m rows of x, in tiles spread over the plan's workers (each row's
// answer is independent of the split). It is the one place this file calls
// the blocked kernel of internal/nearest (exact argmin, lowest index on
// ties).
func (pl *ParallelPlan) nearest(q *addScratch, x []float64, m int) {
	q.res = growInts(q.res, m)
	q.loss = growFloats(q.loss, m)
	tiles := (m + tile - 1) / tile
	w := min(pl.workers, tiles)
	for len(q.s) < max(1, w) {
		q.s = append(q.s, new(nearest.Searcher))
	}
	if w <= 1 {
		for t := range tiles {
			pl.nearestTile(q.s[0], q.res, q.loss, x, t*tile, min(m, (t+1)*tile))
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for g := range w {
		wg.Go(func() {
			for t := int(next.Add(1)) - 1; t < tiles; t = int(next.Add(1)) - 1 {
				pl.nearestTile(q.s[g], q.res, q.loss, x, t*tile, min(m, (t+1)*tile))
			}
		})
	}
	wg.Wait()
}

// nearestTile does nearest's work for rows [lo, hi) of x.
func (pl *ParallelPlan) nearestTile(s *nearest.Searcher, res []int, loss []float64, x []float64, lo, hi int) {
	d, nc := pl.d, len(pl.cands)/pl.d
	if pl.euclid {
		rows := x[lo*d : hi*d]
		s.Assign(res[lo:hi], rows, hi-lo, &pl.packed, func(i, j int) float64 {
			return distance.SqEuclidean(rows[i*d:(i+1)*d], pl.cands[j*d:(j+1)*d])
		})
		for t := lo; t < hi; t++ {
			j := res[t]
			loss[t] = distance.SqEuclidean(x[t*d:(t+1)*d], pl.cands[j*d:(j+1)*d])
		}
		return
	}
	for t := lo; t < hi; t++ {
		row := x[t*d : (t+1)*d]
		best, bl := 0, math.Inf(1)
		for j := range nc {
			if l := pl.loss(row, pl.cands[j*d:(j+1)*d]); l < bl {
				best, bl = j, l
			}
		}
		res[t], loss[t] = best, bl
	}
}

// Next ends a pass with the merged part of all its rows. After the first
// pass it takes the drawn row as the first candidate; after a sampling
// pass it adds the rows that qualify (u·φ < ℓ·w·D(x)), once each; after
// the weighing pass it marks the plan done. It returns an error wrapping
// ErrK if no row of positive weight was seen, ErrParameter if q belongs
// to another pass, and distance.ErrNotFinite if φ overflows.
func (pl *ParallelPlan) Next(q *ParallelPart) error {
	if pl.done {
		return fmt.Errorf("%w: Next after the last pass", ErrParameter)
	}
	if len(q.Weight) != len(pl.cands)/pl.d {
		return fmt.Errorf("%w: part made for %d candidates, the plan has %d", ErrParameter, len(q.Weight), len(pl.cands)/pl.d)
	}
	pl.passes++
	if !pl.first {
		if len(q.Picks) == 0 {
			return fmt.Errorf("%w: no row of positive weight", ErrK)
		}
		pl.cands = append(pl.cands[:0], q.Picks[0].X...)
		pl.first = true
		pl.pack()
		return nil
	}
	phi := q.Cost
	if math.IsNaN(phi) || math.IsInf(phi, 0) {
		return fmt.Errorf("seeding: %w: the weighted losses overflow float64; rescale the data", distance.ErrNotFinite)
	}
	total := 0.0
	for _, v := range q.Weight {
		total += v
	}
	if !(total > 0) {
		return fmt.Errorf("%w: no row of positive weight", ErrK)
	}
	pl.weights = append(pl.weights[:0], q.Weight...)
	nc := len(pl.cands) / pl.d
	sampling := pl.round < pl.rounds || (nc < pl.k && pl.round < pl.rounds+maxExtraRounds)
	if phi == 0 || !sampling {
		// Every row sits on a candidate, or the rounds are over: the
		// weights of this pass are those of the final candidates.
		pl.done = true
		return nil
	}
	pl.cost = phi
	pl.round++
	added := rowset.New(len(q.Picks))
	selected := 0
	for _, p := range q.Picks {
		if !(p.U*phi < pl.ell*p.WD) {
			continue
		}
		selected++
		if added.Add(p.X) {
			pl.cands = append(pl.cands, p.X...)
		}
	}
	if selected == pl.maxPicks {
		pl.truncated++
	}
	if added.Len() > 0 {
		pl.pack()
	}
	return nil
}

// Centers writes the k centers into dst (k×d): weighted k-means++
// (PlusPlus with its default candidates, on Workers goroutines) over the
// candidates weighted by the last pass, with randomness from rnd. It
// returns an error wrapping ErrParameter before Done, ErrShape if dst is
// not k×d, and ErrK if fewer than k distinct candidates have weight.
func (pl *ParallelPlan) Centers(dst *mat.Dense, rnd *rand.Rand) error {
	if !pl.done {
		return fmt.Errorf("%w: Centers before the last pass", ErrParameter)
	}
	if dst == nil {
		return fmt.Errorf("%w: nil dst", ErrShape)
	}
	if r, c := dst.Dims(); r != pl.k || c != pl.d {
		return fmt.Errorf("%w: dst is %d×%d, want %d×%d", ErrShape, r, c, pl.k, pl.d)
	}
	nc := len(pl.cands) / pl.d
	positive := 0
	for _, v := range pl.weights {
		if v > 0 {
			positive++
		}
	}
	if positive < pl.k {
		return fmt.Errorf("%w: k = %d but only %d distinct candidate rows after %d rounds (the data has fewer distinct rows of positive weight, or raise Oversampling)", ErrK, pl.k, positive, pl.round)
	}
	cands := mat.NewDense(nc, pl.d, pl.cands)
	return PlusPlus{}.Seed(dst, cands, pl.weights, pl.metric, rnd)
}

func growInts(s []int, n int) []int {
	if cap(s) < n {
		return make([]int, n)
	}
	return s[:n]
}

func growFloats(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}
