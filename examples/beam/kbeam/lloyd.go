package kbeam

import (
	"fmt"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"

	"github.com/centroidlab/centroid/kmeans"
)

// Pass adds one Lloyd pass to the pipeline: every block of rows (a
// PCollection of Block) is assigned to the centers of state (a PCollection
// holding one State, read as a side input), each block's rows are summed
// into one kmeans.Partial, the partials are combined with a CombineFn
// over a fixed merge tree (so the sums do not depend on how the runner
// splits the work), and the center rule gives the new State. A cluster
// that gets no rows keeps its center (it is listed in State.Empty). Once
// a state has converged, Pass passes it on unchanged and assigns nothing.
//
// Pass returns an error wrapping kmeans.ErrK, kmeans.ErrMetric (such as
// Manhattan) or kmeans.ErrSettings for a Config it cannot run. Bad rows
// (NaN, ±Inf, a zero row under Cosine) fail the pipeline when it runs.
func Pass(s beam.Scope, c Config, rows, state beam.PCollection) (beam.PCollection, error) {
	sp, err := c.spec()
	if err != nil {
		return beam.PCollection{}, err
	}
	return pass(s.Scope("kbeam.Pass"), sp, rows, state), nil
}

func pass(s beam.Scope, sp spec, rows, state beam.PCollection) beam.PCollection {
	leaves := beam.ParDo(s, &assignFn{Spec: sp}, rows, beam.SideInput{Input: state})
	merged := beam.Combine(s, &statsFn{K: sp.K, D: sp.D}, leaves)
	return beam.ParDo(s, &advanceFn{Spec: sp}, state, beam.SideInput{Input: merged})
}

// Lloyd adds passes Lloyd passes to the pipeline, starting from state,
// and returns the final State. The passes are unrolled: the pipeline
// always holds all of them, and those after convergence do no work. It
// returns Pass's errors, and one wrapping kmeans.ErrSettings if passes < 1.
func Lloyd(s beam.Scope, c Config, rows, state beam.PCollection, passes int) (beam.PCollection, error) {
	sp, err := c.spec()
	if err != nil {
		return beam.PCollection{}, err
	}
	if passes < 1 {
		return beam.PCollection{}, fmt.Errorf("%w: %d passes, want ≥ 1", kmeans.ErrSettings, passes)
	}
	s = s.Scope("kbeam.Lloyd")
	for range passes {
		state = pass(s, sp, rows, state)
	}
	return state, nil
}

// Start returns a PCollection holding the State that starts Lloyd passes
// from the k×d centers (row-major; scaled to unit length under Cosine).
func Start(s beam.Scope, c Config, centers []float64) (beam.PCollection, error) {
	sp, err := c.spec()
	if err != nil {
		return beam.PCollection{}, err
	}
	st, err := startState(sp, centers)
	if err != nil {
		return beam.PCollection{}, err
	}
	return createState(s.Scope("kbeam.Start"), st), nil
}

func startState(sp spec, centers []float64) (State, error) {
	spc, err := sp.space()
	if err != nil {
		return State{}, err
	}
	st := State{Next: append([]float64(nil), centers...)}
	if err := st.check(&spc); err != nil {
		return State{}, fmt.Errorf("%w: %w", kmeans.ErrSeeding, err)
	}
	if spc.cosine {
		if err := unitRows(st.Next, sp.D); err != nil {
			return State{}, err
		}
	}
	return st, nil
}

// createState puts st into the pipeline as its encoding (beam.Create
// codes values as JSON, which cannot hold every float64).
func createState(s beam.Scope, st State) beam.PCollection {
	return beam.ParDo(s, decodeState, beam.Create(s, encodeState(st)))
}

// assignFn sums each block's rows per nearest center.
type assignFn struct {
	Spec spec
	sp   space
	unit []float64
	st   *State // the side input, the same for every element of the transform
}

func (f *assignFn) Setup() error {
	sp, err := f.Spec.space()
	f.sp, f.unit = sp, make([]float64, f.Spec.D)
	return err
}

func (f *assignFn) ProcessElement(b Block, state func(*State) bool, emit func(leaf)) error {
	if f.st == nil {
		var st State
		if !state(&st) {
			// An earlier pass failed or saw no rows; the runner reports
			// the failure, and the job finds no state.
			return nil
		}
		if err := st.check(&f.sp); err != nil {
			return err
		}
		f.st = &st
	}
	st := f.st
	if st.Converged {
		return nil
	}
	if err := b.check(f.Spec.D); err != nil {
		return err
	}
	p := kmeans.NewPartial(f.Spec.K, f.Spec.D)
	if err := f.sp.assign(p, &b, st.Next, f.unit); err != nil {
		return err
	}
	emit(leaf{Seq: b.Seq, P: p})
	return nil
}

// statsFn combines per-block statistics in the order of a fixed merge tree.
type statsFn struct {
	K, D int
}

func (f *statsFn) CreateAccumulator() partialTree { return partialTree{} }

func (f *statsFn) AddInput(t partialTree, l leaf) (partialTree, error) {
	if l.P.K != f.K || l.P.D != f.D {
		return t, fmt.Errorf("%w: block statistics of shape %d×%d, want %d×%d", ErrInput, l.P.K, l.P.D, f.K, f.D)
	}
	err := t.add(l.Seq, l.P, mergePartials)
	return t, err
}

func (f *statsFn) MergeAccumulators(a, b partialTree) (partialTree, error) {
	err := a.absorb(&b.mergeTree, mergePartials)
	return a, err
}

func (f *statsFn) ExtractOutput(t partialTree) sum {
	p, _ := t.result(mergePartials)
	return sum{P: p}
}

// advanceFn applies the center rule to a pass's merged statistics.
type advanceFn struct {
	Spec spec
}

func (f *advanceFn) ProcessElement(st State, merged func(*sum) bool, emit func(State)) error {
	if st.Converged {
		emit(st)
		return nil
	}
	var m sum
	if !merged(&m) || m.P == nil {
		return nil // no rows: emit no state (see assignFn)
	}
	sp, err := f.Spec.space()
	if err != nil {
		return err
	}
	next, err := st.advance(&sp, m.P)
	if err != nil {
		return err
	}
	emit(next)
	return nil
}
