package kbeam

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"slices"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem"

	"github.com/centroidlab/centroid/kmeans/stream"
)

// MaxFiles is the largest number of files a CSV input may match: row
// indices are file ordinal << 40 | record, which leaves 24 bits for the
// ordinal.
const MaxFiles = 1 << 24

// CSVOptions says which columns of a CSV input are read and how.
// A nil *CSVOptions means every column, DefaultBlockRows rows per block
// and an error on the first bad row.
type CSVOptions struct {
	// Columns names the columns to cluster on, in this order; nil means
	// every column (all must then be numeric).
	Columns []string
	// Keep names a column carried along as text for the labelled rows,
	// such as an identifier; "" means none.
	Keep string
	// Skip skips bad rows (a value that is not a number, NaN or ±Inf, a
	// missing value) instead of failing the pipeline on the first.
	Skip bool
	// Comma is the field separator; zero means ','.
	Comma rune
	// BlockRows is the number of rows per Block; zero means
	// DefaultBlockRows, negative is an error.
	BlockRows int
}

// CSV is an input of one or more CSV files with a header line, matched by
// a glob on any filesystem Beam has registered (local paths; gs:// and
// others when their packages are imported). Each file is parsed by the
// CSV reader of package kmeans/stream, so the same values, errors and
// row numbers come out as in a streaming clustering.
type CSV struct {
	files   []string
	columns []string
	o       CSVOptions
}

// OpenCSV matches glob, reads the header of the first file and checks the
// columns against it. It returns an error wrapping stream.ErrEmpty if no
// file matches or the first has no header, stream.ErrColumn for a column
// missing from the header, kmeans.ErrSettings for bad options, or the
// filesystem's error. The other files are checked when the pipeline reads
// them.
func OpenCSV(ctx context.Context, glob string, o *CSVOptions) (*CSV, error) {
	c := &CSV{}
	if o != nil {
		c.o = *o
		c.o.Columns = slices.Clone(o.Columns)
	}
	if c.o.BlockRows < 0 {
		return nil, fmt.Errorf("%w: BlockRows = %d, want ≥ 0", ErrInput, c.o.BlockRows)
	}
	if c.o.BlockRows == 0 {
		c.o.BlockRows = DefaultBlockRows
	}
	fs, err := filesystem.New(ctx, glob)
	if err != nil {
		return nil, err
	}
	defer fs.Close()
	files, err := fs.List(ctx, glob)
	if err != nil {
		return nil, err
	}
	if len(files) == 0 {
		return nil, fmt.Errorf("%w: no file matches %q", stream.ErrEmpty, glob)
	}
	if len(files) > MaxFiles {
		return nil, fmt.Errorf("%w: %d files match %q, at most %d can be read", ErrInput, len(files), glob, MaxFiles)
	}
	slices.Sort(files)
	c.files = files
	rc, err := fs.OpenRead(ctx, files[0])
	if err != nil {
		return nil, err
	}
	defer rc.Close()
	r, err := stream.NewCSV(bufio.NewReader(rc), files[0], c.streamOptions())
	if err != nil {
		return nil, err
	}
	c.columns = slices.Clone(r.Columns())
	return c, nil
}

func (c *CSV) streamOptions() *stream.Options {
	o := &stream.Options{Columns: c.o.Columns, Skip: c.o.Skip, Comma: c.o.Comma}
	if c.o.Keep != "" {
		o.Keep = []string{c.o.Keep}
	}
	return o
}

// Files returns the matched files in the order of their ordinals.
func (c *CSV) Files() []string { return slices.Clone(c.files) }

// Columns returns the names of the columns read, in order.
func (c *CSV) Columns() []string { return slices.Clone(c.columns) }

// Dim returns the number of columns read.
func (c *CSV) Dim() int { return len(c.columns) }

// Read adds the reading of the files to s and returns a PCollection of
// Block: file ordinal i (in Files order) gives blocks with Seq i<<32 |
// block and rows with index i<<40 | record, where record is the 0-based
// data record after the header (skipped bad rows leave gaps). One worker
// reads one file from its start; split a large table into several files
// to read it in parallel. A bad row fails the pipeline with the reader's
// message naming the file, line and column, unless Skip is set.
func (c *CSV) Read(s beam.Scope) beam.PCollection {
	s = s.Scope("kbeam.CSV")
	inputs := make([]any, len(c.files))
	for i, f := range c.files {
		inputs[i] = csvFile{Ordinal: uint64(i), Path: f}
	}
	files := beam.Reshuffle(s, beam.Create(s, inputs...))
	f := &readCSVFn{Columns: c.columns, Skip: c.o.Skip, Comma: c.o.Comma, BlockRows: c.o.BlockRows}
	if c.o.Keep != "" {
		f.Keep = []string{c.o.Keep}
	}
	return beam.ParDo(s, f, files)
}

// Source returns c.Read as a Source.
func (c *CSV) Source() Source { return c.Read }

// csvFile is one file to read with its ordinal.
type csvFile struct {
	Ordinal uint64
	Path    string
}

// readCSVFn reads one CSV file into blocks of consecutive records.
type readCSVFn struct {
	Columns   []string
	Keep      []string
	Skip      bool
	Comma     rune
	BlockRows int
}

func (f *readCSVFn) ProcessElement(ctx context.Context, in csvFile, emit func(Block)) (err error) {
	fs, err := filesystem.New(ctx, in.Path)
	if err != nil {
		return err
	}
	defer fs.Close()
	rc, err := fs.OpenRead(ctx, in.Path)
	if err != nil {
		return err
	}
	defer rc.Close()
	r, err := stream.NewCSV(bufio.NewReaderSize(rc, 1<<16), in.Path, &stream.Options{Columns: f.Columns, Keep: f.Keep, Skip: f.Skip, Comma: f.Comma})
	if err != nil {
		return err
	}
	d := r.Dim()
	if !slices.Equal(r.Columns(), f.Columns) {
		return fmt.Errorf("%w: %s reads columns %v, the first file %v", stream.ErrColumn, in.Path, r.Columns(), f.Columns)
	}
	var seq uint64
	buf := make([]float64, f.BlockRows*d)
	for {
		n, err := r.Read(buf)
		if errors.Is(err, io.EOF) {
			return nil
		}
		if err != nil {
			return err
		}
		rec := r.Records()
		var kept []string
		if f.Keep != nil {
			kept = r.Kept(0)
		}
		// A block holds consecutive records, so that row t has index
		// First+t; skipped rows split a read into several blocks.
		for lo := 0; lo < n; {
			hi := lo + 1
			for hi < n && rec[hi] == rec[hi-1]+1 {
				hi++
			}
			if uint64(rec[hi-1]) >= 1<<40 || seq >= 1<<32 {
				return fmt.Errorf("%w: %s has more rows than a file may hold (2⁴⁰ records, 2³² blocks)", ErrInput, in.Path)
			}
			b := Block{Seq: in.Ordinal<<32 | seq, First: in.Ordinal<<40 | uint64(rec[lo]), X: slices.Clone(buf[lo*d : hi*d])}
			if kept != nil {
				b.Keep = slices.Clone(kept[lo:hi])
			}
			emit(b)
			seq++
			lo = hi
		}
	}
}
