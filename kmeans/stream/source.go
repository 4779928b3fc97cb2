package stream

import (
	"fmt"
)

// Source is a sequence of rows of Dim() numbers each, read a block at a
// time into a buffer the caller owns, so that memory stays at one block
// whatever the length of the data.
//
// Read fills dst with the next rows, row-major, as many whole rows as fit
// in len(dst)/Dim() (at least one row must fit), and returns the number of
// rows written: n > 0 with a nil error, or 0 with io.EOF after the last
// row, or 0 with another error (a *RowError for a bad row, wrapping
// ErrRow). Rows written in a call that fails are discarded. Read never
// returns NaN or ±Inf.
//
// Columns returns the names of the Dim() columns, or nil when the source
// has none; the slice must not be modified.
type Source interface {
	Dim() int
	Columns() []string
	Read(dst []float64) (n int, err error)
}

// Reopener is a Source that can be read again from the first row, as files
// and matrices can and channels cannot. Reopen starts a new pass that gives
// the same rows in the same order; a source that cannot do so returns an
// error wrapping ErrReopen on every call, even before the first Read, so
// that a caller can find out by calling Reopen before it starts.
type Reopener interface {
	Source
	Reopen() error
}

// Rejecter is implemented by sources that skip bad rows (Options.Skip):
// Rejected returns the number of rows skipped since the source was made or
// last reopened.
type Rejecter interface {
	Rejected() int64
}

// Options says which columns a file source reads and what it does with a
// bad row. A nil *Options means every column and an error on the first bad
// row.
type Options struct {
	// Columns names the columns to read, in this order. For a file (CSV,
	// Parquet) the names select columns of its header or schema; nil
	// means every column, all of which must then be numeric; an empty,
	// non-nil slice means none, for a file read only for its Keep columns
	// (Dim is then 0 and each Read reads up to len(dst) rows). For a matrix
	// or a sequence, which have no names of their own, Columns names their
	// columns (nil: unnamed).
	Columns []string
	// Keep names columns of a file to carry along as text, such as an
	// identifier or a ground-truth class; they may be non-numeric. After a
	// Read, Kept(j) holds the text of Keep[j] for the rows read. Files
	// only.
	Keep []string
	// Skip makes a bad row (a value that is not a number, NaN or ±Inf, a
	// missing value, too few fields) skipped and counted (Rejected)
	// instead of returned as an error.
	Skip bool
	// OnSkip, if not nil and Skip is set, is called with each skipped
	// row's error, in row order, from the goroutine that calls Read.
	OnSkip func(*RowError)
	// Comma is the field separator of a CSV file; zero means ','.
	Comma rune
}

func (o *Options) resolved() Options {
	if o == nil {
		return Options{}
	}
	return *o
}

// selectColumns maps the wanted names onto the header and returns, for
// every wanted name in order, its position in the header. want nil means
// every column of the header. It rejects empty or repeated header names
// that are selected, names not in the header and names asked twice.
func selectColumns(source string, header, want []string) ([]int, []string, error) {
	pos := make(map[string]int, len(header))
	dup := make(map[string]bool)
	for i, h := range header {
		if _, ok := pos[h]; ok {
			dup[h] = true
			continue
		}
		pos[h] = i
	}
	if want == nil {
		want = header
	}
	if len(want) == 0 {
		return nil, nil, fmt.Errorf("%w: %s: no columns", ErrColumn, source)
	}
	idx := make([]int, len(want))
	asked := make(map[string]bool, len(want))
	for j, name := range want {
		if name == "" {
			return nil, nil, fmt.Errorf("%w: %s: column %d has an empty name", ErrColumn, source, j)
		}
		if asked[name] {
			return nil, nil, fmt.Errorf("%w: %s: column %q asked for twice", ErrColumn, source, name)
		}
		asked[name] = true
		if dup[name] {
			return nil, nil, fmt.Errorf("%w: %s: column %q appears more than once in the header", ErrColumn, source, name)
		}
		i, ok := pos[name]
		if !ok {
			return nil, nil, fmt.Errorf("%w: %s: no column %q (columns: %s)", ErrColumn, source, name, listNames(header))
		}
		idx[j] = i
	}
	return idx, append([]string(nil), want...), nil
}

// listNames lists up to 12 names for a message.
func listNames(names []string) string {
	const max = 12
	s := ""
	for i, n := range names {
		if i == max {
			return s + fmt.Sprintf(", … (%d in all)", len(names))
		}
		if i > 0 {
			s += ", "
		}
		s += fmt.Sprintf("%q", n)
	}
	return s
}

// rows returns how many whole rows of d values fit in dst (len(dst) when
// d is 0: a source of kept text only); it panics when none does
// (programmer misuse of Read).
func rows(dst []float64, d int) int {
	if d == 0 {
		if len(dst) < 1 {
			panic("stream: Read buffer holds less than one row")
		}
		return len(dst)
	}
	m := len(dst) / d
	if m < 1 {
		panic("stream: Read buffer holds less than one row")
	}
	return m
}

// skipper handles bad rows for the sources: it returns the error, or
// counts and reports it when skipping.
type skipper struct {
	skip     bool
	onSkip   func(*RowError)
	rejected int64
}

// bad returns nil if the row is to be skipped, else the error.
func (s *skipper) bad(e *RowError) error {
	if !s.skip {
		return e
	}
	s.rejected++
	if s.onSkip != nil {
		s.onSkip(e)
	}
	return nil
}

// Rejected returns the number of bad rows skipped in the current pass.
func (s *skipper) Rejected() int64 { return s.rejected }
