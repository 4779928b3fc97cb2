package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/kmeans/stream/parquet"
)

// fileSource is what the verbs need of a CSV or Parquet source.
type fileSource interface {
	stream.Reopener
	stream.Rejecter
	Kept(j int) []string
	Records() []int64
	Close() error
}

var (
	_ fileSource = (*stream.CSV)(nil)
	_ fileSource = (*parquet.Source)(nil)
)

// formatOf returns "csv" or "parquet" for a file: the -format flag if set,
// else by extension (.csv, .tsv, .txt as CSV; .parquet, .pq).
func formatOf(path, flag string) (string, error) {
	if flag != "" {
		switch f := strings.ToLower(flag); f {
		case "csv", "tsv", "parquet":
			return f, nil
		}
		return "", fmt.Errorf("%w: -format %q, want csv, tsv or parquet", errUsage, flag)
	}
	switch strings.ToLower(filepath.Ext(path)) {
	case ".csv", ".txt":
		return "csv", nil
	case ".tsv":
		return "tsv", nil
	case ".parquet", ".pq":
		return "parquet", nil
	}
	return "", fmt.Errorf("%w: cannot tell the format of %s from its extension; give -format csv or -format parquet", errUsage, path)
}

// openFile opens path as a source with the options.
func openFile(path, format string, o *stream.Options) (fileSource, error) {
	f, err := formatOf(path, format)
	if err != nil {
		return nil, err
	}
	switch f {
	case "parquet":
		return parquet.Open(path, o)
	case "tsv":
		c := *o
		c.Comma = '\t'
		return stream.OpenCSV(path, &c)
	}
	return stream.OpenCSV(path, o)
}

// errTooBig means the rows do not fit the memory set aside for them.
var errTooBig = errors.New("rows do not fit in memory")

// loadRows reads every row of src into a matrix, or returns errTooBig as
// soon as more than maxRows rows have been read.
func loadRows(src stream.Source, maxRows int64) (*mat.Dense, error) {
	d := src.Dim()
	buf := make([]float64, 4096*d)
	var rows []float64
	for {
		n, err := src.Read(buf)
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		rows = append(rows, buf[:n*d]...)
		if int64(len(rows)/d) > maxRows {
			return nil, errTooBig
		}
	}
	if len(rows) == 0 {
		if r, ok := src.(stream.Rejecter); ok && r.Rejected() > 0 {
			return nil, fmt.Errorf("%w: %s: every row (%d) was bad and skipped", stream.ErrEmpty, name(src), r.Rejected())
		}
		return nil, fmt.Errorf("%w: %s has no data rows", stream.ErrEmpty, name(src))
	}
	return mat.NewDense(len(rows)/d, d, rows), nil
}

func name(src stream.Source) string {
	if s, ok := src.(fmt.Stringer); ok {
		return s.String()
	}
	return "input"
}

// writeAtomic writes a file through write into a temporary file in the
// same folder and renames it into place only when write succeeded, so
// that an error or an interruption leaves no half-written file.
func writeAtomic(path string, write func(w io.Writer) error) (err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	tmp, err := os.CreateTemp(dir, "."+base+".*.tmp")
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if err = write(tmp); err != nil {
		return err
	}
	if err = tmp.Sync(); err != nil {
		return err
	}
	if err = tmp.Close(); err != nil {
		return err
	}
	return os.Rename(tmp.Name(), path)
}
