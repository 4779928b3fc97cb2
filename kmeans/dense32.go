package kmeans

import (
	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/mat"
)

// RawMatrixer32 is a matrix whose values are stored as float32, row-major
// with a stride (gonum's blas32.General). Cluster and NewSpace read such
// data in place when there is no scaler: rows are never widened into a
// float64 copy, and the result equals that of clustering the float64
// conversion of the data (every float32 is exactly a float64). Dense32
// implements it; any mat.Matrix that does keeps the fast path.
type RawMatrixer32 interface {
	RawMatrix32() blas32.General
}

// Dense32 is a dense n×d matrix of float32 values, row-major: a row store
// of half the memory of a *mat.Dense. It implements mat.Matrix (At reads
// the float64 conversion, which is exact), so scalers, seeders, validity
// indices and anything else that takes a mat.Matrix take it unchanged,
// and RawMatrixer32, through which Cluster clusters it without a float64
// copy (see Problem.Data).
//
// Its values are those given to NewDense32 or Dense32Of; Dense32 has no
// setters, and Cluster never modifies it.
type Dense32 struct {
	rows, cols int
	data       []float32
}

var (
	_ mat.Matrix    = (*Dense32)(nil)
	_ RawMatrixer32 = (*Dense32)(nil)
)

// NewDense32 returns an r×c matrix backed by data (row-major, len r·c,
// not copied: changes to data show in the matrix), or by a new zero slice
// if data is nil. It panics if r or c is not positive or len(data) ≠ r·c,
// as mat.NewDense does.
func NewDense32(r, c int, data []float32) *Dense32 {
	if r <= 0 || c <= 0 {
		panic(mat.ErrZeroLength)
	}
	if data == nil {
		data = make([]float32, r*c)
	}
	if len(data) != r*c {
		panic(mat.ErrShape)
	}
	return &Dense32{rows: r, cols: c, data: data}
}

// Dense32Of returns a new Dense32 holding the values of a rounded to the
// nearest float32 (round half to even, as a conversion in Go does).
// Values beyond the float32 range become ±Inf, which Cluster rejects with
// ErrData; mat.DenseCopyOf converts back exactly. It panics if a has no
// rows or columns.
func Dense32Of(a mat.Matrix) *Dense32 {
	r, c := a.Dims()
	m := NewDense32(r, c, nil)
	if rm, ok := a.(mat.RawMatrixer); ok {
		raw := rm.RawMatrix()
		for i := range r {
			row := raw.Data[i*raw.Stride : i*raw.Stride+c]
			out := m.data[i*c : (i+1)*c]
			for j, v := range row {
				out[j] = float32(v)
			}
		}
		return m
	}
	for i := range r {
		for j := range c {
			m.data[i*c+j] = float32(a.At(i, j))
		}
	}
	return m
}

// Dims returns the number of rows and columns.
func (m *Dense32) Dims() (r, c int) { return m.rows, m.cols }

// At returns element (i, j) converted to float64 (exactly). It panics if i
// or j is out of range.
func (m *Dense32) At(i, j int) float64 {
	if uint(i) >= uint(m.rows) {
		panic(mat.ErrRowAccess)
	}
	if uint(j) >= uint(m.cols) {
		panic(mat.ErrColAccess)
	}
	return float64(m.data[i*m.cols+j])
}

// T returns the transpose of m, as a view.
func (m *Dense32) T() mat.Matrix { return mat.Transpose{Matrix: m} }

// RawMatrix32 returns the underlying storage (stride = columns). Changes
// to its Data show in m.
func (m *Dense32) RawMatrix32() blas32.General {
	return blas32.General{Rows: m.rows, Cols: m.cols, Stride: m.cols, Data: m.data}
}

// RawRowView32 returns row i of the storage (a view, not a copy). It
// panics if i is out of range.
func (m *Dense32) RawRowView32(i int) []float32 {
	if uint(i) >= uint(m.rows) {
		panic(mat.ErrRowAccess)
	}
	return m.data[i*m.cols : (i+1)*m.cols : (i+1)*m.cols]
}
