package scale

import (
	"encoding/json"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/quantile"
)

// Encoded kinds of MedianIQR: the one written, and the one of earlier
// releases (when the type was called Robust), still read.
const (
	kindMedianIQR   = "median-iqr"
	kindMedianIQRv0 = "robust"
)

// MedianIQR centres each column on its weighted median and divides by its
// weighted interquartile range: y = (x − Q(½)) / (Q(¾) − Q(¼)).
//
// Q is the weighted empirical quantile, the inverse of the weighted
// empirical distribution function: with the values of the rows of positive
// weight sorted ascending, x₍₁₎ ≤ … ≤ x₍ₘ₎, their weights w₍ᵢ₎, cumulative
// weights Cᵢ = w₍₁₎ + … + w₍ᵢ₎ and total W = Cₘ,
//
//	Q(p) = x₍ₖ₎ with k the smallest i such that Cᵢ ≥ p·W.
//
// Q always returns one of the data values (no interpolation); with unit
// weights it is the ⌈p·n⌉-th smallest value, definition 1 of Hyndman and
// Fan (1996), "Sample quantiles in statistical packages", The American
// Statistician 50(4): the median of 1, 2, 3, 4 is 2 (the lower middle
// value) and its quartiles are 1 and 3. It is the module's one quantile
// definition, which the cluster profiles of kmeans/profile use too. It
// equals gonum's stat.Quantile(p, stat.Empirical, sorted, weights), with or
// without weights (with non-dyadic weights up to the rounding of W, which
// gonum sums in another order). Integer weights act exactly as repeated
// rows.
//
// A column whose interquartile range is 0 (constant, or whose first and
// third quartiles are the same value) has divisor 1: it is only centred,
// and a constant column maps to exactly 0. Affine returns (median,
// Q(¾) − Q(¼)) with this substitution.
//
// The zero value has no options and is ready to Learn; both MedianIQR{}
// and &MedianIQR{} are Scalers. Learn returns a *MedianIQR. It sorts each
// column once, O(d·n log n) time, with O(n) scratch memory. Its encoded
// kind is "median-iqr"; documents of the earlier kind "robust" decode to a
// *MedianIQR too, which encodes with that kind again.
type MedianIQR struct {
	affine
	// earlier is set on a scaler decoded from the kind "robust": it
	// encodes with that kind again, so that a model document written by an
	// earlier release re-encodes to the same bytes and keeps its checksum.
	earlier bool
}

// Robust is the former name of MedianIQR.
//
// Deprecated: use MedianIQR. Robust{} and &Robust{} are the same values as
// MedianIQR{} and &MedianIQR{} and encode with the kind "median-iqr".
type Robust = MedianIQR

// quartileLevels are the levels Learn reads in one scan of each column.
var quartileLevels = []float64{0.25, 0.5, 0.75}

// Learn returns a *MedianIQR learned from the rows of data weighted by
// weights (nil = all ones). It returns an error wrapping ErrEmpty,
// ErrNotFinite or ErrWeights for bad input, and ErrNotFinite if an
// interquartile range overflows float64. The receiver's learned state, if
// any, is ignored and left unchanged.
func (MedianIQR) Learn(data mat.Matrix, weights []float64) (Scaler, error) {
	in, err := newInput(data, weights)
	if err != nil {
		return nil, err
	}
	median := make([]float64, in.cols)
	iqr := make([]float64, in.cols)
	col := make([]quantile.Pair, 0, in.rows)
	var q [3]float64
	for j := range in.cols {
		col = col[:0]
		for i := range in.rows {
			if w := in.weight(i); w > 0 {
				col = append(col, quantile.Pair{Value: in.at(i, j), Weight: w})
			}
		}
		quantile.Sort(col)
		quantile.Levels(q[:], quartileLevels, col)
		median[j], iqr[j] = q[1], q[2]-q[0]
		if iqr[j] == 0 {
			iqr[j] = 1
		}
	}
	a, err := learned(median, iqr)
	if err != nil {
		return nil, err
	}
	return &MedianIQR{affine: a}, nil
}

// Kind returns "median-iqr", or "robust" for a scaler decoded from a
// document of that earlier kind.
func (r MedianIQR) Kind() string {
	if r.earlier {
		return kindMedianIQRv0
	}
	return kindMedianIQR
}

// MarshalJSON encodes the learned scaler as described in the package
// documentation, with its Kind: "median-iqr", or "robust" for a scaler
// decoded from that earlier kind (so documents keep their bytes). It
// returns an error wrapping ErrNotLearned before Learn.
func (r MedianIQR) MarshalJSON() ([]byte, error) { return r.marshal(r.Kind()) }

// UnmarshalJSON replaces r with the scaler encoded in b, which must be a
// valid document of the kind "median-iqr" or of the earlier kind "robust";
// errors wrap ErrDecode. JSON null leaves r unchanged.
func (r *MedianIQR) UnmarshalJSON(b []byte) error {
	s, err := decodeKind(b, kindMedianIQR)
	if s != nil {
		*r = *s.(*MedianIQR)
	}
	return err
}

var (
	_ Scaler           = MedianIQR{}
	_ Scaler           = (*MedianIQR)(nil)
	_ Affine           = (*MedianIQR)(nil)
	_ json.Marshaler   = (*MedianIQR)(nil)
	_ json.Unmarshaler = (*MedianIQR)(nil)
)
