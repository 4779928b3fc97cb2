package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"math/rand/v2"
	"os"
	"runtime/debug"
	"strings"
	"time"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/scale"
)

// clusterOptions are the flags of the cluster verb.
type clusterOptions struct {
	in, format  string
	columns     list
	k           kRange
	seed        uint64
	model       string
	memory      size
	method      string
	scaler      string
	metric      string
	skip        bool
	workers     int
	restarts    int
	sample      int
	batch       int
	exactPasses int
	maxPasses   int
}

func clusterFlags(e *env) (*clusterOptions, *flag.FlagSet) {
	o := &clusterOptions{memory: 256 << 20, method: "auto", scaler: "none", metric: "euclidean", sample: 4000, exactPasses: -1, k: kRange{0, 0}}
	fs := newFlags("cluster", "-in FILE -columns A,B,... -k K -seed S -model MODEL.json [flags]", e.stderr)
	fs.StringVar(&o.in, "in", "", "input file, CSV with a header or Parquet (required)")
	fs.StringVar(&o.format, "format", "", "input format: csv, tsv or parquet (default: from the extension)")
	fs.Var(&o.columns, "columns", "columns to cluster on, by name, comma-separated (default: every column)")
	fs.Var(&o.k, "k", "number of clusters, or a range such as 2..8 to choose one by a sweep on a sample (required)")
	fs.Uint64Var(&o.seed, "seed", 0, "seed of every random choice; the same seed gives the same model")
	fs.StringVar(&o.model, "model", "", "model file to write, JSON (required)")
	fs.Var(&o.memory, "memory", "memory budget, such as 16MiB or 2GiB; data that does not fit is streamed")
	fs.StringVar(&o.method, "method", o.method, "exact (Lloyd), minibatch, or auto: exact in memory when the data fits, else mini-batch with one exact pass")
	fs.StringVar(&o.scaler, "scaler", o.scaler, "feature scaling: none, zscore, minmax or median-iqr")
	fs.StringVar(&o.metric, "metric", o.metric, "euclidean or cosine")
	fs.BoolVar(&o.skip, "skip", false, "skip bad rows and count them instead of stopping at the first")
	fs.IntVar(&o.workers, "workers", 0, "goroutines (default: all cores); results do not depend on it")
	fs.IntVar(&o.restarts, "restarts", 0, "restarts when the data fits in memory (default 10)")
	fs.IntVar(&o.sample, "sample", o.sample, "rows sampled for the sweep of a k range")
	fs.IntVar(&o.batch, "batch", 0, "rows per mini-batch (default 1024)")
	fs.IntVar(&o.exactPasses, "exact-passes", o.exactPasses, "exact Lloyd passes after mini-batch (default: 1 for auto, 0 for minibatch)")
	fs.IntVar(&o.maxPasses, "max-passes", 0, "most exact Lloyd passes (default 300)")
	return o, fs
}

func clusterVerb(ctx context.Context, args []string, e *env) error {
	o, fs := clusterFlags(e)
	if err := parse(fs, args); err != nil {
		return err
	}
	switch {
	case o.in == "":
		return fmt.Errorf("%w: -in is required", errUsage)
	case o.model == "":
		return fmt.Errorf("%w: -model is required", errUsage)
	case o.k.lo == 0:
		return fmt.Errorf("%w: -k is required", errUsage)
	case o.method != "auto" && o.method != "exact" && o.method != "minibatch":
		return fmt.Errorf("%w: -method %q, want exact, minibatch or auto", errUsage, o.method)
	}
	sc, err := scalerOf(o.scaler)
	if err != nil {
		return err
	}
	metric, err := metricOf(o.metric)
	if err != nil {
		return err
	}
	log := slog.New(slog.NewTextHandler(e.stderr, nil))
	limitMemory(int64(o.memory), log)
	src, err := openFile(o.in, o.format, &stream.Options{Columns: o.columns, Skip: o.skip, OnSkip: skipLogger(log)})
	if err != nil {
		return err
	}
	defer src.Close()
	d := src.Dim()
	bud := budgetFor(int64(o.memory), d, o.k.hi)
	k := o.k.lo
	if o.k.hi > o.k.lo {
		if k, err = sweepOnSample(ctx, e, src, o, sc, bud); err != nil {
			return err
		}
		if err := src.Reopen(); err != nil {
			return err
		}
	}
	start := time.Now()
	var sum summary
	if o.method != "minibatch" {
		X, err := loadRows(src, bud.memoryRows)
		switch {
		case err == nil:
			sum, err = clusterInMemory(ctx, X, k, sc, metric, src, o)
			if err != nil {
				return err
			}
		case errors.Is(err, errTooBig):
			log.Info("data does not fit the memory budget; streaming", "memory", formatSize(int64(o.memory)), "rows_read", bud.memoryRows)
			if err := src.Reopen(); err != nil {
				return err
			}
		default:
			return err
		}
	}
	if sum.model == nil {
		rep := newReporter(e, log)
		defer rep.stop()
		sum, err = clusterStream(ctx, src, k, sc, metric, o, bud, rep.progress)
		if err != nil {
			return err
		}
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	doc, err := json.Marshal(sum.model)
	if err != nil {
		return err
	}
	if err := writeAtomic(o.model, func(w io.Writer) error {
		_, err := w.Write(append(doc, '\n'))
		return err
	}); err != nil {
		return err
	}
	sum.file, sum.source, sum.elapsed = o.model, o.in, time.Since(start)
	sum.print(e.stdout)
	return nil
}

// summary is what the cluster verb reports.
type summary struct {
	model          *kmeans.Model
	method, where  string
	rows, rejected int64
	passes         int
	cost           float64
	exact          bool
	sizes          []int64
	status         kmeans.Status
	seeding        string
	scaling        string
	file, source   string
	elapsed        time.Duration
}

func (s summary) print(w io.Writer) {
	fmt.Fprintf(w, "clustered %d rows of %s into %d clusters\n", s.rows, s.source, len(s.sizes))
	fmt.Fprintf(w, "  bad rows skipped: %d\n", s.rejected)
	fmt.Fprintf(w, "  method: %s (%s)\n", s.method, s.where)
	if s.seeding != "" {
		fmt.Fprintf(w, "  seeding: %s\n", s.seeding)
	}
	if s.scaling != "" {
		fmt.Fprintf(w, "  scaling: %s\n", s.scaling)
	}
	fmt.Fprintf(w, "  passes over the data: %d\n", s.passes)
	fmt.Fprintf(w, "  status: %s\n", s.status)
	kind := "exact"
	if !s.exact {
		kind = "estimated as the rows were used"
	}
	fmt.Fprintf(w, "  cost: %.6g (%s, in the scaled space)\n", s.cost, kind)
	sizes := make([]string, len(s.sizes))
	for j, v := range s.sizes {
		sizes[j] = fmt.Sprint(v)
	}
	fmt.Fprintf(w, "  sizes: %s\n", strings.Join(sizes, " "))
	fmt.Fprintf(w, "  time: %s\n", s.elapsed.Round(time.Millisecond))
	fmt.Fprintf(w, "model written to %s\n", s.file)
}

func clusterInMemory(ctx context.Context, X *mat.Dense, k int, sc scale.Scaler, m distance.Metric, src fileSource, o *clusterOptions) (summary, error) {
	res, err := kmeans.Cluster(ctx, kmeans.Problem{Data: X, K: k, Scaler: sc, Metric: m, Features: src.Columns()},
		&kmeans.Settings{Seed: o.seed, Workers: o.workers, Restarts: o.restarts, MaxIterations: o.maxPasses}, nil)
	if err != nil {
		return summary{}, err
	}
	n, _ := X.Dims()
	s := summary{model: res.Model, method: "exact " + res.Stats.Method, where: "in memory, " + fmt.Sprint(len(res.Stats.RestartCosts)) + " restarts",
		rows: int64(n), rejected: src.Rejected(), passes: 1, cost: res.Cost, exact: true, status: res.Status}
	for _, v := range res.Sizes {
		s.sizes = append(s.sizes, int64(v))
	}
	return s, nil
}

func clusterStream(ctx context.Context, src fileSource, k int, sc scale.Scaler, metric distance.Metric, o *clusterOptions, bud budget, progress func(stream.Progress)) (summary, error) {
	set := &stream.Settings{Seed: o.seed, Workers: o.workers, MaxPasses: o.maxPasses, BlockRows: bud.blockRows, SampleRows: bud.sampleRows, Progress: progress}
	var m stream.Method = stream.Exact{}
	if o.method != "exact" {
		mb := stream.MiniBatch{BatchSize: o.batch, BufferRows: bud.bufferRows, ExactPasses: o.exactPasses}
		if mb.ExactPasses < 0 {
			mb.ExactPasses = 0
			if o.method == "auto" {
				mb.ExactPasses = 1
			}
		}
		m = mb
	}
	res, err := stream.Cluster(ctx, stream.Problem{Source: src, K: k, Scaler: sc, Metric: metric}, set, m)
	if err != nil {
		return summary{}, err
	}
	return summary{model: res.Model, method: res.Method, where: "streamed", rows: res.Rows, rejected: res.Rejected, passes: res.Passes,
		cost: res.Cost, exact: res.Exact, sizes: res.Sizes, status: res.Status, seeding: res.Seeding, scaling: res.Scaling}, nil
}

// budget splits the memory budget between the parts that grow with it.
type budget struct {
	memoryRows int64 // largest number of rows clustered in memory
	blockRows  int   // rows per streamed block
	sampleRows int   // rows of the samples (scalers, sweep, quantiles)
	bufferRows int   // mini-batch shuffle buffer
}

// Memory the command needs whatever the budget: the Go runtime, the
// binary's pages and the parsers. Measured on linux/amd64: "batch cluster
// -h" peaks at about 11 MiB RSS and the smallest streamed run at about
// 17 MiB; fixedRSS keeps a margin over that. nonHeapRSS is the part of it
// that the runtime's memory limit does not cover (binary text and data).
const (
	fixedRSS   = 20 << 20
	nonHeapRSS = 8 << 20
)

// budgetFor plans memory within mem: fixedRSS for the command itself
// (below it, a quarter of mem is planned and the budget cannot be met); of
// the rest, in memory, 2·8·(2d+8) bytes per row (the rows, their scaled
// copy, assignments and per-row scratch, twice for the garbage collector's
// headroom); streaming, a sixteenth each for the blocks, the samples and
// the shuffle buffer.
func budgetFor(mem int64, d, k int) budget {
	avail := max(mem-fixedRSS, mem/4)
	b := budget{memoryRows: avail / int64(2*8*(2*d+8))}
	b.blockRows = int(clamp(avail/16/int64(8*(4*d+2)), 256, 1<<16))
	b.sampleRows = int(clamp(avail/16/int64(8*d+40), 1000, stream.DefaultSampleRows))
	b.bufferRows = int(clamp(avail/16/int64(8*d+16), 1024, 1<<16))
	return b
}

func clamp(v, lo, hi int64) int64 { return max(lo, min(hi, v)) }

// limitMemory sets the Go runtime's soft memory limit to the budget less
// the memory it does not manage, unless GOMEMLIMIT already sets one, and
// warns when the budget is below what the command needs anyway.
func limitMemory(mem int64, log *slog.Logger) {
	if mem < fixedRSS {
		log.Warn("memory budget below the command's own needs; peak memory will exceed it", "memory", formatSize(mem), "needs", formatSize(fixedRSS))
	}
	if os.Getenv("GOMEMLIMIT") == "" {
		debug.SetMemoryLimit(max(mem-nonHeapRSS, 8<<20))
	}
}

func scalerOf(name string) (scale.Scaler, error) {
	switch name {
	case "none", "":
		return nil, nil
	case "zscore":
		return scale.ZScore{}, nil
	case "minmax":
		return scale.MinMax{}, nil
	case "median-iqr":
		return scale.MedianIQR{}, nil
	}
	return nil, fmt.Errorf("%w: -scaler %q, want none, zscore, minmax or median-iqr", errUsage, name)
}

func metricOf(name string) (distance.Metric, error) {
	switch name {
	case "euclidean", "":
		return distance.Euclidean{}, nil
	case "cosine":
		return distance.Cosine{}, nil
	}
	return nil, fmt.Errorf("%w: -metric %q, want euclidean or cosine", errUsage, name)
}

// skipLogger logs the first skipped rows and then every 1000th.
func skipLogger(log *slog.Logger) func(*stream.RowError) {
	n := 0
	return func(e *stream.RowError) {
		n++
		if n <= 10 || n%1000 == 0 {
			log.Warn("bad row skipped", "n", n, "error", e.Error())
		}
	}
}

// sweepOnSample draws a uniform sample of the rows (reservoir sampling
// from the seed), runs the sweep over the k range on it, prints the
// report and returns the recommended k.
func sweepOnSample(ctx context.Context, e *env, src fileSource, o *clusterOptions, sc scale.Scaler, bud budget) (int, error) {
	d := src.Dim()
	m := max(o.k.hi+1, min(o.sample, bud.sampleRows))
	rnd := rand.New(rand.NewPCG(o.seed, 0x737765))
	sample := make([]float64, 0, m*d)
	buf := make([]float64, 4096*d)
	var seen int64
	for {
		n, err := src.Read(buf)
		if err == io.EOF {
			break
		}
		if err != nil {
			return 0, err
		}
		for t := range n {
			row := buf[t*d : (t+1)*d]
			seen++
			if len(sample) < m*d {
				sample = append(sample, row...)
			} else if r := rnd.Int64N(seen); r < int64(m) {
				copy(sample[r*int64(d):], row)
			}
		}
	}
	if len(sample) == 0 {
		return 0, fmt.Errorf("%w: %s has no data rows", stream.ErrEmpty, o.in)
	}
	X := mat.NewDense(len(sample)/d, d, sample)
	ks := make([]int, 0, o.k.hi-o.k.lo+1)
	for k := o.k.lo; k <= o.k.hi; k++ {
		ks = append(ks, k)
	}
	k, report, err := sweep(ctx, X, src.Columns(), sc, ks, o.seed)
	if err != nil {
		return 0, err
	}
	fmt.Fprintf(e.stdout, "sweep of k = %d..%d on a sample of %d of %d rows\n", o.k.lo, o.k.hi, len(sample)/d, seen)
	if _, err := report.WriteTo(e.stdout); err != nil {
		return 0, err
	}
	fmt.Fprintf(e.stdout, "clustering with k = %d\n", k)
	return k, nil
}
