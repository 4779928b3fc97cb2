package check

import (
	"fmt"
	"math"
	"reflect"

	"gonum.org/v1/gonum/mat"
)

// Matrix returns the dimensions of a, or an error wrapping sentinel when a
// is nil, a nil *mat.Dense, or has no rows or no columns.
func Matrix(a mat.Matrix, sentinel error) (n, d int, err error) {
	if a == nil {
		return 0, 0, fmt.Errorf("%w: nil matrix", sentinel)
	}
	if m, ok := a.(*mat.Dense); ok && m == nil {
		return 0, 0, fmt.Errorf("%w: nil *mat.Dense", sentinel)
	}
	if m, ok := a.(*mat.VecDense); ok && m == nil {
		return 0, 0, fmt.Errorf("%w: nil *mat.VecDense", sentinel)
	}
	n, d = a.Dims()
	if n == 0 || d == 0 {
		return n, d, fmt.Errorf("%w: %d×%d matrix", sentinel, n, d)
	}
	return n, d, nil
}

// Weights checks one weight per row for n rows and returns their sum. A
// nil w means all ones (sum n). It returns an error wrapping sentinel when
// len(w) != n, a weight is negative, NaN or +Inf, or the weights sum to
// zero or overflow.
func Weights(w []float64, n int, sentinel error) (float64, error) {
	if w == nil {
		return float64(n), nil
	}
	if len(w) != n {
		return 0, fmt.Errorf("%w: %d weights for %d rows", sentinel, len(w), n)
	}
	var sum float64
	for i, v := range w {
		if !(v >= 0) || math.IsInf(v, 1) {
			return 0, fmt.Errorf("%w: weight %d is %v", sentinel, i, v)
		}
		sum += v
	}
	switch {
	case sum == 0:
		return 0, fmt.Errorf("%w: weights sum to zero", sentinel)
	case math.IsInf(sum, 1):
		return 0, fmt.Errorf("%w: the sum of the weights overflows", sentinel)
	}
	return sum, nil
}

// Finite returns an error wrapping sentinel that names the row and column
// of the first NaN or ±Inf in x, a row-major matrix of d columns, or nil.
func Finite(x []float64, d int, sentinel error) error {
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%w: row %d column %d is %v", sentinel, i/d, i%d, v)
		}
	}
	return nil
}

// FiniteRow returns an error wrapping sentinel that names the column of the
// first NaN or ±Inf in the row x, or nil.
func FiniteRow(x []float64, sentinel error) error {
	for j, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%w: column %d is %v", sentinel, j, v)
		}
	}
	return nil
}

// RowMajor returns the n×d values of a row-major with stride d: the backing
// slice of a mat.RawMatrixer whose stride is d (no copy, copied = false),
// or a new copy otherwise. Callers must not modify the result unless
// copied.
func RowMajor(a mat.Matrix) (x []float64, copied bool) {
	n, d := a.Dims()
	if rm, ok := a.(mat.RawMatrixer); ok {
		raw := rm.RawMatrix()
		if raw.Stride == d || n == 1 {
			return raw.Data[:(n-1)*raw.Stride+d][: n*d : n*d], false
		}
		x = make([]float64, n*d)
		for i := range n {
			copy(x[i*d:(i+1)*d], raw.Data[i*raw.Stride:i*raw.Stride+d])
		}
		return x, true
	}
	x = make([]float64, n*d)
	for i := range n {
		for j := range d {
			x[i*d+j] = a.At(i, j)
		}
	}
	return x, true
}

// NilPointer reports whether v holds a nil pointer or func (a typed nil:
// an interface value that is not nil but whose pointer is), which panics
// on the first method call with a value receiver.
func NilPointer(v any) bool {
	if v == nil {
		return false
	}
	r := reflect.ValueOf(v)
	switch r.Kind() {
	case reflect.Pointer, reflect.Func:
		return r.IsNil()
	}
	return false
}
