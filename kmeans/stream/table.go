package stream

import (
	"errors"
	"fmt"
	"io"
	"strconv"

	"gonum.org/v1/gonum/mat"
)

// TextSource is a Source that also carries text columns (Options.Keep) and
// the record number of every row, as CSV and parquet.Source do.
type TextSource interface {
	Source
	// Kept returns the text of kept column j for the rows of the last Read.
	Kept(j int) []string
	// Records returns the 0-based record numbers of the rows of the last
	// Read.
	Records() []int64
	// Keep returns the names of the kept columns.
	Keep() []string
}

// Table is a labelled table held in memory: the rows of a published
// benchmark with their ground truth, and optionally its published centers.
type Table struct {
	// Name is the source's name (a file name).
	Name string
	// Features names the columns of X.
	Features []string
	// X holds the feature rows, n×d.
	X *mat.Dense
	// Truth holds the ground-truth class of every row. When every class in
	// the file is a non-negative integer it is that integer; otherwise
	// classes are numbered 0, 1, … in order of first appearance.
	Truth []int
	// Classes[c] is the text of class c in the file ("" for integers that
	// do not occur).
	Classes []string
	// Centers holds published centers, one per row, or nil; set it with
	// ReadCenters. By the usual convention row c is the center of class c.
	Centers *mat.Dense
}

// ReadTable reads a whole labelled table from src, whose first kept column
// (Options.Keep[0]) is the ground truth and whose numeric columns are the
// features. The expected layout is one row per item, a header naming the
// columns (CSV) or a schema (Parquet), the features as numbers and the
// truth as any text (an integer class, or a name such as "setosa");
// other columns are ignored.
//
//	src, err := stream.OpenCSV("s1.csv", &stream.Options{Columns: []string{"x", "y"}, Keep: []string{"label"}})
//	tab, err := stream.ReadTable(src)
//	cb, err := stream.OpenCSV("s1-cb.csv", nil)
//	tab.Centers, err = stream.ReadCenters(cb)
//
// It returns the source's errors (a *RowError naming the place of a bad
// row, ErrColumn), a *RowError wrapping ErrMissing for an empty truth,
// ErrEmpty for a table without rows and ErrColumn when src keeps no
// column. With Options.Skip, rows with a bad feature are left out (and so
// is their truth).
func ReadTable(src TextSource) (*Table, error) {
	d := src.Dim()
	if d < 1 {
		return nil, fmt.Errorf("%w: %s: no feature columns", ErrColumn, nameOf(src))
	}
	if len(src.Keep()) == 0 {
		return nil, fmt.Errorf("%w: %s: no ground-truth column (give it in Options.Keep)", ErrColumn, nameOf(src))
	}
	buf := make([]float64, 4096*d)
	var x []float64
	var text []string
	for {
		n, err := src.Read(buf)
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		kept, recs := src.Kept(0), src.Records()
		for t := range n {
			if kept[t] == "" {
				return nil, &RowError{Source: nameOf(src), Row: recs[t], Index: -1, Err: fmt.Errorf("%w: empty ground truth", ErrMissing)}
			}
		}
		x = append(x, buf[:n*d]...)
		text = append(text, kept[:n]...)
	}
	if len(text) == 0 {
		return nil, fmt.Errorf("%w: %s has no data rows", ErrEmpty, nameOf(src))
	}
	truth, classes := classCodes(text)
	return &Table{Name: nameOf(src), Features: append([]string(nil), src.Columns()...), X: mat.NewDense(len(text), d, x), Truth: truth, Classes: classes}, nil
}

// classCodes turns class texts into integer classes: the integers
// themselves when all are non-negative integers, else codes by first
// appearance.
func classCodes(text []string) ([]int, []string) {
	codes := make([]int, len(text))
	numeric := true
	top := 0
	for i, s := range text {
		v, err := strconv.Atoi(s)
		if err != nil || v < 0 || v > 1<<24 {
			numeric = false
			break
		}
		codes[i] = v
		top = max(top, v)
	}
	if numeric {
		classes := make([]string, top+1)
		for _, v := range codes {
			classes[v] = strconv.Itoa(v)
		}
		return codes, classes
	}
	index := map[string]int{}
	var classes []string
	for i, s := range text {
		c, ok := index[s]
		if !ok {
			c = len(classes)
			index[s] = c
			classes = append(classes, s)
		}
		codes[i] = c
	}
	return codes, classes
}

// ReadCenters reads every row of src as a center, such as the published
// centroids of a benchmark (one row per class, in class order). It
// returns the source's errors and ErrEmpty for a source without rows.
func ReadCenters(src Source) (*mat.Dense, error) {
	d := src.Dim()
	buf := make([]float64, 1024*d)
	var x []float64
	for {
		n, err := src.Read(buf)
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, err
		}
		x = append(x, buf[:n*d]...)
	}
	if len(x) == 0 {
		return nil, fmt.Errorf("%w: %s has no centers", ErrEmpty, nameOf(src))
	}
	return mat.NewDense(len(x)/d, d, x), nil
}

func nameOf(src Source) string {
	if s, ok := src.(fmt.Stringer); ok {
		return s.String()
	}
	return "the source"
}
