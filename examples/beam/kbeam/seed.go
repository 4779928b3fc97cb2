package kbeam

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/seeding"
)

// Seed adds k-means‖ seeding (seeding.Parallel, B. Bahmani et al.,
// "Scalable k-means++", PVLDB 2012) to the pipeline as passes over rows:
// one pass draws the first candidate, c.Seeding.Rounds passes (default
// seeding.DefaultRounds) sample candidates and one pass weighs them; a
// final step reduces the candidates to K centers with weighted k-means++.
// It returns a PCollection holding the State that starts Lloyd passes.
//
// Each pass runs seeding.ParallelPlan.Add on every block (row t of a block
// has index First+t), combines the parts over a fixed merge tree and ends
// the pass with ParallelPlan.Next. Workers rebuild the plan by replaying
// the merged parts of the earlier passes, which travel as a side input
// (they hold at most 4ℓ+64 rows per pass). The draws depend only on the
// seed and the row indices, so the centers are those of the same plan
// driven in memory (and of kmeans/stream with the same Settings.Seed),
// however the runner splits the rows.
//
// The passes are unrolled, so their number is fixed when the pipeline is
// built: if the plan needs more (fewer than K candidates after the
// rounds, which needs data with few distinct rows), the pipeline fails
// with a message saying so; Cluster with Driven iteration has no such
// limit. Passes after the plan is done (every row on a candidate) do no
// work.
func Seed(s beam.Scope, c Config, rows beam.PCollection) (beam.PCollection, error) {
	sp, err := c.spec()
	if err != nil {
		return beam.PCollection{}, err
	}
	s = s.Scope("kbeam.Seed")
	st := createSeedState(s, seedState{})
	for i := range sp.rounds() + 2 {
		st = seedPass(s, sp, rows, st, i == 0)
	}
	return beam.ParDo(s, &seedCentersFn{Spec: sp}, st), nil
}

// seedPass adds one k-means‖ pass; first says whether it is the pass that
// draws the first candidate.
func seedPass(s beam.Scope, sp spec, rows, state beam.PCollection, first bool) beam.PCollection {
	limit := sp.pickLimit()
	if first {
		limit = 1
	}
	parts := beam.ParDo(s, &seedAddFn{Spec: sp}, rows, beam.SideInput{Input: state})
	merged := beam.Combine(s, &partsFn{Limit: limit}, parts)
	return beam.ParDo(s, &seedNextFn{Spec: sp}, state, beam.SideInput{Input: merged})
}

// seedKey separates the k-means‖ draws from other uses of the seed. It
// and planSeed mirror kmeans/stream, so that the same seed gives the same
// centers there and here.
const seedKey = 0x7061_7261_6c6c_656c

// planSeed returns the seed of the plan's row draws.
func planSeed(seed uint64) uint64 { return mix64(seed ^ seedKey) }

// mix64 is the finaliser of SplitMix64 (G. L. Steele, D. Lea, C. H. Flood,
// "Fast splittable pseudorandom number generators", OOPSLA 2014).
func mix64(z uint64) uint64 {
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

func (sp spec) rounds() int {
	if sp.Rounds == 0 {
		return seeding.DefaultRounds
	}
	return sp.Rounds
}

// pickLimit is the number of picks a pass keeps, 4ℓ + 64 as
// seeding.Parallel documents; keeping the best of the merged picks to
// this many gives the parts the plan's own merge gives.
func (sp spec) pickLimit() int {
	ell := sp.Oversampling
	if ell == 0 {
		ell = 2 * float64(sp.K)
	}
	return int(math.Min(4*ell+64, 1<<24))
}

// replay rebuilds the plan from the merged parts of the passes so far.
func (sp spec) replay(history []*seeding.ParallelPart) (*seeding.ParallelPlan, error) {
	spc, err := sp.space()
	if err != nil {
		return nil, err
	}
	pl, err := seeding.Parallel{Rounds: sp.Rounds, Oversampling: sp.Oversampling}.Plan(sp.K, sp.D, spc.metric, planSeed(sp.Seed))
	if err != nil {
		return nil, fmt.Errorf("%w: %w", kmeans.ErrSeeding, err)
	}
	for _, q := range history {
		if err := pl.Next(q); err != nil {
			return nil, seedingErr(err)
		}
	}
	return pl, nil
}

// centers reduces the candidates of a finished plan to K centers.
func (sp spec) centers(pl *seeding.ParallelPlan) ([]float64, error) {
	if !pl.Done() {
		return nil, fmt.Errorf("%w: k-means‖ needs more than the %d passes the pipeline holds (fewer than k = %d candidates after %d rounds); use Driven iteration or raise Seeding.Oversampling", kmeans.ErrSeeding, pl.Passes(), sp.K, pl.Rounds())
	}
	dst := mat.NewDense(sp.K, sp.D, nil)
	if err := pl.Centers(dst, rand.New(rand.NewPCG(sp.Seed, seedKey))); err != nil {
		return nil, seedingErr(err)
	}
	c := dst.RawMatrix().Data
	if sp.Metric == "cosine" {
		if err := unitRows(c, sp.D); err != nil {
			return nil, err
		}
	}
	return c, nil
}

func seedingErr(err error) error {
	if errors.Is(err, seeding.ErrK) {
		return fmt.Errorf("%w: %w", kmeans.ErrK, err)
	}
	return fmt.Errorf("%w: %w", kmeans.ErrSeeding, err)
}

// seedState is where k-means‖ stands between passes: the merged part of
// every pass so far, from which any worker can replay the plan.
type seedState struct {
	History []*seeding.ParallelPart
	Done    bool
}

func createSeedState(s beam.Scope, st seedState) beam.PCollection {
	return beam.ParDo(s, decodeSeedState, beam.Create(s, encodeSeedState(st)))
}

// seedAddFn runs one pass of the plan over each block.
type seedAddFn struct {
	Spec spec
	plan *seeding.ParallelPlan
	done bool
}

func (f *seedAddFn) ProcessElement(b Block, state func(*seedState) bool, emit func(partLeaf)) error {
	if f.plan == nil && !f.done {
		// The side input is the same for every element of this transform.
		var st seedState
		if !state(&st) {
			return nil // an earlier pass failed or saw no rows (see assignFn)
		}
		if st.Done {
			f.done = true
		} else {
			pl, err := f.Spec.replay(st.History)
			if err != nil {
				return err
			}
			f.plan = pl
		}
	}
	if f.done {
		return nil
	}
	if err := b.check(f.Spec.D); err != nil {
		return err
	}
	part := f.plan.NewPart()
	if err := f.plan.Add(part, b.First, b.X, b.W); err != nil {
		return fmt.Errorf("%w: %w", ErrInput, err)
	}
	emit(partLeaf{Seq: b.Seq, P: part})
	return nil
}

// partsFn combines k-means‖ parts over a fixed merge tree, keeping the
// Limit best picks.
type partsFn struct {
	Limit int
}

func (f *partsFn) merge(l, r *seeding.ParallelPart) *seeding.ParallelPart {
	l.Merge(r)
	if len(l.Picks) > f.Limit {
		l.Picks = l.Picks[:f.Limit]
	}
	return l
}

func (f *partsFn) CreateAccumulator() partTree { return partTree{} }

func (f *partsFn) AddInput(t partTree, l partLeaf) (partTree, error) {
	err := t.add(l.Seq, l.P, f.merge)
	return t, err
}

func (f *partsFn) MergeAccumulators(a, b partTree) (partTree, error) {
	err := a.absorb(&b.mergeTree, f.merge)
	return a, err
}

func (f *partsFn) ExtractOutput(t partTree) partSum {
	p, _ := t.result(f.merge)
	return partSum{P: p}
}

// seedNextFn ends a pass with its merged part.
type seedNextFn struct {
	Spec spec
}

func (f *seedNextFn) ProcessElement(st seedState, merged func(*partSum) bool, emit func(seedState)) error {
	if st.Done {
		emit(st)
		return nil
	}
	var m partSum
	if !merged(&m) || m.P == nil {
		return nil // no rows: emit no state (see assignFn)
	}
	next, err := f.Spec.next(st, m)
	if err != nil {
		return err
	}
	emit(next)
	return nil
}

func (sp spec) next(st seedState, m partSum) (seedState, error) {
	history := append(slices.Clip(st.History), m.P)
	pl, err := sp.replay(history)
	if err != nil {
		return seedState{}, err
	}
	return seedState{History: history, Done: pl.Done()}, nil
}

// seedCentersFn turns the finished plan into the starting State.
type seedCentersFn struct {
	Spec spec
}

func (f *seedCentersFn) ProcessElement(st seedState, emit func(State)) error {
	pl, err := f.Spec.replay(st.History)
	if err != nil {
		return err
	}
	c, err := f.Spec.centers(pl)
	if err != nil {
		return err
	}
	emit(State{Next: c})
	return nil
}

// partLeaf is one block's k-means‖ part on its way into the combine.
type partLeaf struct {
	Seq uint64
	P   *seeding.ParallelPart
}

// partTree is the accumulator of the k-means‖ combine.
type partTree struct {
	mergeTree[*seeding.ParallelPart]
}

// partSum is the merged part of a pass; P is nil when no block arrived.
type partSum struct {
	P *seeding.ParallelPart
}

func encodePart(w *wire, p *seeding.ParallelPart) {
	w.bool(p != nil)
	if p == nil {
		return
	}
	w.i64(p.Rows)
	w.f64(p.Cost)
	w.f64s(p.Weight)
	w.u64(uint64(len(p.Picks)))
	for _, q := range p.Picks {
		w.u64(q.Index)
		w.f64(q.Key)
		w.f64(q.U)
		w.f64(q.WD)
		w.f64s(q.X)
	}
}

func decodePart(r *reader) *seeding.ParallelPart {
	if !r.bool() {
		return nil
	}
	p := &seeding.ParallelPart{Rows: r.i64(), Cost: r.f64(), Weight: r.f64s()}
	n := r.count(40)
	if n > 0 {
		p.Picks = make([]seeding.ParallelPick, n)
	}
	for i := range p.Picks {
		p.Picks[i] = seeding.ParallelPick{Index: r.u64(), Key: r.f64(), U: r.f64(), WD: r.f64(), X: r.f64s()}
	}
	return p
}

func encodeSeedState(st seedState) []byte {
	w := newWire(codecVersion, 64)
	w.u64(uint64(len(st.History)))
	for _, p := range st.History {
		encodePart(w, p)
	}
	w.bool(st.Done)
	return w.b
}

func decodeSeedState(b []byte) (seedState, error) {
	r := newReader(b, "k-means‖ state")
	n := r.count(1)
	var st seedState
	for range n {
		p := decodePart(r)
		if r.err == nil && p == nil {
			r.fail("k-means‖ state with an empty pass")
		}
		st.History = append(st.History, p)
	}
	st.Done = r.bool()
	return st, r.done("k-means‖ state")
}

func encodePartLeaf(l partLeaf) []byte {
	w := newWire(codecVersion, 64)
	w.u64(l.Seq)
	encodePart(w, l.P)
	return w.b
}

func decodePartLeaf(b []byte) (partLeaf, error) {
	r := newReader(b, "k-means‖ part")
	l := partLeaf{Seq: r.u64(), P: decodePart(r)}
	if r.err == nil && l.P == nil {
		r.fail("k-means‖ part without content")
	}
	return l, r.done("k-means‖ part")
}

func encodePartTree(t partTree) []byte { return encodeTree(t.mergeTree, encodePart) }

func decodePartTree(b []byte) (partTree, error) {
	m, err := decodeTree(b, "k-means‖ tree", "tree node without content", decodePart)
	return partTree{m}, err
}

func encodePartSum(s partSum) []byte {
	w := newWire(codecVersion, 64)
	encodePart(w, s.P)
	return w.b
}

func decodePartSum(b []byte) (partSum, error) {
	r := newReader(b, "k-means‖ pass")
	s := partSum{P: decodePart(r)}
	return s, r.done("k-means‖ pass")
}
