package stream

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
	"github.com/centroidlab/centroid/seeding"
)

// Problem says what to cluster from a stream of rows.
type Problem struct {
	// Source gives the rows. A Reopener allows several passes (exact
	// Lloyd, k-means‖, scalers learned exactly); any other Source is read
	// once (MiniBatch only). Cluster reads it from its first row.
	Source Source
	// K is the number of clusters, at least 1 and at most the number of
	// distinct rows.
	K int
	// Metric is distance.Euclidean (nil) or distance.Cosine. Manhattan's
	// center rule, the coordinate-wise median, is not a function of sums
	// and cannot be merged from blocks: Cluster returns an error wrapping
	// kmeans.ErrMetric (load the rows and use kmeans.Cluster instead).
	Metric distance.Metric
	// Scaler, if not nil, is learned on the rows and applied to every row
	// before clustering, as in kmeans.Cluster. ZScore and MinMax are
	// learned exactly in passes over a reopenable source (bit for bit what
	// Learn gives on the whole data); other scalers, and every scaler on a
	// one-pass source, are learned on a sample (see Settings.SampleRows).
	Scaler scale.Scaler
	// Centers, if not nil, holds K initial centers in the clustering space
	// (after Scaler), as seeding.Given takes them. Nil means k-means‖
	// (seeding.Parallel, options in Seeding) on a reopenable source, and
	// greedy k-means++ on the first SampleRows rows of a one-pass source.
	Centers mat.Matrix
	// Seeding holds the k-means‖ options (Rounds, Oversampling); its
	// Workers is ignored (Settings.Workers is used).
	Seeding seeding.Parallel
	// Features names the columns for the model's schema; nil means the
	// source's Columns (which may be nil: no schema).
	Features []string
}

// Default values used for zero fields of Settings.
const (
	DefaultBlockRows  = 8192
	DefaultSampleRows = 100_000
)

// Settings sets the limits and resources of Cluster. A nil *Settings and
// every zero field mean the documented default.
type Settings struct {
	// MaxPasses limits the passes of exact Lloyd (Exact, and the exact
	// passes after MiniBatch). Zero means kmeans.DefaultMaxIterations
	// (300); negative is an error.
	MaxPasses int
	// Tolerance, if positive, stops exact Lloyd when a pass lowers the
	// cost by no more than this fraction, as kmeans.Settings.Tolerance.
	// Zero means iterate to a fixed point; negative, NaN or ≥ 1 is an
	// error.
	Tolerance float64
	// Seed drives all randomness; every value is a valid fixed seed.
	Seed uint64
	// Workers is the number of goroutines; zero means GOMAXPROCS. Results
	// do not depend on it.
	Workers int
	// BlockRows is the number of rows read at a time. Memory holds two
	// raw blocks and one scaled block (three for Cosine) plus per-row
	// results: about BlockRows·(3d+2)·8 bytes. Zero means
	// DefaultBlockRows (8192); negative is an error.
	BlockRows int
	// SampleRows is the size of the samples kept in memory: the uniform
	// sample a scaler other than ZScore and MinMax learns on, the head of
	// a one-pass source (scaler and k-means++ seeding), and the per-cluster
	// distances behind the training quantiles (SampleRows/K per cluster,
	// at least 64). Zero means DefaultSampleRows (100 000); negative is an
	// error.
	SampleRows int
	// Progress, if not nil, is called after every block and at the end of
	// every pass, from the goroutine that called Cluster.
	Progress func(Progress)
}

func (s *Settings) resolve() (Settings, error) {
	var r Settings
	if s != nil {
		r = *s
	}
	switch {
	case r.MaxPasses < 0:
		return r, fmt.Errorf("%w: MaxPasses = %d", kmeans.ErrSettings, r.MaxPasses)
	case math.IsNaN(r.Tolerance) || r.Tolerance < 0 || r.Tolerance >= 1:
		return r, fmt.Errorf("%w: Tolerance = %v, want 0 ≤ Tolerance < 1", kmeans.ErrSettings, r.Tolerance)
	case r.Workers < 0:
		return r, fmt.Errorf("%w: Workers = %d", kmeans.ErrSettings, r.Workers)
	case r.BlockRows < 0:
		return r, fmt.Errorf("%w: BlockRows = %d", kmeans.ErrSettings, r.BlockRows)
	case r.SampleRows < 0:
		return r, fmt.Errorf("%w: SampleRows = %d", kmeans.ErrSettings, r.SampleRows)
	}
	if r.MaxPasses == 0 {
		r.MaxPasses = kmeans.DefaultMaxIterations
	}
	if r.Workers == 0 {
		r.Workers = runtime.GOMAXPROCS(0)
	}
	if r.BlockRows == 0 {
		r.BlockRows = DefaultBlockRows
	}
	if r.SampleRows == 0 {
		r.SampleRows = DefaultSampleRows
	}
	return r, nil
}

// Stage names what a pass over the source is for.
type Stage string

// Stages of Cluster, in the order they run.
const (
	StageScale     Stage = "scale"     // learning the scaler
	StageCount     Stage = "count"     // counting the rows (given centers, nothing else read them first)
	StageSeed      Stage = "seed"      // k-means‖ rounds
	StageMiniBatch Stage = "minibatch" // mini-batch updates
	StageLloyd     Stage = "lloyd"     // exact Lloyd passes (the last one scores the result)
	StageRepair    Stage = "repair"    // finding rows for empty clusters
)

// Progress reports the work of Cluster.
type Progress struct {
	// Stage is what the current pass is for; Pass counts the passes over
	// the source from 1.
	Stage Stage
	Pass  int
	// Rows is the number of rows read in this pass so far; Total the
	// rows of a pass, or -1 while unknown.
	Rows, Total int64
	// Cost is the cost of the last complete Lloyd pass, the smoothed
	// mini-batch cost, or NaN when there is none yet.
	Cost float64
	// Done is set on the call at the end of a pass.
	Done bool
}

// Result is the outcome of Cluster.
type Result struct {
	// Model holds the centers, the metric, the learned scaler, the feature
	// names and a training summary; encode it with json.Marshal.
	Model *kmeans.Model
	// Cost is Σ loss(x, center) over every row in the clustering space,
	// the objective kmeans.Result.Cost reports. It is exact (Exact true)
	// when a final pass scored every row against the returned centers;
	// after MiniBatch on a one-pass source it is the sum of each row's
	// loss against the centers at the time the row was used.
	Cost  float64
	Exact bool
	// Status says why the last stage stopped: Converged or CostTolerance
	// for exact Lloyd as in kmeans; for MiniBatch without exact passes,
	// CostTolerance when the smoothed cost stopped improving and
	// IterationLimit when the pass or batch limit ended it.
	Status kmeans.Status
	// Rows is the number of rows clustered (per pass) and Rejected the
	// number of bad rows skipped (Options.Skip) in the last pass.
	Rows, Rejected int64
	// Sizes[j] is the number of rows in cluster j in the last pass.
	Sizes []int64
	// Passes counts the passes over the source; Stages splits them by
	// stage.
	Passes int
	Stages map[Stage]int
	// Iterations is the number of exact Lloyd passes (zero for MiniBatch
	// alone); Batches the number of mini-batches.
	Iterations, Batches int
	// EmptyRepairs counts clusters given a new center after losing all
	// their rows, as kmeans.Stats.EmptyRepairs.
	EmptyRepairs int
	// Method, Seeding and Scaling say in words what ran.
	Method, Seeding, Scaling string
}

// Method is how Cluster moves the centers: Exact or MiniBatch.
type Method interface {
	name() string
}

// Exact is Lloyd's algorithm over a reopenable source: every pass streams
// all rows in blocks, assigns each to its nearest center with the kernel
// of kmeans.Lloyd, accumulates kmeans.Partial statistics per fixed block
// and updates the centers by the metric's rule. From the same initial
// centers it gives the centers, assignments, cost and status of
// kmeans.Cluster with kmeans.Lloyd (see the package documentation for the
// exact conditions).
type Exact struct{}

func (Exact) name() string { return "exact Lloyd" }

var (
	_ Method = Exact{}
	_ Method = MiniBatch{}
)

// Cluster clusters the rows of p.Source into p.K clusters with method m
// (nil means Exact on a reopenable source and MiniBatch otherwise) under
// the limits s (nil means defaults), in memory bounded by the block size
// and the samples, whatever the number of rows.
//
// Bad input returns an error: those of the source (a *RowError wrapping
// ErrRow naming the place of a bad row, ErrColumn), ErrEmpty for a source
// without rows, ErrReopen for Exact on a source that cannot be reopened,
// kmeans.ErrK, kmeans.ErrMetric (Manhattan, a zero row under Cosine),
// kmeans.ErrData (a row that a scaler maps to NaN or ±Inf),
// kmeans.ErrSettings, kmeans.ErrSeeding and kmeans.ErrSchema. If ctx ends,
// Cluster stops at the next block and returns ctx.Err() and no result.
func Cluster(ctx context.Context, p Problem, s *Settings, m Method) (*Result, error) {
	set, err := s.resolve()
	if err != nil {
		return nil, err
	}
	if p.Source == nil {
		return nil, fmt.Errorf("%w: nil source", ErrEmpty)
	}
	d := p.Source.Dim()
	if d < 1 {
		return nil, fmt.Errorf("%w: source has %d columns", ErrColumn, d)
	}
	if p.K < 1 {
		return nil, fmt.Errorf("%w: K = %d", kmeans.ErrK, p.K)
	}
	metric := p.Metric
	if metric == nil {
		metric = distance.Euclidean{}
	}
	if err := distance.Check(metric); err != nil {
		return nil, fmt.Errorf("%w: %w", kmeans.ErrMetric, err)
	}
	obj, ok := metric.(distance.Objective)
	if !ok || (obj.Rule() != distance.MeanRule && obj.Rule() != distance.UnitMeanRule) {
		return nil, fmt.Errorf("%w: %s: streaming needs a center rule that merges from sums (Euclidean or Cosine); the median rule of Manhattan does not, so load the rows and use kmeans.Cluster", kmeans.ErrMetric, metric.Name())
	}
	features := p.Features
	if features == nil {
		features = p.Source.Columns()
	}
	if features != nil && len(features) != d {
		return nil, fmt.Errorf("%w: %d feature names for %d columns", kmeans.ErrSchema, len(features), d)
	}
	reopenable := false
	if r, ok := p.Source.(Reopener); ok {
		err := r.Reopen()
		switch {
		case err == nil:
			reopenable = true
		case !errors.Is(err, ErrReopen):
			return nil, err
		}
	}
	if m == nil {
		m = Exact{}
		if !reopenable {
			m = MiniBatch{}
		}
	}
	mb, isMB := m.(MiniBatch)
	if !isMB {
		if _, ok := m.(Exact); !ok {
			return nil, fmt.Errorf("%w: unknown method %T", kmeans.ErrSettings, m)
		}
		if !reopenable {
			return nil, fmt.Errorf("%w: exact Lloyd needs several passes; use MiniBatch for a source read once", ErrReopen)
		}
	} else if mb, err = mb.resolve(); err != nil {
		return nil, err
	}
	j := &job{
		ctx: ctx, p: p, set: set, d: d, k: p.K,
		metric: obj, cosine: obj.Rule() == distance.UnitMeanRule,
		rd:  newReader(p.Source, reopenable, set.BlockRows),
		res: &Result{Stages: map[Stage]int{}, Method: m.name()},
	}
	j.asg = newAssigner(obj, d, set.Workers)
	j.cost = math.NaN()
	var centers []float64
	if isMB && !reopenable {
		centers, err = j.miniBatchOnce(mb)
	} else {
		centers, err = j.multiPass(mb, isMB)
	}
	if err != nil {
		return nil, err
	}
	return j.finish(centers, features)
}

// multiPass runs the stages of a reopenable source: scaler, seeding, then
// mini-batch (if mb) and exact Lloyd.
func (j *job) multiPass(mb MiniBatch, isMB bool) ([]float64, error) {
	wantFirst := j.p.Centers == nil
	if err := j.learnScaler(wantFirst); err != nil {
		return nil, err
	}
	centers, err := j.initialCenters()
	if err != nil {
		return nil, err
	}
	passes := j.set.MaxPasses
	if isMB {
		if centers, err = j.miniBatch(mb, centers); err != nil {
			return nil, err
		}
		passes = min(passes, mb.ExactPasses+1)
	}
	return j.lloyd(centers, passes)
}

// finish builds the model and its training summary.
func (j *job) finish(centers []float64, features []string) (*Result, error) {
	model, err := kmeans.NewModel(mat.NewDense(j.k, j.d, centers), j.metric, j.scaler, features)
	if err != nil {
		return nil, err
	}
	if j.training != nil {
		if model, err = model.WithTraining(j.training); err != nil {
			return nil, err
		}
	}
	j.res.Model = model
	j.res.Passes = j.rd.passes
	j.res.Rejected = j.rd.rejected
	return j.res, nil
}
