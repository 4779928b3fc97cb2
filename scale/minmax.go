package scale

import (
	"encoding/json"

	"gonum.org/v1/gonum/mat"
)

const kindMinMax = "minmax"

// MinMax maps each column onto [0, 1]: y = (x − min) / (max − min), where
// min and max are taken over the rows of positive weight (the weights play
// no other part). Rows of weight zero, and new rows, may map outside [0, 1].
//
// A constant column (max = min) has divisor 1 and so maps to exactly 0.
// Affine returns (min, max − min) with this substitution.
//
// The zero value has no options and is ready to Learn; both MinMax{} and
// &MinMax{} are Scalers. Learn returns a *MinMax.
type MinMax struct {
	affine
}

// Learn returns a *MinMax learned from the rows of data weighted by weights
// (nil = all ones). It returns an error wrapping ErrEmpty, ErrNotFinite or
// ErrWeights for bad input, and ErrNotFinite if a range overflows float64.
// The receiver's learned state, if any, is ignored and left unchanged.
func (MinMax) Learn(data mat.Matrix, weights []float64) (Scaler, error) {
	in, err := newInput(data, weights)
	if err != nil {
		return nil, err
	}
	lo, span := in.colRange()
	for j := range span {
		span[j] -= lo[j]
		if span[j] == 0 {
			span[j] = 1
		}
	}
	a, err := learned(lo, span)
	if err != nil {
		return nil, err
	}
	return &MinMax{affine: a}, nil
}

// Kind returns "minmax".
func (MinMax) Kind() string { return kindMinMax }

// MarshalJSON encodes the learned scaler as described in the package
// documentation. It returns an error wrapping ErrNotLearned before Learn.
func (m MinMax) MarshalJSON() ([]byte, error) { return m.marshal(kindMinMax) }

// UnmarshalJSON replaces m with the scaler encoded in b, which must be a
// valid "minmax" document; errors wrap ErrDecode. JSON null leaves m
// unchanged.
func (m *MinMax) UnmarshalJSON(b []byte) error {
	s, err := decodeKind(b, kindMinMax)
	if s != nil {
		*m = *s.(*MinMax)
	}
	return err
}

var (
	_ Scaler           = MinMax{}
	_ Scaler           = (*MinMax)(nil)
	_ Affine           = (*MinMax)(nil)
	_ json.Marshaler   = (*MinMax)(nil)
	_ json.Unmarshaler = (*MinMax)(nil)
)
