package kbeam

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/seeding"
)

func samplePart() *seeding.ParallelPart {
	return &seeding.ParallelPart{Rows: 9, Cost: 2.5, Weight: []float64{1, 8}, Picks: []seeding.ParallelPick{
		{Index: 3, Key: math.Inf(1), U: 0.25, WD: 1e300, X: []float64{1, -2}},
		{Index: 7, Key: 0.5, U: 0.75, WD: 0, X: []float64{math.SmallestNonzeroFloat64, 0}},
	}}
}

// TestCodecRoundTrip: every coded value decodes to itself, ±Inf and
// subnormals included.
func TestCodecRoundTrip(t *testing.T) {
	p := kmeans.NewPartial(2, 2)
	p.Add(1, []float64{math.Inf(1), math.Copysign(0, -1)}, 2, 3)
	blk := Block{Seq: 1 << 40, First: 12, X: []float64{1, 2, 3, 4}, W: []float64{0, 1}, Keep: []string{"a,b", ""}}
	gotB, err := decodeBlock(encodeBlock(blk))
	require.NoError(t, err)
	assert.Equal(t, blk, gotB)
	noW := Block{X: []float64{1}}
	gotB, err = decodeBlock(encodeBlock(noW))
	require.NoError(t, err)
	assert.Nil(t, gotB.W)
	assert.Nil(t, gotB.Keep)

	st := State{Pass: 3, Centers: []float64{1, 2, 3, 4}, Next: []float64{5, 6, 7, 8}, Stats: p, Converged: true, Empty: []int64{1}}
	gotS, err := decodeState(encodeState(st))
	require.NoError(t, err)
	assert.Equal(t, st, gotS)

	tr := partialTree{mergeTree[*kmeans.Partial]{Nodes: []treeNode[*kmeans.Partial]{{Level: 0, Index: 5, Value: p}, {Level: 2, Index: 0, Value: p}}}}
	gotT, err := decodePartialTree(encodePartialTree(tr))
	require.NoError(t, err)
	assert.Equal(t, tr, gotT)

	ss := seedState{History: []*seeding.ParallelPart{samplePart(), {Weight: []float64{}}}, Done: true}
	gotSS, err := decodeSeedState(encodeSeedState(ss))
	require.NoError(t, err)
	assert.Equal(t, ss.History[0], gotSS.History[0])
	assert.True(t, gotSS.Done)

	pt := partTree{mergeTree[*seeding.ParallelPart]{Nodes: []treeNode[*seeding.ParallelPart]{{Level: 1, Index: 2, Value: samplePart()}}}}
	gotPT, err := decodePartTree(encodePartTree(pt))
	require.NoError(t, err)
	assert.Equal(t, pt, gotPT)

	l, err := decodeLeaf(encodeLeaf(leaf{Seq: 4, P: p}))
	require.NoError(t, err)
	assert.Equal(t, leaf{Seq: 4, P: p}, l)
	pl, err := decodePartLeaf(encodePartLeaf(partLeaf{Seq: 4, P: samplePart()}))
	require.NoError(t, err)
	assert.Equal(t, partLeaf{Seq: 4, P: samplePart()}, pl)
	s, err := decodeSum(encodeSum(sum{}))
	require.NoError(t, err)
	assert.Nil(t, s.P)
	ps, err := decodePartSum(encodePartSum(partSum{P: samplePart()}))
	require.NoError(t, err)
	assert.Equal(t, samplePart(), ps.P)
}

// TestCodecCorrupt: truncated, extended, re-versioned and randomly
// damaged encodings return ErrCodec and never panic.
func TestCodecCorrupt(t *testing.T) {
	p := kmeans.NewPartial(2, 2)
	encs := map[string]struct {
		b      []byte
		decode func([]byte) error
	}{
		"block": {encodeBlock(Block{Seq: 1, X: []float64{1, 2}, Keep: []string{"x"}}), func(b []byte) error { _, err := decodeBlock(b); return err }},
		"state": {encodeState(State{Next: []float64{1}, Stats: p}), func(b []byte) error { _, err := decodeState(b); return err }},
		"tree":  {encodePartialTree(partialTree{mergeTree[*kmeans.Partial]{Nodes: []treeNode[*kmeans.Partial]{{Value: p}}}}), func(b []byte) error { _, err := decodePartialTree(b); return err }},
		"seed":  {encodeSeedState(seedState{History: []*seeding.ParallelPart{samplePart()}}), func(b []byte) error { _, err := decodeSeedState(b); return err }},
		"leaf":  {encodeLeaf(leaf{P: p}), func(b []byte) error { _, err := decodeLeaf(b); return err }},
		"part":  {encodePartLeaf(partLeaf{P: samplePart()}), func(b []byte) error { _, err := decodePartLeaf(b); return err }},
		"ptree": {encodePartTree(partTree{mergeTree[*seeding.ParallelPart]{Nodes: []treeNode[*seeding.ParallelPart]{{Value: samplePart()}}}}), func(b []byte) error { _, err := decodePartTree(b); return err }},
		"sum":   {encodeSum(sum{P: p}), func(b []byte) error { _, err := decodeSum(b); return err }},
		"ptsum": {encodePartSum(partSum{P: samplePart()}), func(b []byte) error { _, err := decodePartSum(b); return err }},
	}
	rnd := rand.New(rand.NewPCG(3, 4))
	for name, e := range encs {
		require.NoError(t, e.decode(e.b), name)
		assert.ErrorIs(t, e.decode(nil), ErrCodec, name)
		assert.ErrorIs(t, e.decode(e.b[:len(e.b)-1]), ErrCodec, name)
		assert.ErrorIs(t, e.decode(append(append([]byte(nil), e.b...), 0)), ErrCodec, name)
		v := append([]byte(nil), e.b...)
		v[0] = 9
		assert.ErrorIs(t, e.decode(v), ErrCodec, name)
		for range 200 {
			v := append([]byte(nil), e.b...)
			v[1+rnd.IntN(len(v)-1)] ^= byte(1 + rnd.IntN(255))
			_ = e.decode(v) // may decode to another valid value; must not panic
		}
	}
	// A length that claims more than the bytes left is refused without
	// allocating it.
	w := newWire(codecVersion, 8)
	w.u64(1)
	w.u64(0)
	w.u64(1 << 62)
	_, err := decodeBlock(w.b)
	assert.ErrorIs(t, err, ErrCodec)
}
