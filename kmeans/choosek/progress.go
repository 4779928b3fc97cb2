package choosek

import (
	"context"
	"fmt"
	"sync"
)

// Stage names a part of the work of a sweep at one k.
type Stage int

const (
	// StageClustering is the clustering of the data with k clusters.
	StageClustering Stage = iota
	// StageIndices is the silhouette, Davies–Bouldin, Caliński–Harabasz and
	// Dunn of that clustering.
	StageIndices
	// StageStability is the stability resamples of that clustering.
	StageStability
	// StageGap is the gap statistic's clusterings with k clusters: the
	// reference sets (and the data sample, when the data is sampled).
	StageGap
)

// String returns the stage's name.
func (s Stage) String() string {
	switch s {
	case StageClustering:
		return "clustering"
	case StageIndices:
		return "indices"
	case StageStability:
		return "stability"
	case StageGap:
		return "gap"
	}
	return fmt.Sprintf("Stage(%d)", int(s))
}

// Progress reports a finished piece of a sweep's work (see
// Options.Progress).
type Progress struct {
	// K and Stage say which work the report is about.
	K     int
	Stage Stage
	// Done is the share of that stage's work at K that is finished, in
	// (0, 1]; the last report of a stage at K has Done = 1.
	Done float64
	// Overall is the share of all the sweep's jobs that are finished: one
	// job per clustering of the data, per set of indices, per stability
	// resample and per gap clustering, whatever their size.
	Overall float64
}

// reporter serialises the progress reports of a sweep and counts its
// finished jobs.
type reporter struct {
	mu       sync.Mutex
	ctx      context.Context
	fn       func(Progress)
	total    int
	finished int
	done     map[stageAt]int // finished jobs per stage and k
	size     map[stageAt]int // jobs per stage and k
}

type stageAt struct {
	stage Stage
	k     int
}

func newReporter(ctx context.Context, fn func(Progress)) *reporter {
	return &reporter{ctx: ctx, fn: fn, done: map[stageAt]int{}, size: map[stageAt]int{}}
}

// plan announces jobs jobs of the stage at k.
func (r *reporter) plan(k int, s Stage, jobs int) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.size[stageAt{s, k}] += jobs
	r.total += jobs
}

// finish records one finished job of the stage at k and reports it, unless
// ctx is done.
func (r *reporter) finish(k int, s Stage) {
	r.mu.Lock()
	defer r.mu.Unlock()
	at := stageAt{s, k}
	r.done[at]++
	r.finished++
	if r.fn == nil || r.ctx.Err() != nil {
		return
	}
	r.fn(Progress{K: k, Stage: s, Done: float64(r.done[at]) / float64(r.size[at]), Overall: float64(r.finished) / float64(r.total)})
}

// begin is called before a job of the stage at k starts: it returns
// ctx.Err() if ctx is done, so that no job starts after cancellation. It
// holds the same lock as the progress reports, so a job either starts
// before a report that cancels ctx or not at all.
func (r *reporter) begin(ctx context.Context, k int, s Stage) error {
	r.mu.Lock()
	defer r.mu.Unlock()
	if err := ctx.Err(); err != nil {
		return err
	}
	if testHookStart != nil {
		testHookStart(k, s)
	}
	return nil
}

// testHookStart, if not nil, is called when a job of a sweep starts. Tests
// use it to check that no job starts after cancellation.
var testHookStart func(k int, s Stage)

// pool runs the jobs of a sweep on a fixed number of goroutines. A job may
// add further jobs; wait returns when all have finished or one failed. The
// first error cancels the pool's context, and jobs not yet started are
// dropped. Results never depend on the order jobs run in: every job owns
// its output and draws its randomness from its own seed.
type pool struct {
	ctx    context.Context
	cancel context.CancelFunc
	begin  func(ctx context.Context, k int, s Stage) error
	mu     sync.Mutex
	cond   *sync.Cond
	queue  []poolJob
	active int // jobs queued or running
	err    error
}

type poolJob struct {
	k   int
	s   Stage
	run func(ctx context.Context) error
}

func newPool(ctx context.Context, begin func(ctx context.Context, k int, s Stage) error) *pool {
	p := &pool{begin: begin}
	p.ctx, p.cancel = context.WithCancel(ctx)
	p.cond = sync.NewCond(&p.mu)
	return p
}

// start starts the goroutines; call it after adding the first jobs.
func (p *pool) start(workers int) {
	for range workers {
		go p.work()
	}
}

// add queues a job; jobs run in the order they were added.
func (p *pool) add(k int, s Stage, run func(ctx context.Context) error) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.queue = append(p.queue, poolJob{k, s, run})
	p.active++
	p.cond.Signal()
}

func (p *pool) work() {
	p.mu.Lock()
	defer p.mu.Unlock()
	for {
		for len(p.queue) == 0 && p.active > 0 {
			p.cond.Wait()
		}
		if p.active == 0 {
			p.cond.Broadcast()
			return
		}
		j := p.queue[0]
		p.queue = p.queue[1:]
		p.mu.Unlock()
		err := p.begin(p.ctx, j.k, j.s)
		if err == nil {
			err = j.run(p.ctx)
		}
		p.mu.Lock()
		if err != nil && p.err == nil {
			p.err = err
			p.cancel()
		}
		p.active--
		p.cond.Broadcast()
	}
}

// wait blocks until every job has finished and returns the first error.
// The pool's goroutines end with it.
func (p *pool) wait() error {
	p.mu.Lock()
	defer p.mu.Unlock()
	for p.active > 0 {
		p.cond.Wait()
	}
	p.cond.Broadcast()
	p.cancel()
	return p.err
}
