package stream

import (
	"fmt"
	"io"

	"gonum.org/v1/gonum/mat"
)

// Matrix is a Source over the rows of a mat.Matrix, for data that is
// already in memory or to compare streaming with in-memory clustering. It
// can be reopened. It reads a mat.RawMatrixer (such as *mat.Dense) in place
// and never modifies the matrix.
type Matrix struct {
	m     mat.Matrix
	raw   *mat.Dense // m as a RawMatrixer view, or nil
	n, d  int
	names []string
	next  int
	skipper
}

var _ Reopener = (*Matrix)(nil)

// NewMatrix returns a source over the rows of m. o.Columns, if set, names
// the columns of m (one name each); o.Skip skips rows holding NaN or ±Inf
// instead of failing on them. It returns an error wrapping ErrEmpty for a
// nil or empty matrix and ErrColumn if the names do not fit.
func NewMatrix(m mat.Matrix, o *Options) (*Matrix, error) {
	opt := o.resolved()
	if m == nil {
		return nil, fmt.Errorf("%w: nil matrix", ErrEmpty)
	}
	if dm, ok := m.(*mat.Dense); ok && dm == nil {
		return nil, fmt.Errorf("%w: nil *mat.Dense", ErrEmpty)
	}
	n, d := m.Dims()
	if n == 0 || d == 0 {
		return nil, fmt.Errorf("%w: %d×%d matrix", ErrEmpty, n, d)
	}
	s := &Matrix{m: m, n: n, d: d, skipper: skipper{skip: opt.Skip, onSkip: opt.OnSkip}}
	if opt.Columns != nil {
		if len(opt.Columns) != d {
			return nil, fmt.Errorf("%w: matrix: %d names for %d columns", ErrColumn, len(opt.Columns), d)
		}
		_, names, err := selectColumns("matrix", opt.Columns, nil)
		if err != nil {
			return nil, err
		}
		s.names = names
	}
	if rm, ok := m.(mat.RawMatrixer); ok {
		s.raw = mat.NewDense(n, d, nil)
		s.raw.SetRawMatrix(rm.RawMatrix())
	}
	return s, nil
}

// Dim returns the number of columns.
func (s *Matrix) Dim() int { return s.d }

// Columns returns the names given in Options.Columns, or nil.
func (s *Matrix) Columns() []string { return s.names }

// Len returns the number of rows of the matrix.
func (s *Matrix) Len() int { return s.n }

// Read implements Source.
func (s *Matrix) Read(dst []float64) (int, error) {
	m := rows(dst, s.d)
	got := 0
	for got < m && s.next < s.n {
		i := s.next
		s.next++
		row := dst[got*s.d : (got+1)*s.d]
		if s.raw != nil {
			copy(row, s.raw.RawRowView(i))
		} else {
			for j := range row {
				row[j] = s.m.At(i, j)
			}
		}
		if e := notFinite("matrix", int64(i), row, s.names); e != nil {
			if err := s.bad(e); err != nil {
				return 0, err
			}
			continue
		}
		got++
	}
	if got == 0 {
		return 0, io.EOF
	}
	return got, nil
}

// Reopen starts again from the first row; it never fails.
func (s *Matrix) Reopen() error {
	s.next = 0
	s.rejected = 0
	return nil
}

// notFinite returns the *RowError of row number row of source src if it
// holds NaN or ±Inf (naming the column when names is not nil), else nil.
func notFinite(src string, row int64, x []float64, names []string) *RowError {
	j := firstNotFinite(x)
	if j < 0 {
		return nil
	}
	e := &RowError{Source: src, Row: row, Index: j, Value: fmt.Sprint(x[j]), Err: ErrNotFinite}
	if names != nil {
		e.Column = names[j]
	}
	return e
}

// firstNotFinite returns the index of the first NaN or ±Inf in x, or -1.
func firstNotFinite(x []float64) int {
	for j, v := range x {
		if v-v != 0 {
			return j
		}
	}
	return -1
}
