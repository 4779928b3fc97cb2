package main

import (
	"context"
	"fmt"
	"io"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/profile"
	"github.com/centroidlab/centroid/kmeans/stream"
)

func profileVerb(ctx context.Context, args []string, e *env) error {
	var (
		modelPath, in, labels, format, labelsFormat, column string
		columns                                             list
		sample                                              int = 100_000
		skip                                                bool
		seed                                                uint64
	)
	fs := newFlags("profile", "-model MODEL.json -in FILE -labels LABELS.csv [flags]", e.stderr)
	fs.StringVar(&modelPath, "model", "", "model file written by cluster (required)")
	fs.StringVar(&in, "in", "", "the rows that were labelled, CSV or Parquet (required)")
	fs.StringVar(&labels, "labels", "", "labels file written by label, one row per input row (required)")
	fs.StringVar(&column, "cluster", "cluster", "column of the labels file holding the cluster")
	fs.StringVar(&format, "format", "", "input format: csv, tsv or parquet (default: from the extension)")
	fs.StringVar(&labelsFormat, "labels-format", "", "labels format (default: from the extension)")
	fs.Var(&columns, "columns", "input columns in the model's feature order (default: the model's feature names)")
	fs.IntVar(&sample, "sample", sample, "profile a uniform sample of at most this many rows")
	fs.BoolVar(&skip, "skip", false, "leave out bad input rows (their label must be -1 or is ignored)")
	fs.Uint64Var(&seed, "seed", 0, "seed of the sample")
	if err := parse(fs, args); err != nil {
		return err
	}
	if modelPath == "" || in == "" || labels == "" {
		return fmt.Errorf("%w: -model, -in and -labels are required", errUsage)
	}
	if sample < 1 {
		return fmt.Errorf("%w: -sample %d", errUsage, sample)
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
	data, err := openFile(in, format, &stream.Options{Columns: cols, Skip: skip})
	if err != nil {
		return err
	}
	defer data.Close()
	lab, err := openFile(labels, labelsFormat, &stream.Options{Columns: []string{column}})
	if err != nil {
		return err
	}
	defer lab.Close()
	X, assign, rows, err := sampleLabelled(ctx, data, lab, model.K(), sample, seed)
	if err != nil {
		return err
	}
	report, err := describe(X, model, assign, cols)
	if err != nil {
		return err
	}
	n, _ := X.Dims()
	if int64(n) < rows {
		fmt.Fprintf(e.stdout, "profile of a uniform sample of %d of %d labelled rows\n", n, rows)
	} else {
		fmt.Fprintf(e.stdout, "profile of %d labelled rows\n", n)
	}
	_, err = report.WriteTo(e.stdout)
	return err
}

// sampleLabelled reads the data rows and their labels in step (label row r
// belongs to data record r) and keeps a uniform sample (reservoir sampling
// from the seed) of at most m rows with labels in [0, k). It returns the
// sample, its labels and the number of labelled rows seen.
func sampleLabelled(ctx context.Context, data, lab fileSource, k, m int, seed uint64) (*mat.Dense, []int, int64, error) {
	d := data.Dim()
	buf := make([]float64, 4096*d)
	lbuf := make([]float64, 4096)
	var lpos, lrow int64 // labels read so far; index of lbuf[0]
	ln := 0
	label := func(rec int64) (int, error) {
		for rec >= lrow+int64(ln) {
			lrow += int64(ln)
			n, err := lab.Read(lbuf)
			if err == io.EOF {
				return 0, fmt.Errorf("%w: %s has %d rows but the data has more", stream.ErrRow, name(lab), lrow)
			}
			if err != nil {
				return 0, err
			}
			ln = n
			lpos = lrow
		}
		v := lbuf[rec-lpos]
		if v != float64(int(v)) || v < -1 || v >= float64(k) {
			return 0, fmt.Errorf("%w: %s: row %d: cluster %v is not -1 or in 0..%d", stream.ErrRow, name(lab), rec, v, k-1)
		}
		return int(v), nil
	}
	rnd := rand.New(rand.NewPCG(seed, 0x70726f66))
	var X []float64
	var assign []int
	var seen int64
	for {
		if err := ctx.Err(); err != nil {
			return nil, nil, 0, err
		}
		n, err := data.Read(buf)
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, nil, 0, err
		}
		recs := data.Records()
		for t := range n {
			a, err := label(recs[t])
			if err != nil {
				return nil, nil, 0, err
			}
			if a < 0 {
				continue
			}
			seen++
			row := buf[t*d : (t+1)*d]
			if len(assign) < m {
				X = append(X, row...)
				assign = append(assign, a)
			} else if r := rnd.Int64N(seen); r < int64(m) {
				copy(X[r*int64(d):], row)
				assign[r] = a
			}
		}
	}
	if len(assign) == 0 {
		return nil, nil, 0, fmt.Errorf("%w: no labelled rows", stream.ErrEmpty)
	}
	return mat.NewDense(len(assign), d, X), assign, seen, nil
}

// describe is the one place the command calls package profile: it
// explains the clusters of X in the units of the data, named by the
// model's schema.
func describe(X *mat.Dense, model *kmeans.Model, assign []int, features []string) (io.WriterTo, error) {
	return profile.Explain(X, assign, &profile.Options{Names: features, K: model.K()})
}
