package parquet

import (
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"

	pq "github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/format"

	"github.com/centroidlab/centroid/kmeans/stream"
)

// Source reads numeric columns of a Parquet file by name, row group by row
// group and page by page. It can be reopened. A Source is not safe for
// concurrent use.
type Source struct {
	name   string
	file   *os.File // opened by Open, nil for New
	f      *pq.File
	opt    stream.Options
	names  []string
	cols   []column // read as numbers
	keep   []column // carried as text
	kept   [][]string
	recs   []int64
	group  int // current row group
	cur    []*cursor
	kcur   []*cursor
	row    int64 // rows read from the file in this pass
	left   int64 // rows left in the current group
	skip   bool
	onSkip func(*stream.RowError)
	rej    int64
}

var (
	_ stream.Reopener = (*Source)(nil)
	_ stream.Rejecter = (*Source)(nil)
)

// column is a leaf column of the file and how to convert its values.
type column struct {
	name     string
	index    int // leaf index in the row groups
	kind     pq.Kind
	unsigned bool
}

// Open opens the Parquet file at path and checks the columns of o (nil
// means every top-level column in schema order, all of which must then be
// numeric). It returns an
// error wrapping stream.ErrColumn for a missing or unsupported column,
// stream.ErrEmpty for a file without columns, or the error of opening or
// decoding the file. Close the Source when done.
func Open(path string, o *stream.Options) (*Source, error) {
	fh, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	st, err := fh.Stat()
	if err != nil {
		fh.Close()
		return nil, err
	}
	s, err := New(fh, st.Size(), path, o)
	if err != nil {
		fh.Close()
		return nil, err
	}
	s.file = fh
	return s, nil
}

// New reads a Parquet document of size bytes from r, which name describes
// in messages; see Open.
func New(r io.ReaderAt, size int64, name string, o *stream.Options) (*Source, error) {
	var opt stream.Options
	if o != nil {
		opt = *o
	}
	f, err := pq.OpenFile(r, size, pq.SkipPageIndex(true), pq.SkipBloomFilters(true))
	if err != nil {
		return nil, fmt.Errorf("%s: not a Parquet file: %w", name, err)
	}
	s := &Source{name: name, f: f, opt: opt, skip: opt.Skip, onSkip: opt.OnSkip}
	root := f.Root()
	var all []string
	for _, c := range root.Columns() {
		all = append(all, c.Name())
	}
	if len(all) == 0 {
		return nil, fmt.Errorf("%w: %s has no columns", stream.ErrEmpty, name)
	}
	want := opt.Columns
	if want == nil {
		want = all
	}
	if len(want) == 0 && opt.Columns != nil {
		if len(opt.Keep) == 0 {
			return nil, fmt.Errorf("%w: %s: no columns to read or keep", stream.ErrColumn, name)
		}
	} else if s.cols, err = s.lookup(want, all, true); err != nil {
		return nil, err
	}
	s.names = append([]string(nil), want...)
	if opt.Keep != nil {
		if s.keep, err = s.lookup(opt.Keep, all, false); err != nil {
			return nil, err
		}
		s.kept = make([][]string, len(s.keep))
	}
	s.restart()
	return s, nil
}

// lookup finds the named top-level leaf columns; numeric requires a
// numeric type.
func (s *Source) lookup(want, all []string, numeric bool) ([]column, error) {
	if len(want) == 0 {
		return nil, fmt.Errorf("%w: %s: no columns", stream.ErrColumn, s.name)
	}
	asked := map[string]bool{}
	out := make([]column, len(want))
	for j, name := range want {
		if asked[name] {
			return nil, fmt.Errorf("%w: %s: column %q asked for twice", stream.ErrColumn, s.name, name)
		}
		asked[name] = true
		c := s.f.Root().Column(name)
		if c == nil {
			return nil, fmt.Errorf("%w: %s: no column %q (columns: %s)", stream.ErrColumn, s.name, name, list(all))
		}
		if !c.Leaf() || c.Repeated() {
			return nil, fmt.Errorf("%w: %s: column %q is a group or a list, not a value", stream.ErrColumn, s.name, name)
		}
		col := column{name: name, index: c.Index(), kind: c.Type().Kind()}
		if numeric {
			if col.kind != pq.Double && col.kind != pq.Float && col.kind != pq.Int32 && col.kind != pq.Int64 {
				return nil, fmt.Errorf("%w: %s: column %q has type %s, not a number", stream.ErrColumn, s.name, name, c.Type())
			}
			if lt := c.Type().LogicalType(); lt != nil && lt.Value != nil {
				it, ok := lt.Value.(*format.IntType)
				if !ok {
					return nil, fmt.Errorf("%w: %s: column %q has logical type %s; convert it to DOUBLE first", stream.ErrColumn, s.name, name, c.Type())
				}
				col.unsigned = !it.IsSigned
			}
		}
		out[j] = col
	}
	return out, nil
}

func list(names []string) string {
	s := ""
	for i, n := range names {
		if i == 12 {
			return s + fmt.Sprintf(", … (%d in all)", len(names))
		}
		if i > 0 {
			s += ", "
		}
		s += strconv.Quote(n)
	}
	return s
}

// restart goes back to the first row group.
func (s *Source) restart() {
	s.closeCursors()
	s.group, s.row, s.left, s.rej = -1, 0, 0, 0
}

func (s *Source) closeCursors() {
	for _, c := range append(s.cur, s.kcur...) {
		c.close()
	}
	s.cur, s.kcur = s.cur[:0], s.kcur[:0]
}

// nextGroup opens the cursors of the next row group with rows; it reports
// false at the end of the file.
func (s *Source) nextGroup() bool {
	s.closeCursors()
	groups := s.f.RowGroups()
	for s.group+1 < len(groups) {
		s.group++
		g := groups[s.group]
		if g.NumRows() == 0 {
			continue
		}
		chunks := g.ColumnChunks()
		for _, c := range s.cols {
			s.cur = append(s.cur, &cursor{pages: chunks[c.index].Pages()})
		}
		for _, c := range s.keep {
			s.kcur = append(s.kcur, &cursor{pages: chunks[c.index].Pages()})
		}
		s.left = g.NumRows()
		return true
	}
	return false
}

// Name returns the name given to New or the path given to Open.
func (s *Source) Name() string { return s.name }

// String returns Name.
func (s *Source) String() string { return s.name }

// Dim returns the number of columns read.
func (s *Source) Dim() int { return len(s.cols) }

// Columns returns the names of the columns read, in order.
func (s *Source) Columns() []string { return s.names }

// NumRows returns the number of rows in the file, bad ones included.
func (s *Source) NumRows() int64 { return s.f.NumRows() }

// Rejected returns the number of rows skipped in this pass.
func (s *Source) Rejected() int64 { return s.rej }

// Kept returns the text of the kept column Options.Keep[j] for the rows of
// the last Read. The slice is reused by the next Read.
func (s *Source) Kept(j int) []string { return s.kept[j] }

// Keep returns the names of the kept columns (Options.Keep).
func (s *Source) Keep() []string { return s.opt.Keep }

// Records returns the 0-based file rows of the rows of the last Read. The
// slice is reused by the next Read.
func (s *Source) Records() []int64 { return s.recs }

// Read implements stream.Source.
func (s *Source) Read(dst []float64) (int, error) {
	d := len(s.cols)
	m := len(dst)
	if d > 0 {
		m /= d
	}
	if m < 1 {
		panic("parquet: Read buffer holds less than one row")
	}
	for j := range s.kept {
		s.kept[j] = s.kept[j][:0]
	}
	s.recs = s.recs[:0]
	got := 0
	for got < m {
		if s.left == 0 && !s.nextGroup() {
			break
		}
		i := s.row
		s.row++
		s.left--
		row := dst[got*d : (got+1)*d]
		var bad *stream.RowError
		for j, c := range s.cols {
			v, err := s.cur[j].next()
			if err != nil {
				return 0, fmt.Errorf("%s: row %d, column %q: %w", s.name, i, c.name, err)
			}
			if bad != nil {
				continue // keep the cursors in step
			}
			x, cause := c.value(v)
			if cause != nil {
				bad = &stream.RowError{Source: s.name, Row: i, Column: c.name, Index: j, Err: cause}
				if !v.IsNull() {
					bad.Value = strconv.FormatFloat(x, 'g', -1, 64)
				}
				continue
			}
			row[j] = x
		}
		texts := make([]string, 0, len(s.kcur))
		for j := range s.kcur {
			v, err := s.kcur[j].next()
			if err != nil {
				return 0, fmt.Errorf("%s: row %d, column %q: %w", s.name, i, s.keep[j].name, err)
			}
			texts = append(texts, text(v))
		}
		if bad != nil {
			if !s.skip {
				return 0, bad
			}
			s.rej++
			if s.onSkip != nil {
				s.onSkip(bad)
			}
			continue
		}
		for j, t := range texts {
			s.kept[j] = append(s.kept[j], t)
		}
		s.recs = append(s.recs, i)
		got++
	}
	if got == 0 {
		return 0, io.EOF
	}
	return got, nil
}

// value converts a value of the column to float64, or returns the cause
// of a bad value.
func (c column) value(v pq.Value) (float64, error) {
	if v.IsNull() {
		return 0, fmt.Errorf("%w: null", stream.ErrMissing)
	}
	var x float64
	switch c.kind {
	case pq.Double:
		x = v.Double()
	case pq.Float:
		x = float64(v.Float())
	case pq.Int32:
		if c.unsigned {
			x = float64(v.Uint32())
		} else {
			x = float64(v.Int32())
		}
	case pq.Int64:
		if c.unsigned {
			x = float64(v.Uint64())
		} else {
			x = float64(v.Int64())
		}
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return x, stream.ErrNotFinite
	}
	return x, nil
}

// text renders any value as text: strings as they are, numbers in Go's
// shortest form, null as "".
func text(v pq.Value) string {
	if v.IsNull() {
		return ""
	}
	switch v.Kind() {
	case pq.ByteArray, pq.FixedLenByteArray:
		return string(v.ByteArray())
	case pq.Double:
		return strconv.FormatFloat(v.Double(), 'g', -1, 64)
	case pq.Float:
		return strconv.FormatFloat(float64(v.Float()), 'g', -1, 32)
	case pq.Int32:
		return strconv.FormatInt(int64(v.Int32()), 10)
	case pq.Int64:
		return strconv.FormatInt(v.Int64(), 10)
	case pq.Boolean:
		return strconv.FormatBool(v.Boolean())
	}
	return v.String()
}

// Reopen starts a new pass from the first row; it never fails.
func (s *Source) Reopen() error {
	s.restart()
	return nil
}

// Close closes the file opened by Open; for New it does nothing.
func (s *Source) Close() error {
	s.closeCursors()
	if s.file != nil {
		return s.file.Close()
	}
	return nil
}

// cursor reads the values of one column chunk page by page.
type cursor struct {
	pages pq.Pages
	page  pq.Page
	vr    pq.ValueReader
	buf   []pq.Value
	pos   int
}

const cursorValues = 1024

func (c *cursor) next() (pq.Value, error) {
	for c.pos >= len(c.buf) {
		if err := c.fill(); err != nil {
			return pq.Value{}, err
		}
	}
	v := c.buf[c.pos]
	c.pos++
	return v, nil
}

// fill reads the next values, moving to the next page when one ends.
func (c *cursor) fill() error {
	if c.buf == nil {
		c.buf = make([]pq.Value, cursorValues)
	}
	for {
		if c.vr == nil {
			p, err := c.pages.ReadPage()
			if err != nil {
				if errors.Is(err, io.EOF) {
					return fmt.Errorf("column chunk ended before its rows: %w", io.ErrUnexpectedEOF)
				}
				return err
			}
			c.page, c.vr = p, p.Values()
		}
		n, err := c.vr.ReadValues(c.buf[:cap(c.buf)])
		if n > 0 {
			c.buf, c.pos = c.buf[:n], 0
			return nil
		}
		if err != nil && !errors.Is(err, io.EOF) {
			return err
		}
		pq.Release(c.page)
		c.page, c.vr = nil, nil
	}
}

func (c *cursor) close() {
	if c.page != nil {
		pq.Release(c.page)
		c.page, c.vr = nil, nil
	}
	if c.pages != nil {
		c.pages.Close()
	}
}
