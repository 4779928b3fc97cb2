package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/validate"
)

// thresholds are the quality bars of the score verb: NaN means not set.
type thresholds struct {
	minARI, minNMI, minAMI, minV, minPurity, minFM float64
	maxCI                                          int
}

func scoreVerb(ctx context.Context, args []string, e *env) error {
	var (
		in, format, truth, found, labels, labelsFormat, id string
		centers, modelPath                                 string
		asJSON                                             bool
		th                                                 = thresholds{maxCI: -1}
	)
	fs := newFlags("score", "-in FILE -truth COLUMN -found COLUMN [flags]", e.stderr)
	fs.StringVar(&in, "in", "", "file holding the ground truth, CSV or Parquet (required)")
	fs.StringVar(&format, "format", "", "format of -in: csv, tsv or parquet (default: from the extension)")
	fs.StringVar(&truth, "truth", "", "column of -in holding the true class, any text (required)")
	fs.StringVar(&found, "found", "cluster", "column holding the found cluster: of -labels if given, else of -in")
	fs.StringVar(&labels, "labels", "", "labels file written by label, joined to -in by row order (or by -id)")
	fs.StringVar(&labelsFormat, "labels-format", "", "format of -labels (default: from the extension)")
	fs.StringVar(&id, "id", "", "join -labels to -in by this column of both instead of by row order")
	fs.StringVar(&centers, "centers", "", "published true centers, one per row, numeric columns (with -model: centroid index)")
	fs.StringVar(&modelPath, "model", "", "model whose centers are compared with -centers")
	fs.BoolVar(&asJSON, "json", false, "print the report as JSON")
	floatFlag(fs, &th.minARI, "min-ari", "fail (exit 3) when the adjusted Rand index is below this")
	floatFlag(fs, &th.minNMI, "min-nmi", "fail when NMI is below this")
	floatFlag(fs, &th.minAMI, "min-ami", "fail when AMI is below this")
	floatFlag(fs, &th.minV, "min-v", "fail when the V-measure is below this")
	floatFlag(fs, &th.minPurity, "min-purity", "fail when purity is below this")
	floatFlag(fs, &th.minFM, "min-fm", "fail when the Fowlkes–Mallows index is below this")
	fs.IntVar(&th.maxCI, "max-ci", -1, "fail when the centroid index is above this (needs -centers and -model)")
	if err := parse(fs, args); err != nil {
		return err
	}
	switch {
	case in == "" || truth == "":
		return fmt.Errorf("%w: -in and -truth are required", errUsage)
	case (centers == "") != (modelPath == ""):
		return fmt.Errorf("%w: -centers and -model go together", errUsage)
	case th.maxCI >= 0 && centers == "":
		return fmt.Errorf("%w: -max-ci needs -centers and -model", errUsage)
	case id != "" && labels == "":
		return fmt.Errorf("%w: -id joins -labels to -in; give -labels", errUsage)
	}
	t, f, skipped, err := readLabellings(ctx, in, format, truth, found, labels, labelsFormat, id)
	if err != nil {
		return err
	}
	var trueC, foundC *mat.Dense
	if centers != "" {
		src, err := openFile(centers, "", &stream.Options{})
		if err != nil {
			return err
		}
		defer src.Close()
		if trueC, err = stream.ReadCenters(src); err != nil {
			return err
		}
		m, err := readModel(modelPath)
		if err != nil {
			return err
		}
		foundC = m.Centers()
	}
	r, err := validate.Compare(t, f, trueC, foundC)
	if err != nil {
		return err
	}
	if asJSON {
		b, err := json.MarshalIndent(r, "", "  ")
		if err != nil {
			return err
		}
		fmt.Fprintf(e.stdout, "%s\n", b)
	} else {
		if skipped > 0 {
			fmt.Fprintf(e.stdout, "%d rows labelled -1 (bad rows) left out\n", skipped)
		}
		if _, err := r.WriteTo(e.stdout); err != nil {
			return err
		}
	}
	return th.check(r, e.stderr)
}

// floatFlag defines a float flag whose default, NaN, means unset.
func floatFlag(fs *flag.FlagSet, dst *float64, name, usage string) {
	*dst = math.NaN()
	fs.Func(name, usage, func(s string) error {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsNaN(v) {
			return fmt.Errorf("want a number, got %q", s)
		}
		*dst = v
		return nil
	})
}

// check returns an error wrapping errThreshold naming every bar not met.
func (th thresholds) check(r *validate.Report, w io.Writer) error {
	var failed []string
	low := func(name string, v, min float64, flag string) {
		if !math.IsNaN(min) && v < min {
			failed = append(failed, fmt.Sprintf("%s %.4f < %g (%s)", name, v, min, flag))
		}
	}
	low("ARI", r.ARI, th.minARI, "-min-ari")
	low("NMI", r.NMI, th.minNMI, "-min-nmi")
	low("AMI", r.AMI, th.minAMI, "-min-ami")
	low("V-measure", r.VMeasure, th.minV, "-min-v")
	low("purity", r.Purity, th.minPurity, "-min-purity")
	low("Fowlkes–Mallows", r.FowlkesMallows, th.minFM, "-min-fm")
	if th.maxCI >= 0 && r.CentroidIndex != nil && *r.CentroidIndex > th.maxCI {
		failed = append(failed, fmt.Sprintf("centroid index %d > %d (-max-ci)", *r.CentroidIndex, th.maxCI))
	}
	if len(failed) > 0 {
		return fmt.Errorf("%w: %s", errThreshold, strings.Join(failed, "; "))
	}
	return nil
}

// readLabellings reads the truth of -in and the found clusters (of -in or
// of the labels file), paired by row order or by id. Rows whose found
// cluster is -1 (bad rows of label -skip) are left out and counted.
func readLabellings(ctx context.Context, in, format, truth, found, labels, labelsFormat, id string) (t, f []int, skipped int, err error) {
	if labels == "" {
		tt, err := readText(ctx, in, format, truth, found)
		if err != nil {
			return nil, nil, 0, err
		}
		return pair(tt[0], tt[1], in, found)
	}
	truthCols := []string{truth}
	foundCols := []string{found}
	if id != "" {
		truthCols = append(truthCols, id)
		foundCols = append(foundCols, id)
	}
	tt, err := readText(ctx, in, format, truthCols...)
	if err != nil {
		return nil, nil, 0, err
	}
	ff, err := readText(ctx, labels, labelsFormat, foundCols...)
	if err != nil {
		return nil, nil, 0, err
	}
	if id == "" {
		if len(tt[0]) != len(ff[0]) {
			return nil, nil, 0, fmt.Errorf("%w: %s has %d rows but %s has %d; join by -id, or label the same file", stream.ErrRow, in, len(tt[0]), labels, len(ff[0]))
		}
		return pair(tt[0], ff[0], labels, found)
	}
	byID := make(map[string]string, len(ff[0]))
	for i, key := range ff[1] {
		if _, dup := byID[key]; dup {
			return nil, nil, 0, fmt.Errorf("%w: %s: row %d: id %q appears twice", stream.ErrRow, labels, i, key)
		}
		byID[key] = ff[0][i]
	}
	joined := make([]string, len(tt[0]))
	for i, key := range tt[1] {
		v, ok := byID[key]
		if !ok {
			return nil, nil, 0, fmt.Errorf("%w: %s: row %d: id %q has no label in %s", stream.ErrRow, in, i, key, labels)
		}
		joined[i] = v
	}
	return pair(tt[0], joined, labels, found)
}

// pair codes the truth texts and parses the found clusters.
func pair(truthText, foundText []string, foundFile, foundCol string) (t, f []int, skipped int, err error) {
	codes := map[string]int{}
	for i, s := range foundText {
		v, err := strconv.Atoi(strings.TrimSpace(s))
		if err != nil || v < -1 {
			return nil, nil, 0, &stream.RowError{Source: foundFile, Row: int64(i), Column: foundCol, Index: -1, Value: s, Err: fmt.Errorf("%w: a cluster is an integer ≥ 0 (or -1 for a bad row)", stream.ErrNotNumber)}
		}
		if v == -1 {
			skipped++
			continue
		}
		c, ok := codes[truthText[i]]
		if !ok {
			c = len(codes)
			codes[truthText[i]] = c
		}
		t = append(t, c)
		f = append(f, v)
	}
	if len(t) == 0 {
		return nil, nil, 0, fmt.Errorf("%w: no labelled rows to score", stream.ErrEmpty)
	}
	return t, f, skipped, nil
}

// readText reads the named columns of a file as text, every row.
func readText(ctx context.Context, path, format string, columns ...string) ([][]string, error) {
	src, err := openFile(path, format, &stream.Options{Columns: []string{}, Keep: columns})
	if err != nil {
		return nil, err
	}
	defer src.Close()
	out := make([][]string, len(columns))
	buf := make([]float64, 4096)
	for {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		n, err := src.Read(buf)
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		for j := range columns {
			kept := src.Kept(j)
			for t := range n {
				if kept[t] == "" {
					return nil, &stream.RowError{Source: path, Row: src.Records()[t], Column: columns[j], Index: -1, Err: fmt.Errorf("%w: empty", stream.ErrMissing)}
				}
			}
			out[j] = append(out[j], kept[:n]...)
		}
	}
	if len(out[0]) == 0 {
		return nil, fmt.Errorf("%w: %s has no data rows", stream.ErrEmpty, path)
	}
	return out, nil
}
