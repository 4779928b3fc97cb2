package parquet

import (
	"errors"
	"fmt"
	"io"

	pq "github.com/parquet-go/parquet-go"
	"github.com/parquet-go/parquet-go/compress/snappy"
)

// ErrWrite means a Writer was given rows that do not fit its fields.
var ErrWrite = errors.New("parquet: bad row for the writer")

// Kind is the type of a Writer field.
type Kind int

// Field kinds.
const (
	Float64 Kind = iota // DOUBLE
	Int64               // INT64
	String              // BYTE_ARRAY with the STRING logical type
)

// Field is one column written by a Writer.
type Field struct {
	Name string
	Kind Kind
}

// DefaultRowGroupRows is the number of rows a Writer buffers per row
// group unless WriterOptions say otherwise.
const DefaultRowGroupRows = 1 << 17

// WriterOptions tunes a Writer; nil means the defaults.
type WriterOptions struct {
	// RowGroupRows is the number of rows per row group, buffered in memory
	// before they are written. Zero means DefaultRowGroupRows.
	RowGroupRows int
}

// Writer writes rows to a Parquet file, all columns required, compressed
// with Snappy. Columns appear in the file's schema in the order of their
// names (the schema's groups are sorted); readers find them by name.
type Writer struct {
	w      *pq.GenericWriter[pq.Row]
	fields []Field
	index  []int // schema column of each field
	rows   []pq.Row
}

// NewWriter returns a writer of the fields to w. It returns an error
// wrapping ErrWrite for no fields, an empty or repeated name, an unknown
// kind or a negative RowGroupRows.
func NewWriter(w io.Writer, fields []Field, o *WriterOptions) (*Writer, error) {
	groupRows := DefaultRowGroupRows
	if o != nil && o.RowGroupRows != 0 {
		if o.RowGroupRows < 0 {
			return nil, fmt.Errorf("%w: RowGroupRows = %d", ErrWrite, o.RowGroupRows)
		}
		groupRows = o.RowGroupRows
	}
	if len(fields) == 0 {
		return nil, fmt.Errorf("%w: no fields", ErrWrite)
	}
	g := pq.Group{}
	for _, f := range fields {
		if f.Name == "" {
			return nil, fmt.Errorf("%w: a field has no name", ErrWrite)
		}
		if _, ok := g[f.Name]; ok {
			return nil, fmt.Errorf("%w: field %q repeated", ErrWrite, f.Name)
		}
		var node pq.Node
		switch f.Kind {
		case Float64:
			node = pq.Leaf(pq.DoubleType)
		case Int64:
			node = pq.Int(64)
		case String:
			node = pq.String()
		default:
			return nil, fmt.Errorf("%w: field %q has unknown kind %d", ErrWrite, f.Name, f.Kind)
		}
		g[f.Name] = pq.Compressed(node, &snappy.Codec{})
	}
	schema := pq.NewSchema("row", g)
	wr := &Writer{fields: append([]Field(nil), fields...), index: make([]int, len(fields))}
	for i, f := range fields {
		leaf, _ := schema.Lookup(f.Name)
		wr.index[i] = leaf.ColumnIndex
	}
	wr.w = pq.NewGenericWriter[pq.Row](w, schema, pq.MaxRowsPerRowGroup(int64(groupRows)))
	return wr, nil
}

// Write writes one row: a float64, an int64 (or int) and a string for the
// fields of those kinds, in the order of the fields. It returns an error
// wrapping ErrWrite if the row does not fit.
func (w *Writer) Write(values ...any) error {
	if len(values) != len(w.fields) {
		return fmt.Errorf("%w: %d values for %d fields", ErrWrite, len(values), len(w.fields))
	}
	row := make(pq.Row, len(values))
	for i, v := range values {
		var pv pq.Value
		switch w.fields[i].Kind {
		case Float64:
			x, ok := v.(float64)
			if !ok {
				return fmt.Errorf("%w: field %q wants a float64, got %T", ErrWrite, w.fields[i].Name, v)
			}
			pv = pq.DoubleValue(x)
		case Int64:
			switch x := v.(type) {
			case int64:
				pv = pq.Int64Value(x)
			case int:
				pv = pq.Int64Value(int64(x))
			default:
				return fmt.Errorf("%w: field %q wants an int64, got %T", ErrWrite, w.fields[i].Name, v)
			}
		case String:
			x, ok := v.(string)
			if !ok {
				return fmt.Errorf("%w: field %q wants a string, got %T", ErrWrite, w.fields[i].Name, v)
			}
			pv = pq.ByteArrayValue([]byte(x))
		}
		row[w.index[i]] = pv.Level(0, 0, w.index[i])
	}
	w.rows = append(w.rows, row)
	if len(w.rows) == 4096 {
		return w.flush()
	}
	return nil
}

// WriteFloats writes one row of float64 fields from x.
func (w *Writer) WriteFloats(x []float64) error {
	if len(x) != len(w.fields) {
		return fmt.Errorf("%w: %d values for %d fields", ErrWrite, len(x), len(w.fields))
	}
	row := make(pq.Row, len(x))
	for i, v := range x {
		if w.fields[i].Kind != Float64 {
			return fmt.Errorf("%w: field %q is not a float64 field", ErrWrite, w.fields[i].Name)
		}
		row[w.index[i]] = pq.DoubleValue(v).Level(0, 0, w.index[i])
	}
	w.rows = append(w.rows, row)
	if len(w.rows) == 4096 {
		return w.flush()
	}
	return nil
}

func (w *Writer) flush() error {
	if len(w.rows) == 0 {
		return nil
	}
	_, err := w.w.WriteRows(w.rows)
	w.rows = w.rows[:0]
	return err
}

// Close writes the buffered rows and the file footer. It does not close
// the underlying writer.
func (w *Writer) Close() error {
	if err := w.flush(); err != nil {
		return err
	}
	return w.w.Close()
}
