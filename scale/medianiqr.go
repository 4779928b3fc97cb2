package scale

import (
	"cmp"
	"encoding/json"
	"slices"

	"gonum.org/v1/gonum/mat"
)

const kindRobust = "robust"

// Robust centres each column on its weighted median and divides by its
// weighted interquartile range: y = (x − Q(½)) / (Q(¾) − Q(¼)).
//
// Q is the empirical weighted quantile, the inverse of the weighted
// empirical distribution function: with the values of the rows of positive
// weight sorted ascending, x₍₁₎ ≤ … ≤ x₍ₘ₎, their weights w₍ᵢ₎, cumulative
// weights Cᵢ = w₍₁₎ + … + w₍ᵢ₎ and total W = Cₘ,
//
//	Q(p) = x₍ₖ₎ with k the smallest i such that Cᵢ ≥ p·W.
//
// Q always returns one of the data values (no interpolation); with unit
// weights it is definition 1 of Hyndman and Fan (1996), "Sample quantiles in
// statistical packages", The American Statistician 50(4), so the median of
// an even number of values is the lower of the two middle ones. It equals
// gonum's stat.Quantile(p, stat.Empirical, sorted, weights), with or
// without weights (with non-integer weights up to the rounding of W, which
// is summed in a different order), and integer weights act exactly as
// repeated rows.
//
// A column whose interquartile range is 0 (constant, or whose first and
// third quartiles are the same value) has divisor 1: it is only centred, and a constant
// column maps to exactly 0. Affine returns (median, Q3 − Q1) with this
// substitution.
//
// The zero value has no options and is ready to Learn; both Robust{} and
// &Robust{} are Scalers. Learn returns a *Robust. It sorts each column once,
// O(d·n log n) time, with O(n) scratch memory.
type Robust struct {
	affine
}

// weighted is one value of a column and its row's weight.
type weighted struct {
	v, w float64
}

// Learn returns a *Robust learned from the rows of data weighted by weights
// (nil = all ones). It returns an error wrapping ErrEmpty, ErrNotFinite or
// ErrWeights for bad input, and ErrNotFinite if an interquartile range
// overflows float64. The receiver's learned state, if any, is ignored and
// left unchanged.
func (Robust) Learn(data mat.Matrix, weights []float64) (Scaler, error) {
	in, err := newInput(data, weights)
	if err != nil {
		return nil, err
	}
	median := make([]float64, in.cols)
	iqr := make([]float64, in.cols)
	col := make([]weighted, 0, in.rows)
	for j := range in.cols {
		col = col[:0]
		for i := range in.rows {
			if w := in.weight(i); w > 0 {
				col = append(col, weighted{v: in.at(i, j), w: w})
			}
		}
		slices.SortFunc(col, func(a, b weighted) int { return cmp.Compare(a.v, b.v) })
		median[j] = quantile(col, 0.5*in.total)
		iqr[j] = quantile(col, 0.75*in.total) - quantile(col, 0.25*in.total)
		if iqr[j] == 0 {
			iqr[j] = 1
		}
	}
	a, err := learned(median, iqr)
	if err != nil {
		return nil, err
	}
	return &Robust{affine: a}, nil
}

// quantile returns the first value of the sorted, non-empty col whose
// cumulative weight reaches target (p·W for Q(p)).
func quantile(col []weighted, target float64) float64 {
	var cum float64
	for _, c := range col {
		cum += c.w
		if cum >= target {
			return c.v
		}
	}
	return col[len(col)-1].v // only reached through rounding in cum
}

// Kind returns "robust".
func (Robust) Kind() string { return kindRobust }

// MarshalJSON encodes the learned scaler as described in the package
// documentation. It returns an error wrapping ErrNotLearned before Learn.
func (r Robust) MarshalJSON() ([]byte, error) { return r.marshal(kindRobust) }

// UnmarshalJSON replaces r with the scaler encoded in b, which must be a
// valid "robust" document; errors wrap ErrDecode. JSON null leaves r
// unchanged.
func (r *Robust) UnmarshalJSON(b []byte) error {
	s, err := decodeKind(b, kindRobust)
	if s != nil {
		*r = *s.(*Robust)
	}
	return err
}

var (
	_ Scaler           = Robust{}
	_ Scaler           = (*Robust)(nil)
	_ Affine           = (*Robust)(nil)
	_ json.Marshaler   = (*Robust)(nil)
	_ json.Unmarshaler = (*Robust)(nil)
)
