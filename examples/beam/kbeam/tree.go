package kbeam

import (
	"cmp"
	"fmt"
	"slices"
)

// A merge tree adds up per-block values in an order fixed by the blocks'
// sequence numbers, whatever order the engine hands them over in, so that
// floating-point sums come out bit-identical on any number of workers and
// any split into bundles.
//
// Block Seq is leaf Seq of a binary tree; the node (level L, index i)
// covers the leaves [i·2ᴸ, (i+1)·2ᴸ). A node exists once all its leaves have
// arrived: whenever both children of a node are present they are replaced
// by the node, their merge left into right's order (left first). When every
// leaf has arrived, the nodes left are exactly the maximal complete nodes,
// whatever the order of arrival, and the result merges them in order of
// their first leaf. A tree holds at most one node per level per gap
// between arrived leaves, so a bundle of consecutive blocks costs O(log n)
// nodes.

// treeNode is one node of a merge tree.
type treeNode[T any] struct {
	Level uint8
	Index uint64
	Value T
}

// first returns the first leaf the node covers.
func (n treeNode[T]) first() uint64 { return n.Index << n.Level }

// mergeTree holds the nodes of a merge tree, sorted by (Level, Index).
type mergeTree[T any] struct {
	Nodes []treeNode[T]
}

func compareNodes[T any](a, b treeNode[T]) int {
	if c := cmp.Compare(a.Level, b.Level); c != 0 {
		return c
	}
	return cmp.Compare(a.Index, b.Index)
}

// insert adds node n, merging complete siblings upwards with merge(left,
// right), which returns their union (it may reuse left). It returns an
// error wrapping ErrInput if the same node is already present (a block
// seen twice).
func (t *mergeTree[T]) insert(n treeNode[T], merge func(left, right T) T) error {
	for {
		if n.Level < 64 {
			sib := treeNode[T]{Level: n.Level, Index: n.Index ^ 1}
			if i, ok := slices.BinarySearchFunc(t.Nodes, sib, compareNodes); ok {
				s := t.Nodes[i]
				t.Nodes = slices.Delete(t.Nodes, i, i+1)
				left, right := n.Value, s.Value
				if n.Index&1 == 1 {
					left, right = right, left
				}
				n = treeNode[T]{Level: n.Level + 1, Index: n.Index >> 1, Value: merge(left, right)}
				continue
			}
		}
		i, ok := slices.BinarySearchFunc(t.Nodes, n, compareNodes)
		if ok {
			return fmt.Errorf("%w: block %d arrived twice", ErrInput, n.first())
		}
		t.Nodes = slices.Insert(t.Nodes, i, n)
		return nil
	}
}

// add inserts the leaf of block seq.
func (t *mergeTree[T]) add(seq uint64, v T, merge func(left, right T) T) error {
	return t.insert(treeNode[T]{Index: seq, Value: v}, merge)
}

// absorb moves every node of u into t.
func (t *mergeTree[T]) absorb(u *mergeTree[T], merge func(left, right T) T) error {
	for _, n := range u.Nodes {
		if err := t.insert(n, merge); err != nil {
			return err
		}
	}
	u.Nodes = nil
	return nil
}

// result merges the nodes in order of their first leaf and reports
// whether there was any.
func (t *mergeTree[T]) result(merge func(left, right T) T) (T, bool) {
	var zero T
	if len(t.Nodes) == 0 {
		return zero, false
	}
	nodes := slices.Clone(t.Nodes)
	slices.SortFunc(nodes, func(a, b treeNode[T]) int { return cmp.Compare(a.first(), b.first()) })
	acc := nodes[0].Value
	for _, n := range nodes[1:] {
		acc = merge(acc, n.Value)
	}
	return acc, true
}

// encodeTree writes the nodes of t, each value with enc, for a coder.
func encodeTree[T any](t mergeTree[T], enc func(*wire, T)) []byte {
	w := newWire(codecVersion, 64)
	w.u64(uint64(len(t.Nodes)))
	for _, n := range t.Nodes {
		w.b = append(w.b, n.Level)
		w.u64(n.Index)
		enc(w, n.Value)
	}
	return w.b
}

// decodeTree reads what encodeTree wrote, each value with dec, which
// returns nil for a value without content (an error, named by missing).
// what names the encoding in errors. The nodes must come sorted.
func decodeTree[V any, T interface{ *V }](b []byte, what, missing string, dec func(*reader) T) (mergeTree[T], error) {
	r := newReader(b, what)
	n := r.count(10)
	var t mergeTree[T]
	for range n {
		if r.err != nil || len(r.b) < 1 {
			r.fail("truncated tree")
			break
		}
		lv := r.b[0]
		r.b = r.b[1:]
		idx := r.u64()
		v := dec(r)
		if r.err == nil && v == nil {
			r.fail(missing)
		}
		t.Nodes = append(t.Nodes, treeNode[T]{Level: lv, Index: idx, Value: v})
	}
	if r.err == nil && !slices.IsSortedFunc(t.Nodes, compareNodes) {
		r.fail("tree nodes out of order")
	}
	return t, r.done(what)
}
