package kbeam

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"fmt"
	"os"

	"github.com/apache/beam/sdks/v2/go/pkg/beam"
	"github.com/apache/beam/sdks/v2/go/pkg/beam/runners/prism"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/seeding"
)

// DefaultMaxPasses is the number of Lloyd passes when Settings.MaxPasses
// is zero, kmeans.DefaultMaxIterations as in memory.
const DefaultMaxPasses = kmeans.DefaultMaxIterations

// MaxUnrolled is the largest number of Lloyd passes Unrolled iteration
// builds into one pipeline; each pass adds three stages.
const MaxUnrolled = 100

// Iteration says how Cluster turns the passes of a clustering into
// pipelines. Beam pipelines are acyclic, so a loop is either driven from
// outside or unrolled.
type Iteration int

const (
	// Driven runs one pipeline per pass from Go: each reads the rows, takes
	// the previous pass's state as a side input and leaves the new state in
	// Settings.WorkDir. It stops at convergence, runs exactly the k-means‖
	// passes the data needs, and is the default.
	Driven Iteration = iota
	// Unrolled builds seeding, MaxPasses Lloyd passes and the labelling
	// into one pipeline, which reads the rows once. Passes after
	// convergence still run but do no work.
	Unrolled
)

// String returns "driven" or "unrolled".
func (it Iteration) String() string {
	switch it {
	case Driven:
		return "driven"
	case Unrolled:
		return "unrolled"
	}
	return fmt.Sprintf("Iteration(%d)", int(it))
}

// Problem says what to cluster on a pipeline.
type Problem struct {
	// Rows adds the reading of the rows to each pipeline (CSV.Read, or
	// any Source).
	Rows Source
	// D is the number of values per row and K the number of clusters.
	D, K int
	// Metric is distance.Euclidean (nil) or distance.Cosine; Manhattan
	// returns an error wrapping kmeans.ErrMetric (see Config).
	Metric distance.Objective
	// Centers, if not nil, holds K×D initial centers (row-major); nil
	// means k-means‖ seeding on the pipeline with the options in Seeding.
	Centers []float64
	// Seeding holds the k-means‖ options (Rounds, Oversampling).
	Seeding seeding.Parallel
	// Features names the D columns in the model document; nil means none.
	Features []string
	// Labels, if not "", is the path of a CSV file to write the labelled
	// rows to (see WriteLabels); LabelID heads its first column ("" means
	// "row").
	Labels, LabelID string
}

// Settings sets the limits and the execution of Cluster. A nil *Settings
// and zero fields mean the documented defaults.
type Settings struct {
	// MaxPasses limits the Lloyd assignment passes, counted as
	// kmeans.Settings.MaxIterations counts them. Zero means
	// DefaultMaxPasses (300) for Driven; Unrolled needs 1 ≤ MaxPasses ≤
	// MaxUnrolled, and zero is an error there. Negative is an error.
	MaxPasses int
	// Seed drives the k-means‖ draws.
	Seed uint64
	// Iteration chooses Driven (default) or Unrolled pipelines.
	Iteration Iteration
	// Execute runs a pipeline; nil means the prism runner in this process,
	// which needs no network. Pass one that calls beam.Run with another
	// runner to run on Flink, Spark or Dataflow.
	Execute func(ctx context.Context, p *beam.Pipeline) error
	// WorkDir is where pipelines leave their state for the next one (a few
	// kilobytes per pass). It must be reachable from the workers and from
	// this program: a local directory for prism, shared storage such as
	// gs://bucket/dir for a cluster. Empty means a new temporary
	// directory, removed at the end.
	WorkDir string
	// Progress, if not nil, is called after every pipeline with what it did.
	Progress func(Progress)
}

// Progress reports one pipeline run by Cluster.
type Progress struct {
	// Stage is "seed", "lloyd" or "label"; Pass counts the passes of the
	// stage so far (for Unrolled, all passes of the one pipeline).
	Stage string
	Pass  int
	// Cost is the cost of the last Lloyd pass, or 0.
	Cost float64
}

// Result is the outcome of Cluster.
type Result struct {
	// Model holds the centers of the last assignment pass, the metric and
	// the feature names; json.Marshal writes the model document. It has no
	// training summary (see the package documentation).
	Model *kmeans.Model
	// Cost is the objective of the last pass (Σ w·loss, as kmeans.Result.Cost),
	// Sizes and Weights the rows and total weight per cluster.
	Cost    float64
	Sizes   []int64
	Weights []float64
	// Rows is the number of rows clustered.
	Rows int64
	// Status is kmeans.Converged when the last pass left every center in
	// place, else kmeans.IterationLimit.
	Status kmeans.Status
	// Passes counts the Lloyd assignment passes, SeedPasses the k-means‖
	// passes (0 for given centers) and Pipelines the pipelines run.
	Passes, SeedPasses, Pipelines int
	// Empty lists the clusters that got no rows in the last pass; they
	// kept their previous center (kmeans.Cluster would have moved them).
	Empty []int
}

// Cluster clusters the rows of p with k-means‖ seeding (unless p.Centers
// is given) and Lloyd passes on Beam pipelines, until a pass leaves every
// center in place or s.MaxPasses passes have run. From the same initial
// centers the result is kmeans.Cluster's with kmeans.Lloyd and the same
// number of passes, up to the order of floating-point sums (blocks merge
// in a fixed tree here, in block order there), as long as no cluster
// loses all its rows; it is bit-identical for any runner parallelism.
//
// Bad input returns an error wrapping kmeans.ErrK, kmeans.ErrMetric,
// kmeans.ErrSettings, kmeans.ErrSeeding, kmeans.ErrSchema or ErrInput
// before any pipeline runs; a failure inside a pipeline (a bad row, a
// runner error) returns an error wrapping ErrPipeline with the runner's
// message.
func Cluster(ctx context.Context, p Problem, s *Settings) (*Result, error) {
	var set Settings
	if s != nil {
		set = *s
	}
	j, err := newJob(ctx, p, set)
	if err != nil {
		return nil, err
	}
	defer j.close()
	if set.Iteration == Unrolled {
		err = j.unrolled()
	} else {
		err = j.driven()
	}
	if err != nil {
		return nil, err
	}
	return j.result()
}

// job is one call of Cluster.
type job struct {
	ctx      context.Context
	p        Problem
	set      Settings
	sp       spec
	space    space
	passes   int
	dir      string
	cleanup  func()
	seed     seedState
	state    State
	pipeline int
}

func newJob(ctx context.Context, p Problem, set Settings) (*job, error) {
	if p.Rows == nil {
		return nil, fmt.Errorf("%w: no Rows source", ErrInput)
	}
	sp, err := Config{K: p.K, D: p.D, Metric: p.Metric, Seed: set.Seed, Seeding: p.Seeding}.spec()
	if err != nil {
		return nil, err
	}
	spc, _ := sp.space()
	j := &job{ctx: ctx, p: p, set: set, sp: sp, space: spc, passes: set.MaxPasses, cleanup: func() {}}
	switch {
	case set.MaxPasses < 0:
		return nil, fmt.Errorf("%w: MaxPasses = %d, want ≥ 0", kmeans.ErrSettings, set.MaxPasses)
	case set.Iteration == Unrolled && (set.MaxPasses < 1 || set.MaxPasses > MaxUnrolled):
		return nil, fmt.Errorf("%w: Unrolled needs 1 ≤ MaxPasses ≤ %d, got %d", kmeans.ErrSettings, MaxUnrolled, set.MaxPasses)
	case set.Iteration != Driven && set.Iteration != Unrolled:
		return nil, fmt.Errorf("%w: unknown %v", kmeans.ErrSettings, set.Iteration)
	case set.MaxPasses == 0:
		j.passes = DefaultMaxPasses
	}
	// Check the schema now rather than after the passes: a model of unit
	// centers takes any metric.
	if p.Features != nil {
		unit := make([]float64, p.K*p.D)
		for r := range p.K {
			unit[r*p.D] = 1
		}
		if _, err := kmeans.NewModel(mat.NewDense(p.K, p.D, unit), spc.metric, nil, p.Features); err != nil {
			return nil, err
		}
	}
	if p.Centers != nil {
		if j.state, err = startState(sp, p.Centers); err != nil {
			return nil, err
		}
	}
	if set.Execute == nil {
		j.set.Execute = func(ctx context.Context, p *beam.Pipeline) error {
			_, err := prism.Execute(ctx, p)
			return err
		}
	}
	dir := set.WorkDir
	if dir == "" {
		d, err := os.MkdirTemp("", "kbeam-")
		if err != nil {
			return nil, err
		}
		dir, j.cleanup = d, func() { os.RemoveAll(d) }
	} else {
		var b [6]byte
		_, _ = rand.Read(b[:])
		dir = joinPath(dir, "kbeam-"+hex.EncodeToString(b[:]))
	}
	j.dir = dir
	return j, nil
}

func (j *job) close() { j.cleanup() }

// run executes one pipeline.
func (j *job) run(p *beam.Pipeline) error {
	j.pipeline++
	if err := j.ctx.Err(); err != nil {
		return err
	}
	if err := j.set.Execute(j.ctx, p); err != nil {
		if cerr := j.ctx.Err(); cerr != nil {
			return cerr
		}
		return fmt.Errorf("%w: %w", ErrPipeline, err)
	}
	return nil
}

func (j *job) progress(stage string, pass int, cost float64) {
	if j.set.Progress != nil {
		j.set.Progress(Progress{Stage: stage, Pass: pass, Cost: cost})
	}
}

func (j *job) readState(path string) (State, error) {
	b, err := readFile(j.ctx, path)
	if err != nil {
		return State{}, noState(err)
	}
	return decodeState(b)
}

func (j *job) readSeed(path string) (seedState, error) {
	b, err := readFile(j.ctx, path)
	if err != nil {
		return seedState{}, noState(err)
	}
	return decodeSeedState(b)
}

// noState is the error for a pipeline that succeeded but left no state:
// no row reached the pass.
func noState(err error) error {
	return fmt.Errorf("%w: the pipeline left no state, so no row reached the pass (is the input empty, or WorkDir not shared with the workers?): %w", stream.ErrEmpty, err)
}

// driven runs one pipeline per pass.
func (j *job) driven() error {
	if j.p.Centers == nil {
		if err := j.drivenSeed(); err != nil {
			return err
		}
	}
	for j.state.Pass < j.passes && !j.state.Converged {
		p, s := beam.NewPipelineWithRoot()
		path := joinPath(j.dir, fmt.Sprintf("lloyd-%04d.state", j.state.Pass+1))
		writeState(s, pass(s, j.sp, j.p.Rows(s), createState(s, j.state)), path)
		if err := j.run(p); err != nil {
			return err
		}
		st, err := j.readState(path)
		if err != nil {
			return err
		}
		j.state = st
		j.progress("lloyd", st.Pass, st.Stats.TotalCost())
	}
	if j.p.Labels != "" {
		p, s := beam.NewPipelineWithRoot()
		j.label(s, j.p.Rows(s), createState(s, j.state))
		if err := j.run(p); err != nil {
			return err
		}
		j.progress("label", 1, 0)
	}
	return nil
}

// drivenSeed runs the k-means‖ passes one pipeline each and reduces the
// candidates here.
func (j *job) drivenSeed() error {
	for !j.seed.Done {
		if len(j.seed.History) > j.sp.rounds()+2+64 {
			return fmt.Errorf("%w: k-means‖ did not finish", kmeans.ErrSeeding) // unreachable: the plan bounds its rounds
		}
		p, s := beam.NewPipelineWithRoot()
		path := joinPath(j.dir, fmt.Sprintf("seed-%04d.state", len(j.seed.History)+1))
		writeSeed(s, seedPass(s, j.sp, j.p.Rows(s), createSeedState(s, j.seed), len(j.seed.History) == 0), path)
		if err := j.run(p); err != nil {
			return err
		}
		st, err := j.readSeed(path)
		if err != nil {
			return err
		}
		j.seed = st
		j.progress("seed", len(st.History), 0)
	}
	pl, err := j.sp.replay(j.seed.History)
	if err != nil {
		return err
	}
	c, err := j.sp.centers(pl)
	if err != nil {
		return err
	}
	j.state = State{Next: c}
	return nil
}

// unrolled runs everything in one pipeline.
func (j *job) unrolled() error {
	p, s := beam.NewPipelineWithRoot()
	rows := j.p.Rows(s)
	var st beam.PCollection
	seedPath := joinPath(j.dir, "seed.state")
	if j.p.Centers == nil {
		ss := beam.PCollection(createSeedState(s.Scope("kbeam.Seed"), seedState{}))
		for i := range j.sp.rounds() + 2 {
			ss = seedPass(s.Scope("kbeam.Seed"), j.sp, rows, ss, i == 0)
		}
		writeSeed(s, ss, seedPath)
		st = beam.ParDo(s.Scope("kbeam.Seed"), &seedCentersFn{Spec: j.sp}, ss)
	} else {
		st = createState(s, j.state)
	}
	ls := s.Scope("kbeam.Lloyd")
	for range j.passes {
		st = pass(ls, j.sp, rows, st)
	}
	path := joinPath(j.dir, "lloyd.state")
	writeState(s, st, path)
	if j.p.Labels != "" {
		j.label(s, rows, st)
	}
	if err := j.run(p); err != nil {
		return err
	}
	if j.p.Centers == nil {
		ss, err := j.readSeed(seedPath)
		if err != nil {
			return err
		}
		j.seed = ss
	}
	final, err := j.readState(path)
	if err != nil {
		return err
	}
	j.state = final
	j.progress("lloyd", final.Pass, final.Stats.TotalCost())
	return nil
}

func (j *job) label(s beam.Scope, rows, st beam.PCollection) {
	id := j.p.LabelID
	if id == "" {
		id = "row"
	}
	l := beam.ParDo(s.Scope("kbeam.Label"), &labelFn{Spec: j.sp}, rows, beam.SideInput{Input: st})
	WriteLabels(s, j.p.Labels, id, l)
}

// result turns the final state into the Result.
func (j *job) result() (*Result, error) {
	st := j.state
	if st.Stats == nil || st.Centers == nil {
		return nil, fmt.Errorf("%w: the pipeline ran no pass", ErrPipeline)
	}
	m, err := kmeans.NewModel(mat.NewDense(j.sp.K, j.sp.D, st.Centers), j.space.metric, nil, j.p.Features)
	if err != nil {
		return nil, err
	}
	r := &Result{
		Model:      m,
		Cost:       st.Stats.TotalCost(),
		Sizes:      append([]int64(nil), st.Stats.Count...),
		Weights:    append([]float64(nil), st.Stats.Weight...),
		Status:     kmeans.IterationLimit,
		Passes:     st.Pass,
		SeedPasses: len(j.seed.History),
		Pipelines:  j.pipeline,
	}
	for _, c := range st.Stats.Count {
		r.Rows += c
	}
	if st.Converged {
		r.Status = kmeans.Converged
	}
	for _, e := range st.Empty {
		r.Empty = append(r.Empty, int(e))
	}
	return r, nil
}
