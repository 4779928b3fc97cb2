package kbeam

import (
	"fmt"
	"math"
	"slices"

	"github.com/centroidlab/centroid/kmeans"
)

// State is where a Lloyd iteration stands between passes: the one element
// of the PCollection that Pass reads as a side input and writes anew.
//
// After pass p, Centers are the centers that pass assigned the rows to
// (C_{p−1}), Stats the statistics of that assignment (sizes, weights,
// costs, which describe Centers exactly), and Next the centers the next
// pass will use (C_p, the metric's center rule applied to Stats; a cluster
// that received no rows keeps its center). Converged is set when Next
// equals Centers bit for bit, so another pass would change nothing; the
// result of a clustering is Centers with Stats, as kmeans.Cluster returns
// the centers of its last assignment pass.
type State struct {
	// Pass counts the assignment passes done.
	Pass int
	// Centers and Next are k×d, row-major; Centers is nil before the
	// first pass.
	Centers, Next []float64
	// Stats holds the statistics of the last pass (nil before the first).
	Stats *kmeans.Partial
	// Converged reports that the last pass left every center in place.
	Converged bool
	// Empty lists the clusters that received no rows in the last pass.
	Empty []int64
}

// advance returns the state after a pass with merged statistics p over
// the centers st.Next.
func (st *State) advance(sp *space, p *kmeans.Partial) (State, error) {
	if p.K != sp.k || p.D != sp.d {
		return State{}, fmt.Errorf("%w: statistics of shape %d×%d, want %d×%d", ErrInput, p.K, p.D, sp.k, sp.d)
	}
	if c := p.TotalCost(); math.IsNaN(c) || math.IsInf(c, 0) {
		return State{}, fmt.Errorf("%w: the cost of pass %d is %v; rescale the data", kmeans.ErrData, st.Pass+1, c)
	}
	next := slices.Clone(st.Next)
	empty, err := p.Centers(next, sp.rule)
	if err != nil {
		return State{}, err
	}
	e := make([]int64, len(empty))
	for i, j := range empty {
		e[i] = int64(j)
	}
	return State{
		Pass:      st.Pass + 1,
		Centers:   st.Next,
		Next:      next,
		Stats:     p,
		Converged: slices.Equal(next, st.Next),
		Empty:     e,
	}, nil
}

// check returns an error wrapping ErrInput if the state does not fit sp.
func (st *State) check(sp *space) error {
	n := sp.k * sp.d
	if len(st.Next) != n || (st.Centers != nil && len(st.Centers) != n) {
		return fmt.Errorf("%w: state holds %d center values, want %d", ErrInput, len(st.Next), n)
	}
	for _, v := range st.Next {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%w: a center holds %v", kmeans.ErrData, v)
		}
	}
	return nil
}

func encodePartial(w *wire, p *kmeans.Partial) {
	w.bool(p != nil)
	if p == nil {
		return
	}
	w.u64(uint64(p.K))
	w.u64(uint64(p.D))
	w.f64s(p.Sum)
	w.f64s(p.Weight)
	w.i64s(p.Count)
	w.f64s(p.Cost)
}

func decodePartial(r *reader) *kmeans.Partial {
	if !r.bool() {
		return nil
	}
	p := &kmeans.Partial{K: int(r.u64()), D: int(r.u64()), Sum: r.f64s(), Weight: r.f64s(), Count: r.i64s(), Cost: r.f64s()}
	if r.err == nil && (p.K < 1 || p.D < 1 || len(p.Sum) != p.K*p.D || len(p.Weight) != p.K || len(p.Count) != p.K || len(p.Cost) != p.K) {
		r.fail("statistics of inconsistent shape")
	}
	return p
}

func encodeState(st State) []byte {
	w := newWire(codecVersion, 8*(8+len(st.Centers)+len(st.Next)))
	w.i64(int64(st.Pass))
	w.optF64s(st.Centers)
	w.f64s(st.Next)
	encodePartial(w, st.Stats)
	w.bool(st.Converged)
	w.i64s(st.Empty)
	return w.b
}

func decodeState(b []byte) (State, error) {
	r := newReader(b, "state")
	st := State{Pass: int(r.i64()), Centers: r.optF64s(), Next: r.f64s(), Stats: decodePartial(r), Converged: r.bool(), Empty: r.i64s()}
	return st, r.done("state")
}

// leaf is the statistics of one block, on its way into the combine.
type leaf struct {
	Seq uint64
	P   *kmeans.Partial
}

func encodeLeaf(l leaf) []byte {
	w := newWire(codecVersion, 8*(8+len(l.P.Sum)+3*l.P.K))
	w.u64(l.Seq)
	encodePartial(w, l.P)
	return w.b
}

func decodeLeaf(b []byte) (leaf, error) {
	r := newReader(b, "block statistics")
	l := leaf{Seq: r.u64(), P: decodePartial(r)}
	if r.err == nil && l.P == nil {
		r.fail("block statistics without statistics")
	}
	return l, r.done("block statistics")
}

// partialTree is the accumulator of the statistics combine.
type partialTree struct {
	mergeTree[*kmeans.Partial]
}

func mergePartials(l, r *kmeans.Partial) *kmeans.Partial {
	l.Merge(r)
	return l
}

func encodePartialTree(t partialTree) []byte { return encodeTree(t.mergeTree, encodePartial) }

func decodePartialTree(b []byte) (partialTree, error) {
	m, err := decodeTree(b, "statistics tree", "tree node without statistics", decodePartial)
	return partialTree{m}, err
}

// sum is the merged statistics of a pass; P is nil when no block arrived.
type sum struct {
	P *kmeans.Partial
}

func encodeSum(s sum) []byte {
	w := newWire(codecVersion, 64)
	encodePartial(w, s.P)
	return w.b
}

func decodeSum(b []byte) (sum, error) {
	r := newReader(b, "statistics")
	s := sum{P: decodePartial(r)}
	return s, r.done("statistics")
}
