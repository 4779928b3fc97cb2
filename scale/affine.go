package scale

import (
	"encoding/json"
	"fmt"
	"math"
)

// Panic messages of Apply (programmer misuse).
const (
	panicNotLearned = "scale: Apply on a scaler that has not learned from data"
	panicLength     = "scale: Apply with a row or dst of the wrong length"
)

// Affine is implemented by scalers that map column j of a row by
// y = (x − shift[j]) / div[j] with every div[j] > 0 and finite, so that a
// caller can fuse the scaling into its own loop instead of calling Apply.
// ZScore, MinMax and MedianIQR implement it; UnitLength does not.
type Affine interface {
	// Affine returns copies of the learned shift and div, each of length
	// Dim(), or (nil, nil) before Learn.
	Affine() (shift, div []float64)
}

// affine is the learned state shared by ZScore, MinMax and MedianIQR. Its
// slices are never written after construction, so copies of a value may
// share them.
type affine struct {
	shift []float64
	div   []float64
}

// newAffine returns the affine map with the given parameters after checking
// that they are usable (what a learned or decoded scaler guarantees).
func newAffine(shift, div []float64) (affine, error) {
	if len(shift) == 0 || len(shift) != len(div) {
		return affine{}, fmt.Errorf("%d offsets and %d divisors", len(shift), len(div))
	}
	for j := range shift {
		if math.IsNaN(shift[j]) || math.IsInf(shift[j], 0) {
			return affine{}, fmt.Errorf("offset of column %d is %v", j, shift[j])
		}
		if !(div[j] > 0) || math.IsInf(div[j], 1) {
			return affine{}, fmt.Errorf("divisor of column %d is %v", j, div[j])
		}
	}
	return affine{shift: shift, div: div}, nil
}

// learned checks the statistics computed by Learn; overflow is reported as
// non-finite.
func learned(shift, div []float64) (affine, error) {
	a, err := newAffine(shift, div)
	if err != nil {
		return affine{}, fmt.Errorf("%w: statistics overflow: %v", ErrNotFinite, err)
	}
	return a, nil
}

// Apply writes (x[j] − shift[j]) / div[j] into dst[j] for every column and
// returns dst; dst and x may be the same slice. It allocates nothing and
// does not check the values of x. It panics if the scaler has not learned or
// if len(x) or len(dst) differ from Dim().
func (a affine) Apply(dst, x []float64) []float64 {
	if len(a.shift) == 0 {
		panic(panicNotLearned)
	}
	if len(x) != len(a.shift) || len(dst) != len(x) {
		panic(panicLength)
	}
	shift, div := a.shift[:len(x)], a.div[:len(x)]
	for j, v := range x {
		dst[j] = (v - shift[j]) / div[j]
	}
	return dst
}

// Invert writes x[j]·div[j] + shift[j] into dst[j] for every column, the
// raw form of the scaled row x; dst and x may be the same slice. It returns
// an error wrapping ErrNotLearned before Learn, or ErrLength if len(x) or
// len(dst) differ from Dim().
func (a affine) Invert(dst, x []float64) error {
	if len(a.shift) == 0 {
		return ErrNotLearned
	}
	if len(x) != len(a.shift) || len(dst) != len(x) {
		return fmt.Errorf("%w: len(x) = %d, len(dst) = %d, dim %d", ErrLength, len(x), len(dst), len(a.shift))
	}
	shift, div := a.shift[:len(x)], a.div[:len(x)]
	for j, v := range x {
		dst[j] = v*div[j] + shift[j]
	}
	return nil
}

// Dim returns the number of columns learned, 0 before Learn.
func (a affine) Dim() int { return len(a.shift) }

// Affine returns copies of the learned shift and div, each of length Dim(),
// or (nil, nil) before Learn.
func (a affine) Affine() (shift, div []float64) {
	if len(a.shift) == 0 {
		return nil, nil
	}
	return append([]float64(nil), a.shift...), append([]float64(nil), a.div...)
}

// marshal encodes the affine map as a document of the given kind.
func (a affine) marshal(kind string) ([]byte, error) {
	if len(a.shift) == 0 {
		return nil, fmt.Errorf("%w: %s", ErrNotLearned, kind)
	}
	return json.Marshal(document{Kind: kind, Version: documentVersion, Dim: len(a.shift), Offset: a.shift, Divisor: a.div})
}
