package kmeans

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sync"

	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/blocks"
	"github.com/centroidlab/centroid/internal/check"
	"github.com/centroidlab/centroid/seeding"
)

// Cluster partitions the rows of p.Data into p.K clusters with the k-means
// method m (nil means an automatic choice) under the limits s (nil means
// defaults).
//
// The driver learns p.Scaler, then for each of s.Restarts restarts seeds
// centers with p.Seeder and alternates m's assignment pass with the metric's
// center update until a pass moves no row (Converged), the cost improves by
// no more than s.Tolerance (CostTolerance), s.MaxIterations passes have run
// (IterationLimit) or ctx is done. Restarts run concurrently; the one with
// the lowest cost wins, ties going to the lowest restart index. The result
// is bit-identical for any s.Workers.
//
// # Cancellation
//
// ctx is checked inside seeding (by a seeding.ContextSeeder such as
// seeding.PlusPlus) and between the row blocks of every pass, so Cluster
// returns within about one block of work after ctx ends. It then returns
// the best result reached so far with Status Canceled, together with
// ctx.Err(): the lowest-cost restart among those that completed at least
// one pass, each taken at its last complete pass (its assignments are the
// nearest of its returned centers). If no pass completed the result is
// nil.
//
// # Errors
//
// Bad input returns a nil result and an error wrapping ErrData, ErrK,
// ErrWeights, ErrMetric, ErrSettings, ErrSeeding or ErrSchema. A cost that
// overflows float64 returns ErrData. A panic inside code the caller
// supplied (Seeder, Metric, Scaler, Method, Settings.Progress) is
// recovered and returned as an error wrapping ErrPanic that names what
// panicked. Cluster never modifies p.Data, p.Weights or p.Scaler.
func Cluster(ctx context.Context, p Problem, s *Settings, m Method) (*Result, error) {
	set, err := s.Resolve()
	if err != nil {
		return nil, err
	}
	if p.K < 1 {
		return nil, fmt.Errorf("%w: K = %d", ErrK, p.K)
	}
	if check.NilPointer(m) {
		return nil, fmt.Errorf("%w: method is a nil %T", ErrSettings, m)
	}
	seeder := p.Seeder
	if seeder == nil {
		seeder = seeding.PlusPlus{}
	}
	if check.NilPointer(seeder) {
		return nil, fmt.Errorf("%w: seeder is a nil %T", ErrSeeding, seeder)
	}
	sp, err := newProblemSpace(p)
	if err != nil {
		return nil, err
	}
	if m == nil {
		m = choose(sp, p.K)
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}

	trials, patience := swapPlan(set, sp, p.K)
	if trials > 0 && set.SwapTrials == 0 && (s == nil || s.Restarts == 0) {
		// The automatic refinement replaces most restarts.
		set.Restarts = DefaultRefinedRestarts
	}
	conc := min(set.Restarts, set.Workers)
	sp.workers = max(1, set.Workers/conc)

	var (
		mu       sync.Mutex // guards best, firstErr, stats, progress calls
		best     *outcome
		firstErr error
		stats    = Stats{RestartIterations: make([]int, set.Restarts), RestartCosts: make([]float64, set.Restarts)}
		wg       sync.WaitGroup
		sem      = make(chan struct{}, conc)
	)
	progress := set.Progress
	if progress != nil {
		progress = func(pg Progress) {
			mu.Lock()
			defer mu.Unlock()
			set.Progress(pg)
		}
	}
	for r := range set.Restarts {
		sem <- struct{}{}
		wg.Go(func() {
			defer func() { <-sem }()
			if ctx.Err() != nil {
				return
			}
			o, err := runRestart(ctx, sp, p.K, r, seeder, m, set, progress)
			mu.Lock()
			defer mu.Unlock()
			if err != nil {
				if firstErr == nil || (errors.Is(firstErr, context.Canceled) && !errors.Is(err, context.Canceled)) {
					firstErr = err
				}
				return
			}
			if o == nil { // cancelled before a pass completed
				return
			}
			stats.Distances += o.distances
			stats.EmptyRepairs += o.repairs
			stats.Passes += o.iterations
			stats.RestartIterations[r] = o.iterations
			stats.RestartCosts[r] = o.cost
			if best == nil || o.cost < best.cost || (o.cost == best.cost && o.restart < best.restart) {
				best = o
			}
		})
	}
	wg.Wait()
	if firstErr != nil && (ctx.Err() == nil || !isStop(firstErr)) {
		return nil, firstErr
	}
	if best == nil {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		return nil, firstErr
	}
	if trials > 0 && ctx.Err() == nil {
		best = refineBest(ctx, sp.WithWorkers(set.Workers), best, p.K, m, set, trials, patience, progress, &stats)
	}
	stats.Method = methodName(m)
	res := sp.result(best, p.K, stats)
	if p.Features != nil {
		m, err := res.Model.WithFeatures(p.Features)
		if err != nil {
			return nil, err // unreachable: checked by NewSpace
		}
		res.Model = m
	}
	if cerr := ctx.Err(); cerr != nil {
		res.Status = Canceled
		return res, cerr
	}
	return res, nil
}

// refineBest runs the random-swap refinement on the winning restart and,
// if a swap was accepted, the method from the refined centers to a fixed
// point; it returns the better of the two outcomes (the unrefined one when
// ctx ends first) and records the work in stats.
func refineBest(ctx context.Context, sp *Space, best *outcome, k int, m Method, set Settings, trials, patience int, progress func(Progress), stats *Stats) *outcome {
	centers, tried, accepted, evals := refine(ctx, sp, best, k, set.Seed, trials, patience)
	stats.SwapTrials, stats.SwapsAccepted = tried, accepted
	stats.Distances += evals
	if centers == nil || ctx.Err() != nil {
		return best
	}
	given := seeding.Given{Centers: mat.NewDense(k, sp.D, centers)}
	o, err := runRestart(ctx, sp, k, set.Restarts, given, m, set, progress)
	if err != nil || o == nil || o.status == Canceled || !(o.cost < best.cost) {
		return best
	}
	stats.Passes += o.iterations
	stats.Distances += o.distances
	stats.Refined = true
	o.restart = best.restart
	o.iterations += best.iterations
	return o
}

// isStop reports whether err says a restart stopped because the context
// ended (not a failure of its own).
func isStop(err error) bool {
	return errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded)
}

// outcome is the end state of one restart.
type outcome struct {
	restart     int
	centers     []float64
	assign      []int
	cost        float64
	clusterCost []float64 // per-cluster share of cost
	iterations  int
	status      Status
	distances   int64
	repairs     int
}

// run is the state of one restart shared with the update step.
type run struct {
	sp        *Space
	k         int
	order     []int
	contrib   []float64
	distances int64
	repairs   int
}

// runRestart runs restart number restart. It returns a nil outcome and no
// error when ctx ended before its first pass completed. A panic in the
// caller's code becomes an error wrapping ErrPanic.
func runRestart(ctx context.Context, sp *Space, k, restart int, seeder seeding.Seeder, m Method, set Settings, progress func(Progress)) (o *outcome, err error) {
	stage := fmt.Sprintf("seeder %T", seeder)
	defer func() {
		if v := recover(); v != nil {
			o, err = nil, panicError(fmt.Sprintf("restart %d: %s", restart, stage), v)
		}
	}()
	d := sp.D
	rnd := rand.New(rand.NewPCG(set.Seed, uint64(restart)))
	centers := mat.NewDense(k, d, nil)
	// A concurrent seeder runs on this restart's goroutines unless told
	// otherwise; its centers do not depend on the number.
	if cs, ok := seeder.(seeding.Concurrent); ok {
		seeder = cs.WithWorkers(sp.Workers())
	}
	if s32, ok := seeder.(seeding.Float32Seeder); ok && sp.X32 != nil {
		data := blas32.General{Rows: sp.N, Cols: d, Stride: d, Data: sp.X32}
		err = s32.SeedFloat32(ctx, centers, data, sp.W, sp.Metric, rnd)
	} else {
		data := mat.NewDense(sp.N, d, sp.rows64())
		if cs, ok := seeder.(seeding.ContextSeeder); ok {
			err = cs.SeedContext(ctx, centers, data, sp.W, sp.Metric, rnd)
		} else {
			err = seeder.Seed(centers, data, sp.W, sp.Metric, rnd)
		}
	}
	if err != nil {
		switch {
		case ctx.Err() != nil && isStop(err):
			return nil, nil
		case errors.Is(err, seeding.ErrK):
			return nil, fmt.Errorf("%w: %w", ErrK, err)
		}
		return nil, fmt.Errorf("%w: %w", ErrSeeding, err)
	}
	cur := centers.RawMatrix().Data
	if err := check.Finite(cur, d, ErrSeeding); err != nil {
		return nil, fmt.Errorf("seeder returned %w", err)
	}
	if sp.invNorm != nil {
		for j := range k {
			c := cur[j*d : (j+1)*d]
			n := norm(c)
			if !(n > 0) {
				return nil, fmt.Errorf("%w: seeder returned a zero center under cosine", ErrSeeding)
			}
			for i := range c {
				c[i] /= n
			}
		}
	}
	// Passes run on a copy of the space that stops between row blocks once
	// ctx ends; the driver's own passes (cost, repair) always complete.
	ps := sp.stoppable(ctx.Done())
	stage = fmt.Sprintf("method %T or metric %T", m, sp.Metric)
	pass, err := m.Start(ps, k)
	if err != nil {
		return nil, err
	}
	r := &run{sp: sp, k: k}
	st := &Step{
		Centers:  cur,
		Assign:   make([]int, sp.N),
		Blocks:   make([]Partial, sp.Blocks()),
		NeedCost: set.Tolerance > 0 || progress != nil,
	}
	for b := range st.Blocks {
		st.Blocks[b] = *NewPartial(k, d)
	}
	for i := range st.Assign {
		st.Assign[i] = -1
	}
	// When ctx can end, the assignments of the last complete pass are kept,
	// because a pass that is cut short has overwritten some of them.
	var kept []int
	if ctx.Done() != nil {
		kept = make([]int, sp.N)
	}
	merged := NewPartial(k, d)
	next := make([]float64, k*d)
	var prevCost float64
	o = &outcome{restart: restart}
	for it := 1; ; it++ {
		st.Iteration = it
		st.Moved.Store(0)
		if kept != nil && it > 1 {
			copy(kept, st.Assign)
		}
		pass.Assign(st)
		if ps.wasCut() {
			if it == 1 {
				return nil, nil
			}
			// Back to the last complete pass: the centers it used and its
			// assignments.
			copy(st.Centers, st.Previous)
			copy(st.Assign, kept)
			o.status = Canceled
			break
		}
		merged.Reset()
		for b := range st.Blocks {
			merged.Merge(&st.Blocks[b])
		}
		moved := int(st.Moved.Load())
		cost := merged.TotalCost()
		if progress != nil {
			stage = "Settings.Progress"
			progress(Progress{Restart: restart, Iteration: it, Cost: cost * sp.wscale, Moved: moved})
			stage = fmt.Sprintf("method %T or metric %T", m, sp.Metric)
		}
		o.iterations = it
		switch {
		case moved == 0:
			o.status = Converged
		case set.Tolerance > 0 && it > 1 && prevCost-cost <= set.Tolerance*cost:
			o.status = CostTolerance
		case it >= set.MaxIterations:
			o.status = IterationLimit
		case ctx.Err() != nil:
			o.status = Canceled
		}
		if o.status != NotTerminated {
			break
		}
		prevCost = cost
		r.update(next, st, merged)
		if st.Previous == nil {
			st.Previous = make([]float64, k*d)
		}
		copy(st.Previous, st.Centers)
		copy(st.Centers, next)
	}
	o.centers = st.Centers
	o.assign = st.Assign
	o.distances = st.Distances.Load() + r.distances
	o.repairs = r.repairs
	o.clusterCost = make([]float64, k)
	o.cost = sp.exactCost(o.centers, o.assign, k, o.clusterCost)
	o.distances += int64(sp.N)
	if math.IsInf(o.cost, 0) || math.IsNaN(o.cost) {
		return nil, fmt.Errorf("%w: the cost %v is not representable in float64 (the data or the weights are too large: rescale them)", ErrData, o.cost)
	}
	return o, nil
}

// panicError turns a recovered panic value into an error wrapping
// ErrPanic that names what panicked.
func panicError(what string, v any) error {
	if p, ok := v.(*blocks.Panic); ok {
		v = p.Value
	}
	if e, ok := v.(error); ok {
		return fmt.Errorf("%w: %s: %w", ErrPanic, what, e)
	}
	return fmt.Errorf("%w: %s: %v", ErrPanic, what, v)
}

// exactCost returns Σ w·loss of every row against its assigned center, in
// the caller's weights (WeightScale), reduced in block order; if perCluster is not nil it receives the cost of
// each cluster. Every Method's result is scored by this one function so
// that equal assignments give equal bits.
func (sp *Space) exactCost(centers []float64, assign []int, k int, perCluster []float64) float64 {
	d := sp.D
	parts := make([][]float64, sp.Blocks())
	sp.Parallel(func(b int) {
		c := make([]float64, k)
		buf := make([]float64, d)
		lo, hi := sp.Block(b)
		for i := lo; i < hi; i++ {
			a := assign[i]
			c[a] += sp.Weight(i) * sp.loss(i, centers[a*d:(a+1)*d], buf)
		}
		parts[b] = c
	})
	total := make([]float64, k)
	for _, c := range parts {
		for j, v := range c {
			total[j] += v
		}
	}
	var sum float64
	for j := range total {
		sum += total[j]
		total[j] *= sp.wscale
	}
	copy(perCluster, total)
	return sum * sp.wscale
}
