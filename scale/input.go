package scale

import (
	"fmt"
	"iter"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/check"
)

// input is validated data and weights for Learn. It reads a
// mat.RawMatrixer in place and any other mat.Matrix through At.
type input struct {
	m      mat.Matrix
	raw    []float64 // row-major backing data of a mat.RawMatrixer, nil otherwise
	stride int
	rows   int
	cols   int
	w      []float64 // nil means all ones
	total  float64   // sum of the weights, positive and finite
	buf    []float64 // row buffer for matrices read through At
}

// newInput validates data and weights as documented on Scaler.Learn, with
// the module's shared checks (internal/check) reporting this package's
// sentinels.
func newInput(data mat.Matrix, weights []float64) (*input, error) {
	r, c, err := check.Matrix(data, ErrEmpty)
	if err != nil {
		return nil, err
	}
	total, err := check.Weights(weights, r, ErrWeights)
	if err != nil {
		return nil, err
	}
	in := &input{m: data, rows: r, cols: c, w: weights, total: total}
	if rm, ok := data.(mat.RawMatrixer); ok {
		raw := rm.RawMatrix()
		in.raw, in.stride = raw.Data, raw.Stride
	} else {
		in.buf = make([]float64, c)
	}
	for i := range r {
		if err := check.FiniteRow(in.row(i), ErrNotFinite); err != nil {
			return nil, fmt.Errorf("%w in row %d", err, i)
		}
	}
	return in, nil
}

// row returns row i. The slice may alias the matrix or a buffer reused by
// the next call; callers only read it.
func (in *input) row(i int) []float64 {
	if in.raw != nil {
		return in.raw[i*in.stride : i*in.stride+in.cols]
	}
	for j := range in.buf {
		in.buf[j] = in.m.At(i, j)
	}
	return in.buf
}

// at returns element (i, j).
func (in *input) at(i, j int) float64 {
	if in.raw != nil {
		return in.raw[i*in.stride+j]
	}
	return in.m.At(i, j)
}

// weight returns the weight of row i.
func (in *input) weight(i int) float64 {
	if in.w == nil {
		return 1
	}
	return in.w[i]
}

// kept yields each row of positive weight with its weight, in row order.
// The row slice is only valid until the next step.
func (in *input) kept() iter.Seq2[[]float64, float64] {
	return func(yield func([]float64, float64) bool) {
		for i := range in.rows {
			if w := in.weight(i); w > 0 && !yield(in.row(i), w) {
				return
			}
		}
	}
}

// colRange returns the minimum and maximum of each column over the rows of
// positive weight.
func (in *input) colRange() (lo, hi []float64) {
	lo = make([]float64, in.cols)
	hi = make([]float64, in.cols)
	first := true
	for x := range in.kept() {
		if first {
			copy(lo, x)
			copy(hi, x)
			first = false
			continue
		}
		for j, v := range x {
			lo[j] = min(lo[j], v)
			hi[j] = max(hi[j], v)
		}
	}
	return lo, hi
}
