package scale

import "gonum.org/v1/gonum/mat"

// Scaler maps raw rows to a common scale and back.
//
// A Scaler value holds options only until Learn returns a new, learned
// Scaler; Learn never modifies its receiver or its arguments, so one
// configured value can be reused for many problems. A learned Scaler is
// immutable and safe for concurrent use.
type Scaler interface {
	// Learn returns a scaler learned from the rows of data, each weighted by
	// weights[i] (nil weights = all ones). It returns an error wrapping
	// ErrEmpty, ErrNotFinite or ErrWeights for bad input.
	Learn(data mat.Matrix, weights []float64) (Scaler, error)
	// Apply writes the scaled form of the raw row x into dst and returns
	// dst; dst and x may be the same slice. It allocates nothing. It panics
	// if the scaler has not learned or if len(x) or len(dst) differ from
	// Dim() (programmer misuse: check lengths first).
	Apply(dst, x []float64) []float64
	// Invert writes the raw form of the scaled row x into dst. It returns an
	// error wrapping ErrNotInvertible, ErrNotLearned or ErrLength.
	Invert(dst, x []float64) error
	// Dim is the number of columns learned, 0 before Learn.
	Dim() int
	// Kind is the scaler's stable identifier in encoded form.
	Kind() string
}
