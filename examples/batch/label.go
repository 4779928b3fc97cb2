package main

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"log/slog"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/kmeans/stream/parquet"
)

// stageLabel names the labelling pass in progress reports.
const stageLabel stream.Stage = "label"

func labelVerb(ctx context.Context, args []string, e *env) error {
	var (
		modelPath, in, out, format, outFormat, id string
		columns                                   list
		skip                                      bool
		memory                                    size = 256 << 20
	)
	fs := newFlags("label", "-model MODEL.json -in FILE -out LABELS.csv [flags]", e.stderr)
	fs.StringVar(&modelPath, "model", "", "model file written by cluster (required)")
	fs.StringVar(&in, "in", "", "rows to label, CSV with a header or Parquet (required)")
	fs.StringVar(&out, "out", "", "labels file to write, .csv or .parquet (required)")
	fs.StringVar(&format, "format", "", "input format: csv, tsv or parquet (default: from the extension)")
	fs.StringVar(&outFormat, "out-format", "", "output format: csv or parquet (default: from the extension)")
	fs.StringVar(&id, "id", "", "input column copied into the labels next to each row's cluster (any text)")
	fs.Var(&columns, "columns", "input columns in the model's feature order (default: the model's feature names)")
	fs.BoolVar(&skip, "skip", false, "label bad rows as cluster -1 instead of stopping at the first")
	fs.Var(&memory, "memory", "memory budget, such as 16MiB or 2GiB")
	if err := parse(fs, args); err != nil {
		return err
	}
	if modelPath == "" || in == "" || out == "" {
		return fmt.Errorf("%w: -model, -in and -out are required", errUsage)
	}
	of, err := formatOf(out, outFormat)
	if err != nil {
		return err
	}
	model, err := readModel(modelPath)
	if err != nil {
		return err
	}
	cols := []string(columns)
	if cols == nil {
		if !model.HasSchema() {
			return fmt.Errorf("%w: the model has no feature names; give -columns", errUsage)
		}
		cols = model.Features()
	}
	if len(cols) != model.Dim() {
		return fmt.Errorf("%w: %d columns for a model of %d features", errUsage, len(cols), model.Dim())
	}
	log := slog.New(slog.NewTextHandler(e.stderr, nil))
	limitMemory(int64(memory), log)
	opt := &stream.Options{Columns: cols, Skip: skip, OnSkip: skipLogger(log)}
	if id != "" {
		opt.Keep = []string{id}
	}
	src, err := openFile(in, format, opt)
	if err != nil {
		return err
	}
	defer src.Close()
	bud := budgetFor(int64(memory), len(cols), model.K())
	rep := newReporter(e, log)
	defer rep.stop()
	var n, bad int64
	counts := make([]int64, model.K())
	err = writeAtomic(out, func(w io.Writer) error {
		lw, err := newLabelWriter(w, of, id)
		if err != nil {
			return err
		}
		d := len(cols)
		buf := make([]float64, bud.blockRows*d)
		var next int64 // next input record to write
		for {
			if err := ctx.Err(); err != nil {
				return err
			}
			m, err := src.Read(buf)
			if err == io.EOF {
				break
			}
			if err != nil {
				return err
			}
			recs := src.Records()
			for t := range m {
				for ; next < recs[t]; next++ { // rows skipped as bad
					if err := lw.bad(); err != nil {
						return err
					}
					bad++
				}
				a, err := model.Assign(buf[t*d : (t+1)*d])
				if err != nil {
					return fmt.Errorf("%s: row %d: %w", in, recs[t], err)
				}
				var idv string
				if id != "" {
					idv = src.Kept(0)[t]
				}
				if err := lw.write(idv, a); err != nil {
					return err
				}
				counts[a.Cluster]++
				n++
				next++
			}
			rep.progress(stream.Progress{Stage: stageLabel, Pass: 1, Rows: n + bad, Total: -1, Cost: math.NaN()})
		}
		for ; bad < src.Rejected(); bad++ { // bad rows at the end
			if err := lw.bad(); err != nil {
				return err
			}
		}
		rep.progress(stream.Progress{Stage: stageLabel, Pass: 1, Rows: n + bad, Total: n + bad, Cost: math.NaN(), Done: true})
		return lw.close()
	})
	if err != nil {
		return err
	}
	sizes := make([]string, len(counts))
	for j, c := range counts {
		sizes[j] = strconv.FormatInt(c, 10)
	}
	fmt.Fprintf(e.stdout, "labelled %d rows of %s (%d bad rows labelled -1)\n  sizes: %s\nlabels written to %s\n", n, in, bad, strings.Join(sizes, " "), out)
	return nil
}

// readModel reads a model document with the library's strict reader.
func readModel(path string) (*kmeans.Model, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	m, err := kmeans.ReadModel(f, nil)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return m, nil
}

// labelWriter writes the labels file: a header, then per input row
// [id,]cluster,distance,margin; a bad row gets cluster -1 and empty
// distance and margin (NaN in Parquet).
type labelWriter struct {
	id   bool
	csv  *bufio.Writer
	pq   *parquet.Writer
	line []byte
}

func newLabelWriter(w io.Writer, format, id string) (*labelWriter, error) {
	lw := &labelWriter{id: id != ""}
	if format == "parquet" {
		fields := []parquet.Field{{Name: "cluster", Kind: parquet.Int64}, {Name: "distance", Kind: parquet.Float64}, {Name: "margin", Kind: parquet.Float64}}
		if lw.id {
			if id == "cluster" || id == "distance" || id == "margin" {
				return nil, fmt.Errorf("%w: -id %q clashes with an output column", errUsage, id)
			}
			fields = append([]parquet.Field{{Name: id, Kind: parquet.String}}, fields...)
		}
		p, err := parquet.NewWriter(w, fields, nil)
		if err != nil {
			return nil, err
		}
		lw.pq = p
		return lw, nil
	}
	lw.csv = bufio.NewWriterSize(w, 1<<16)
	header := "cluster,distance,margin\n"
	if lw.id {
		header = csvField(id) + "," + header
	}
	_, err := lw.csv.WriteString(header)
	return lw, err
}

func (lw *labelWriter) write(id string, a kmeans.Assignment) error {
	if lw.pq != nil {
		if lw.id {
			return lw.pq.Write(id, int64(a.Cluster), a.Distance, a.Margin)
		}
		return lw.pq.Write(int64(a.Cluster), a.Distance, a.Margin)
	}
	b := lw.line[:0]
	if lw.id {
		b = append(b, csvField(id)...)
		b = append(b, ',')
	}
	b = strconv.AppendInt(b, int64(a.Cluster), 10)
	b = append(b, ',')
	b = strconv.AppendFloat(b, a.Distance, 'g', -1, 64)
	b = append(b, ',')
	b = strconv.AppendFloat(b, a.Margin, 'g', -1, 64)
	b = append(b, '\n')
	lw.line = b
	_, err := lw.csv.Write(b)
	return err
}

func (lw *labelWriter) bad() error {
	if lw.pq != nil {
		if lw.id {
			return lw.pq.Write("", int64(-1), math.NaN(), math.NaN())
		}
		return lw.pq.Write(int64(-1), math.NaN(), math.NaN())
	}
	line := "-1,,\n"
	if lw.id {
		line = "," + line
	}
	_, err := lw.csv.WriteString(line)
	return err
}

func (lw *labelWriter) close() error {
	if lw.pq != nil {
		return lw.pq.Close()
	}
	return lw.csv.Flush()
}

// csvField quotes a field when CSV needs it.
func csvField(s string) string {
	if strings.ContainsAny(s, ",\"\r\n") || strings.TrimSpace(s) != s {
		return `"` + strings.ReplaceAll(s, `"`, `""`) + `"`
	}
	return s
}
