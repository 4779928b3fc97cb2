package stream

import (
	"errors"
	"fmt"
	"strconv"
	"strings"
)

// Errors returned by this package. Every error returned for bad input wraps
// one of them (or one of package kmeans), so callers can test with
// errors.Is.
var (
	// ErrRow means a row could not be read as numbers: a value that is not
	// a number, NaN or ±Inf, a missing value or a row with too few fields.
	// The error is a *RowError naming the place.
	ErrRow = errors.New("stream: bad row")
	// ErrColumn means the requested columns do not match the source: a
	// name not in the header, a name asked for twice, a repeated or empty
	// header name, or a column of a type that cannot be read as numbers.
	ErrColumn = errors.New("stream: bad columns")
	// ErrEmpty means a source holds no row to cluster: an empty file, a
	// header without rows, or every row skipped as bad.
	ErrEmpty = errors.New("stream: no rows")
	// ErrReopen means a source cannot be read a second time (a channel, an
	// iterator, a reader that cannot seek), or a reopened source did not
	// give the same rows again.
	ErrReopen = errors.New("stream: source cannot be reopened")
)

// Causes of a RowError (its Err field), each also matched by
// errors.Is(err, ErrRow) on the RowError.
var (
	// ErrNotFinite means a value is NaN or ±Inf.
	ErrNotFinite = errors.New("value is NaN or infinite")
	// ErrMissing means a value is absent: an empty cell, a row with too few
	// fields, a null.
	ErrMissing = errors.New("value missing")
	// ErrNotNumber means a value does not parse as a number.
	ErrNotNumber = errors.New("not a number")
)

// RowError describes a bad row: where it is and what is wrong. It wraps
// ErrRow and its cause Err.
type RowError struct {
	// Source names where the row comes from: a file name, or a
	// description such as "matrix" or "sequence".
	Source string
	// Line is the 1-based line of the row in a text file, 0 when the
	// source has no lines (a Parquet file, a matrix).
	Line int64
	// Row is the 0-based number of the data row: the record after the
	// header in a CSV file, the row in a Parquet file or a matrix, the
	// element of a sequence.
	Row int64
	// Column is the name of the offending column, or "" when the source
	// has no names; Index is its position among the values read (0-based),
	// or -1 when the whole row is at fault.
	Column string
	Index  int
	// Value is the offending text, cut to at most 40 bytes.
	Value string
	// Err is the cause: ErrNotNumber, ErrNotFinite, ErrMissing or a
	// source's own error.
	Err error
}

// Error names the source, the line (or row), the column and the cause, as
// in `stations.csv: line 7, column "trips_per_day": "12a" is not a number`.
func (e *RowError) Error() string {
	var b strings.Builder
	b.WriteString(e.Source)
	if e.Line > 0 {
		fmt.Fprintf(&b, ": line %d", e.Line)
	} else {
		fmt.Fprintf(&b, ": row %d", e.Row)
	}
	switch {
	case e.Column != "":
		fmt.Fprintf(&b, ", column %q", e.Column)
	case e.Index >= 0:
		fmt.Fprintf(&b, ", column %d", e.Index)
	}
	b.WriteString(": ")
	if e.Value != "" {
		fmt.Fprintf(&b, "%q ", e.Value)
		if errors.Is(e.Err, ErrNotNumber) {
			b.WriteString("is ")
		} else {
			b.WriteString(": ")
		}
	}
	b.WriteString(e.Err.Error())
	return b.String()
}

// Unwrap returns ErrRow and the cause.
func (e *RowError) Unwrap() []error { return []error{ErrRow, e.Err} }

// cut shortens a value for a message.
func cut(s string) string {
	const max = 40
	if len(s) <= max {
		return s
	}
	return s[:max] + "…"
}

// parseValue parses one numeric field, returning a cause for RowError.
func parseValue(s string) (float64, error) {
	if s == "" {
		return 0, ErrMissing
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		var ne *strconv.NumError
		if errors.As(err, &ne) && errors.Is(ne.Err, strconv.ErrRange) {
			return 0, ErrNotFinite // overflows to ±Inf
		}
		s := strings.TrimSpace(s)
		if s != "" && s != "\"\"" {
			if v, err2 := strconv.ParseFloat(s, 64); err2 == nil {
				return checkFinite(v)
			}
		}
		return 0, ErrNotNumber
	}
	return checkFinite(v)
}

func checkFinite(v float64) (float64, error) {
	if v-v != 0 {
		return 0, ErrNotFinite
	}
	return v, nil
}
