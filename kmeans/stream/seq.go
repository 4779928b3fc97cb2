package stream

import (
	"fmt"
	"io"
	"iter"
)

// Seq is a Source over rows handed over one at a time by an iterator or a
// channel, for rows produced by the program itself (a queue consumer, a
// database cursor). It cannot be reopened, so it suits one-pass methods
// (MiniBatch). Call Close when stopping before the end, so that the
// iterator is told to stop.
type Seq struct {
	next  func() ([]float64, bool)
	stop  func()
	d     int
	names []string
	row   int64
	done  bool
	skipper
}

var _ Source = (*Seq)(nil)

// NewSeq returns a source over the rows of seq, each of which must hold d
// values (it is copied; seq may reuse it). o.Columns, if set, names the d
// columns; o.Skip skips rows of the wrong length or holding NaN or ±Inf
// instead of failing on them. It returns an error wrapping ErrColumn if
// d < 1 or the names do not fit.
func NewSeq(seq iter.Seq[[]float64], d int, o *Options) (*Seq, error) {
	opt := o.resolved()
	if d < 1 {
		return nil, fmt.Errorf("%w: sequence: d = %d, want ≥ 1", ErrColumn, d)
	}
	s := &Seq{d: d, skipper: skipper{skip: opt.Skip, onSkip: opt.OnSkip}}
	if opt.Columns != nil {
		if len(opt.Columns) != d {
			return nil, fmt.Errorf("%w: sequence: %d names for %d columns", ErrColumn, len(opt.Columns), d)
		}
		_, names, err := selectColumns("sequence", opt.Columns, nil)
		if err != nil {
			return nil, err
		}
		s.names = names
	}
	s.next, s.stop = iter.Pull(seq)
	return s, nil
}

// NewChan returns a source over the rows received from ch until it is
// closed; see NewSeq.
func NewChan(ch <-chan []float64, d int, o *Options) (*Seq, error) {
	return NewSeq(func(yield func([]float64) bool) {
		for row := range ch {
			if !yield(row) {
				return
			}
		}
	}, d, o)
}

// Dim returns the number of values of a row.
func (s *Seq) Dim() int { return s.d }

// Columns returns the names given in Options.Columns, or nil.
func (s *Seq) Columns() []string { return s.names }

// Read implements Source.
func (s *Seq) Read(dst []float64) (int, error) {
	m := rows(dst, s.d)
	got := 0
	for got < m && !s.done {
		x, ok := s.next()
		if !ok {
			s.done = true
			break
		}
		i := s.row
		s.row++
		if len(x) != s.d {
			e := &RowError{Source: "sequence", Row: i, Index: -1, Err: fmt.Errorf("%w: %d values, want %d", ErrMissing, len(x), s.d)}
			if len(x) > s.d {
				e.Err = fmt.Errorf("%d values, want %d", len(x), s.d)
			}
			if err := s.bad(e); err != nil {
				return 0, err
			}
			continue
		}
		row := dst[got*s.d : (got+1)*s.d]
		copy(row, x)
		if e := notFinite("sequence", i, row, s.names); e != nil {
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

// Close stops the iterator; Read then returns io.EOF.
func (s *Seq) Close() error {
	s.done = true
	s.stop()
	return nil
}
