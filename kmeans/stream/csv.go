package stream

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"slices"
)

// CSV is a Source over a CSV file with a header line: the columns are
// chosen by header name (Options.Columns, or every column) and parsed as
// float64 with strconv.ParseFloat (surrounding spaces allowed). Other
// columns may hold anything; columns in Options.Keep are carried as text.
//
// A bad row — a value that is not a number, NaN or ±Inf (which ParseFloat
// accepts as text), an empty value, a row with fewer fields than a chosen
// column needs, a malformed quote — returns a *RowError naming the file,
// the line and the column, or with Options.Skip is skipped and counted.
// Rows may have more fields than the header.
//
// A CSV opened by OpenCSV, or made by NewCSV from an io.ReadSeeker, can be
// reopened. A CSV is not safe for concurrent use.
type CSV struct {
	name   string
	r      io.Reader
	seeker io.Seeker
	off    int64 // where the document starts for the seeker
	file   *os.File
	cr     *csv.Reader
	opt    Options
	header []string
	idx    []int // header position of every chosen column
	keep   []int // header position of every kept column
	names  []string
	kept   [][]string
	recs   []int64
	record int64 // data records read in this pass
	need   int   // fields a row must have: 1 + max(idx, keep)
	skipper
}

var _ Reopener = (*CSV)(nil)

// OpenCSV opens the CSV file at path, reads its header and checks the
// columns (see CSV). It returns an error wrapping ErrEmpty for a file
// without a header line, ErrColumn for a missing or repeated column, or
// the error of os.Open. Close the CSV when done.
func OpenCSV(path string, o *Options) (*CSV, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	c, err := newCSV(f, path, o)
	if err != nil {
		f.Close()
		return nil, err
	}
	c.file = f
	return c, nil
}

// NewCSV reads a CSV document from r, which name describes in messages
// (such as a file name); see OpenCSV. If r is an io.ReadSeeker, Reopen
// seeks it back to where it was when NewCSV was called.
func NewCSV(r io.Reader, name string, o *Options) (*CSV, error) {
	return newCSV(r, name, o)
}

func newCSV(r io.Reader, name string, o *Options) (*CSV, error) {
	c := &CSV{name: name, r: r, opt: o.resolved()}
	c.skipper = skipper{skip: c.opt.Skip, onSkip: c.opt.OnSkip}
	if s, ok := r.(io.Seeker); ok {
		if off, err := s.Seek(0, io.SeekCurrent); err == nil {
			c.seeker, c.off = s, off
		}
	}
	if err := c.start(); err != nil {
		return nil, err
	}
	var err error
	if c.opt.Columns != nil && len(c.opt.Columns) == 0 {
		if len(c.opt.Keep) == 0 {
			return nil, fmt.Errorf("%w: %s: no columns to read or keep", ErrColumn, name)
		}
		c.idx, c.names = []int{}, []string{}
	} else if c.idx, c.names, err = selectColumns(name, c.header, c.opt.Columns); err != nil {
		return nil, err
	}
	if c.opt.Keep != nil {
		if c.keep, _, err = selectColumns(name, c.header, c.opt.Keep); err != nil {
			return nil, err
		}
		c.kept = make([][]string, len(c.keep))
	}
	for _, i := range append(append([]int(nil), c.idx...), c.keep...) {
		c.need = max(c.need, i+1)
	}
	return c, nil
}

// start (re)creates the csv.Reader and reads the header.
func (c *CSV) start() error {
	c.cr = csv.NewReader(c.r)
	c.cr.FieldsPerRecord = -1
	c.cr.ReuseRecord = true
	if c.opt.Comma != 0 {
		c.cr.Comma = c.opt.Comma
	}
	h, err := c.cr.Read()
	if err == io.EOF {
		return fmt.Errorf("%w: %s: empty file, no header line", ErrEmpty, c.name)
	}
	if err != nil {
		return fmt.Errorf("%w: %s: header: %w", ErrColumn, c.name, err)
	}
	if len(h) > 0 {
		h[0] = trimBOM(h[0])
	}
	if c.header == nil {
		c.header = append([]string(nil), h...)
	} else if !slices.Equal(c.header, h) {
		return fmt.Errorf("%w: %s: the header changed between passes", ErrReopen, c.name)
	}
	c.record = 0
	c.rejected = 0
	return nil
}

// trimBOM removes a UTF-8 byte order mark.
func trimBOM(s string) string {
	if len(s) >= 3 && s[0] == 0xEF && s[1] == 0xBB && s[2] == 0xBF {
		return s[3:]
	}
	return s
}

// Name returns the name given to NewCSV or the path given to OpenCSV.
func (c *CSV) Name() string { return c.name }

// String returns Name.
func (c *CSV) String() string { return c.name }

// Dim returns the number of columns read.
func (c *CSV) Dim() int { return len(c.idx) }

// Columns returns the names of the columns read, in order.
func (c *CSV) Columns() []string { return c.names }

// Header returns the file's header, every column.
func (c *CSV) Header() []string { return c.header }

// Kept returns the text of the kept column Options.Keep[j] for the rows of
// the last Read, in order. The slice is reused by the next Read.
func (c *CSV) Kept(j int) []string { return c.kept[j] }

// Keep returns the names of the kept columns (Options.Keep).
func (c *CSV) Keep() []string { return c.opt.Keep }

// Records returns the 0-based data record numbers (after the header) of
// the rows of the last Read, so that a caller skipping bad rows can tell
// where the gaps are. The slice is reused by the next Read.
func (c *CSV) Records() []int64 { return c.recs }

// Read implements Source.
func (c *CSV) Read(dst []float64) (int, error) {
	d := len(c.idx)
	m := rows(dst, d)
	for j := range c.kept {
		c.kept[j] = c.kept[j][:0]
	}
	c.recs = c.recs[:0]
	got := 0
	for got < m {
		rec, err := c.cr.Read()
		if err == io.EOF {
			break
		}
		i := c.record
		c.record++
		if err != nil {
			var pe *csv.ParseError
			line := int64(0)
			if errors.As(err, &pe) {
				line = int64(pe.StartLine)
				err = pe.Err
			}
			if rerr := c.bad(&RowError{Source: c.name, Line: line, Row: i, Index: -1, Err: err}); rerr != nil {
				return 0, rerr
			}
			continue
		}
		if e := c.parse(dst[got*d:(got+1)*d], rec, i); e != nil {
			if err := c.bad(e); err != nil {
				return 0, err
			}
			continue
		}
		for j, p := range c.keep {
			c.kept[j] = append(c.kept[j], rec[p])
		}
		c.recs = append(c.recs, i)
		got++
	}
	if got == 0 {
		return 0, io.EOF
	}
	return got, nil
}

// parse converts the chosen fields of rec into row.
func (c *CSV) parse(row []float64, rec []string, i int64) *RowError {
	line := func(field int) int64 {
		if field >= len(rec) {
			field = len(rec) - 1
		}
		l, _ := c.cr.FieldPos(max(field, 0))
		return int64(l)
	}
	if len(rec) < c.need {
		for j, p := range c.idx {
			if p >= len(rec) {
				return &RowError{Source: c.name, Line: line(p), Row: i, Column: c.names[j], Index: j,
					Err: fmt.Errorf("%w: the row has %d fields, the header %d", ErrMissing, len(rec), len(c.header))}
			}
		}
		for j, p := range c.keep {
			if p >= len(rec) {
				return &RowError{Source: c.name, Line: line(p), Row: i, Column: c.opt.Keep[j], Index: -1,
					Err: fmt.Errorf("%w: the row has %d fields, the header %d", ErrMissing, len(rec), len(c.header))}
			}
		}
	}
	for j, p := range c.idx {
		v, err := parseValue(rec[p])
		if err != nil {
			return &RowError{Source: c.name, Line: line(p), Row: i, Column: c.names[j], Index: j, Value: cut(rec[p]), Err: err}
		}
		row[j] = v
	}
	return nil
}

// Reopen starts a new pass from the first data row. It returns an error
// wrapping ErrReopen if the CSV was made from a reader that cannot seek.
func (c *CSV) Reopen() error {
	if c.seeker == nil {
		return fmt.Errorf("%w: %s is read from a stream", ErrReopen, c.name)
	}
	if _, err := c.seeker.Seek(c.off, io.SeekStart); err != nil {
		return fmt.Errorf("%w: %s: %w", ErrReopen, c.name, err)
	}
	return c.start()
}

// Close closes the file opened by OpenCSV; for NewCSV it does nothing.
func (c *CSV) Close() error {
	if c.file != nil {
		return c.file.Close()
	}
	return nil
}
