package scale

import (
	"encoding/json"
	"fmt"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

const kindUnitLength = "unitlength"

// UnitLength divides each row by its Euclidean (L2) norm, so that only the
// row's direction remains, as spherical k-means with the Cosine metric
// expects (Dhillon & Modha 2001, "Concept decompositions for large sparse
// text data using clustering", Machine Learning 42). A row of zeros stays zero. The norm is
// computed without intermediate overflow or underflow (gonum's floats.Norm).
//
// UnitLength learns nothing from the values: Learn validates data and
// weights like the other scalers and records only the number of columns.
// It is not affine and not invertible: Invert returns ErrNotInvertible.
//
// The zero value is ready to Learn; both UnitLength{} and &UnitLength{} are
// Scalers. Learn returns a *UnitLength.
type UnitLength struct {
	dim int
}

// Learn returns a *UnitLength of data's number of columns. It returns an
// error wrapping ErrEmpty, ErrNotFinite or ErrWeights for bad input. The
// receiver is left unchanged.
func (UnitLength) Learn(data mat.Matrix, weights []float64) (Scaler, error) {
	in, err := newInput(data, weights)
	if err != nil {
		return nil, err
	}
	return &UnitLength{dim: in.cols}, nil
}

// Apply writes x / ‖x‖₂ into dst, or zeros if x is a zero row, and returns
// dst; dst and x may be the same slice. It allocates nothing and does not
// check the values of x. It panics if the scaler has not learned or if
// len(x) or len(dst) differ from Dim().
func (u UnitLength) Apply(dst, x []float64) []float64 {
	if u.dim == 0 {
		panic(panicNotLearned)
	}
	if len(x) != u.dim || len(dst) != len(x) {
		panic(panicLength)
	}
	norm := floats.Norm(x, 2)
	if norm == 0 {
		clear(dst)
		return dst
	}
	for j, v := range x {
		dst[j] = v / norm
	}
	return dst
}

// Invert returns an error wrapping ErrNotInvertible: the norm of the raw row
// is not kept.
func (UnitLength) Invert(dst, x []float64) error {
	return fmt.Errorf("%w: %s", ErrNotInvertible, kindUnitLength)
}

// Dim returns the number of columns learned, 0 before Learn.
func (u UnitLength) Dim() int { return u.dim }

// Kind returns "unitlength".
func (UnitLength) Kind() string { return kindUnitLength }

// MarshalJSON encodes the learned scaler as described in the package
// documentation. It returns an error wrapping ErrNotLearned before Learn.
func (u UnitLength) MarshalJSON() ([]byte, error) {
	if u.dim == 0 {
		return nil, fmt.Errorf("%w: %s", ErrNotLearned, kindUnitLength)
	}
	return json.Marshal(document{Kind: kindUnitLength, Version: documentVersion, Dim: u.dim})
}

// UnmarshalJSON replaces u with the scaler encoded in b, which must be a
// valid "unitlength" document; errors wrap ErrDecode. JSON null leaves u
// unchanged.
func (u *UnitLength) UnmarshalJSON(b []byte) error {
	s, err := decodeKind(b, kindUnitLength)
	if s != nil {
		*u = *s.(*UnitLength)
	}
	return err
}

var (
	_ Scaler           = UnitLength{}
	_ Scaler           = (*UnitLength)(nil)
	_ json.Marshaler   = (*UnitLength)(nil)
	_ json.Unmarshaler = (*UnitLength)(nil)
)
