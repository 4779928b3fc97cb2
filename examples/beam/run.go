package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"strings"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/io/filesystem"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/examples/beam/kbeam"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/seeding"
)

// errUsage means the flags do not describe a job.
var errUsage = errors.New("usage")

// options are the command's own flags.
type options struct {
	in, columns, metric, iterate, model, labels, id, workdir string
	k, passes, rounds, blockRows                             int
	seed                                                     uint64
	skip                                                     bool
	execute                                                  func(context.Context, *beam.Pipeline) error
}

func (o *options) register(fs *flag.FlagSet) {
	fs.StringVar(&o.in, "in", "", "CSV `files` with a header line (a glob, on any Beam filesystem)")
	fs.StringVar(&o.columns, "columns", "", "comma-separated `columns` to cluster on (default: every column)")
	fs.IntVar(&o.k, "k", 0, "number of clusters")
	fs.IntVar(&o.passes, "passes", 0, "largest number of Lloyd passes (0: 300 when driven; unrolled needs 1 to 100)")
	fs.Uint64Var(&o.seed, "seed", 1, "seed of the k-means‖ draws")
	fs.StringVar(&o.metric, "metric", "euclidean", "euclidean or cosine")
	fs.IntVar(&o.rounds, "rounds", 0, "k-means‖ sampling rounds (0: 5)")
	fs.StringVar(&o.iterate, "iterate", "driven", "driven (one pipeline per pass) or unrolled (one pipeline)")
	fs.StringVar(&o.model, "model", "", "`path` of the model document to write")
	fs.StringVar(&o.labels, "labels-out", "", "`path` of a CSV file for the labelled rows (optional)")
	fs.StringVar(&o.id, "label-by", "", "`column` naming the labelled rows (default: the row index)")
	fs.BoolVar(&o.skip, "skip", false, "skip bad rows instead of failing")
	fs.IntVar(&o.blockRows, "block-rows", kbeam.DefaultBlockRows, "rows per pipeline element")
	fs.StringVar(&o.workdir, "workdir", "", "`directory` for the state between pipelines, reachable by the workers (default: a temporary directory)")
}

// run clusters the input the options name and writes the outputs.
func run(ctx context.Context, o *options, out io.Writer) error {
	if o.in == "" || o.model == "" || o.k < 1 {
		return fmt.Errorf("%w: -in, -model and -k ≥ 1 are required", errUsage)
	}
	var metric distance.Objective
	switch o.metric {
	case "euclidean":
		metric = distance.Euclidean{}
	case "cosine":
		metric = distance.Cosine{}
	default:
		return fmt.Errorf("%w: -metric %q: the pipeline supports euclidean and cosine (manhattan's median center rule cannot be merged from sums)", kmeans.ErrMetric, o.metric)
	}
	var it kbeam.Iteration
	switch o.iterate {
	case "driven":
		it = kbeam.Driven
	case "unrolled":
		it = kbeam.Unrolled
	default:
		return fmt.Errorf("%w: -iterate %q, want driven or unrolled", errUsage, o.iterate)
	}
	var columns []string
	if o.columns != "" {
		columns = strings.Split(o.columns, ",")
	}
	in, err := kbeam.OpenCSV(ctx, o.in, &kbeam.CSVOptions{Columns: columns, Keep: o.id, Skip: o.skip, BlockRows: o.blockRows})
	if err != nil {
		return err
	}
	id := o.id
	if id == "" {
		id = "row"
	}
	res, err := kbeam.Cluster(ctx, kbeam.Problem{
		Rows:     in.Source(),
		D:        in.Dim(),
		K:        o.k,
		Metric:   metric,
		Seeding:  seeding.Parallel{Rounds: o.rounds},
		Features: in.Columns(),
		Labels:   o.labels,
		LabelID:  id,
	}, &kbeam.Settings{MaxPasses: o.passes, Seed: o.seed, Iteration: it, Execute: o.execute, WorkDir: o.workdir})
	if err != nil {
		return err
	}
	doc, err := json.Marshal(res.Model)
	if err != nil {
		return err
	}
	if err := writeFile(ctx, o.model, doc); err != nil {
		return err
	}
	fmt.Fprintf(out, "%d rows from %d file(s), %d columns, k = %d (%s)\n", res.Rows, len(in.Files()), in.Dim(), o.k, o.metric)
	fmt.Fprintf(out, "k-means‖: %d passes; Lloyd: %d passes, %s; %d pipelines (%s)\n", res.SeedPasses, res.Passes, res.Status, res.Pipelines, it)
	fmt.Fprintf(out, "cost %.6g; sizes %v\n", res.Cost, res.Sizes)
	if len(res.Empty) > 0 {
		fmt.Fprintf(out, "clusters without rows in the last pass (kept their center): %v\n", res.Empty)
	}
	fmt.Fprintf(out, "model: %s\n", o.model)
	if o.labels != "" {
		fmt.Fprintf(out, "labelled rows: %s\n", o.labels)
	}
	return nil
}

func writeFile(ctx context.Context, path string, b []byte) error {
	fs, err := filesystem.New(ctx, path)
	if err != nil {
		return err
	}
	defer fs.Close()
	return filesystem.Write(ctx, fs, path, b)
}
