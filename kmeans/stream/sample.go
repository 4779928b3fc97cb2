package stream

import (
	"cmp"
	"container/heap"
	"math"
	"slices"
)

// mix64 is the finaliser of SplitMix64 (Steele, Lea and Flood, "Fast
// splittable pseudorandom number generators", OOPSLA 2014), used as a
// counter-based generator: the key of row i is mix64(seed ^ mix64(i)).
func mix64(z uint64) uint64 {
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// rowKey returns the sampling key of row i under seed.
func rowKey(seed uint64, i int64) uint64 { return mix64(seed ^ mix64(uint64(i))) }

// rowSample keeps the rows with the smallest keys: a uniform sample of m
// rows without replacement whose content depends only on the seed and the
// row indices (bottom-m sampling), not on block sizes or workers.
type rowSample struct {
	d, m int
	seed uint64
	h    keyHeap // max-heap on key
	rows []float64
}

func newRowSample(m, d int, seed uint64) *rowSample {
	return &rowSample{d: d, m: m, seed: seed}
}

// add offers row i.
func (s *rowSample) add(i int64, x []float64) {
	key := rowKey(s.seed, i)
	if len(s.h) < s.m {
		s.rows = append(s.rows, x...)
		heap.Push(&s.h, keyed{key: key, slot: len(s.h), index: i})
		return
	}
	if key >= s.h[0].key {
		return
	}
	slot := s.h[0].slot
	copy(s.rows[slot*s.d:(slot+1)*s.d], x)
	s.h[0] = keyed{key: key, slot: slot, index: i}
	heap.Fix(&s.h, 0)
}

// sorted returns the sampled rows in row order (m'×d, m' ≤ m) and their
// indices.
func (s *rowSample) sorted() ([]float64, []int64) {
	order := make([]keyed, len(s.h))
	copy(order, s.h)
	sortByIndex(order)
	out := make([]float64, 0, len(order)*s.d)
	idx := make([]int64, len(order))
	for t, e := range order {
		out = append(out, s.rows[e.slot*s.d:(e.slot+1)*s.d]...)
		idx[t] = e.index
	}
	return out, idx
}

type keyed struct {
	key   uint64
	slot  int
	index int64
	value float64
}

type keyHeap []keyed

func (h keyHeap) Len() int           { return len(h) }
func (h keyHeap) Less(i, j int) bool { return h[i].key > h[j].key }
func (h keyHeap) Swap(i, j int)      { h[i], h[j] = h[j], h[i] }
func (h *keyHeap) Push(x any)        { *h = append(*h, x.(keyed)) }
func (h *keyHeap) Pop() any {
	old := *h
	x := old[len(old)-1]
	*h = old[:len(old)-1]
	return x
}

func sortByIndex(e []keyed) {
	slices.SortFunc(e, func(a, b keyed) int { return cmp.Compare(a.index, b.index) })
}

// distSample keeps, per cluster, the distances of the members with the
// smallest keys, to estimate the quantiles of the training summary, and
// the exact maximum.
type distSample struct {
	m    int
	seed uint64
	h    []keyHeap
	max  []float64
}

func newDistSample(k, m int, seed uint64) *distSample {
	return &distSample{m: m, seed: seed, h: make([]keyHeap, k), max: make([]float64, k)}
}

func (s *distSample) reset() {
	for j := range s.h {
		s.h[j] = s.h[j][:0]
		s.max[j] = 0
	}
}

func (s *distSample) add(j int, i int64, dist float64) {
	s.max[j] = math.Max(s.max[j], dist)
	key := rowKey(s.seed, i)
	h := &s.h[j]
	if len(*h) < s.m {
		heap.Push(h, keyed{key: key, index: i, value: dist})
		return
	}
	if key >= (*h)[0].key {
		return
	}
	(*h)[0] = keyed{key: key, index: i, value: dist}
	heap.Fix(h, 0)
}
