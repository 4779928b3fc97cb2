package kbeam

import (
	"fmt"
	"math"
)

// DefaultBlockRows is the number of rows a source puts in one Block when
// not told otherwise. A pipeline pays a fixed cost per element (encoding,
// a call through the SDK, a side-input lookup); at about a thousand rows
// per element that cost disappears behind the work on the rows, while one
// row per element is about a hundred times slower.
const DefaultBlockRows = 1000

// Block is the element the transforms of this package work on: a run of
// consecutive rows of one input.
//
// Seq numbers the blocks densely within one input (0, 1, 2, ...; several
// inputs use disjoint ranges, such as file ordinal << 32 | block): the
// per-block statistics are merged in a fixed tree over Seq, which is what
// makes results independent of how the engine splits and orders work.
// First is the index of the first row; row t of the block has index
// First+t, which must be unique over all inputs and the same in every
// pass, since the k-means‖ draws depend on it (for one file, the data
// record number).
type Block struct {
	Seq   uint64
	First uint64
	// X holds the rows, row-major: Rows(d) rows of d values.
	X []float64
	// W holds one weight per row; nil means all ones.
	W []float64
	// Keep, if not nil, holds one text per row carried along for output,
	// such as an identifier column.
	Keep []string
}

// Rows returns the number of rows of the block for dimension d.
func (b *Block) Rows(d int) int { return len(b.X) / d }

// check returns an error wrapping ErrInput if the block does not hold
// whole rows of d values with matching weights and kept texts, or holds
// a negative or non-finite weight.
func (b *Block) check(d int) error {
	if len(b.X) == 0 || len(b.X)%d != 0 {
		return fmt.Errorf("%w: block %d holds %d values, not a positive whole number of rows of %d", ErrInput, b.Seq, len(b.X), d)
	}
	m := len(b.X) / d
	if b.W != nil {
		if len(b.W) != m {
			return fmt.Errorf("%w: block %d has %d weights for %d rows", ErrInput, b.Seq, len(b.W), m)
		}
		for t, w := range b.W {
			if !(w >= 0) || math.IsInf(w, 1) {
				return fmt.Errorf("%w: row %d has weight %v", ErrInput, b.First+uint64(t), w)
			}
		}
	}
	if b.Keep != nil && len(b.Keep) != m {
		return fmt.Errorf("%w: block %d has %d kept texts for %d rows", ErrInput, b.Seq, len(b.Keep), m)
	}
	return nil
}

// weight returns the weight of row t.
func (b *Block) weight(t int) float64 {
	if b.W == nil {
		return 1
	}
	return b.W[t]
}

func encodeBlock(b Block) []byte {
	w := newWire(codecVersion, 8*(4+len(b.X)+len(b.W)))
	w.u64(b.Seq)
	w.u64(b.First)
	w.f64s(b.X)
	w.optF64s(b.W)
	w.strs(b.Keep)
	return w.b
}

func decodeBlock(p []byte) (Block, error) {
	r := newReader(p, "block")
	b := Block{Seq: r.u64(), First: r.u64(), X: r.f64s(), W: r.optF64s(), Keep: r.strs()}
	return b, r.done("block")
}
