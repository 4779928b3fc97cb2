package kmeans

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sync"

	"github.com/centroidlab/centroid/internal/check"
	"github.com/centroidlab/centroid/seeding"
	"gonum.org/v1/gonum/mat"
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
// If ctx is cancelled, Cluster returns the best result reached so far (with
// Status Canceled) together with ctx.Err(); if no pass completed the result
// is nil. Bad input returns a nil result and an error wrapping ErrData, ErrK,
// ErrWeights, ErrMetric, ErrSettings or ErrSeeding. Cluster never modifies
// p.Data, p.Weights or p.Scaler.
func Cluster(ctx context.Context, p Problem, s *Settings, m Method) (*Result, error) {
	set, err := s.Resolve()
	if err != nil {
		return nil, err
	}
	if p.K < 1 {
		return nil, fmt.Errorf("%w: K = %d", ErrK, p.K)
	}
	sp, err := NewSpace(p)
	if err != nil {
		return nil, err
	}
	if m == nil {
		m = choose(sp, p.K)
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}

	conc := min(set.Restarts, set.Workers)
	sp.workers = max(1, set.Workers/conc)
	seeder := p.Seeder
	if seeder == nil {
		seeder = seeding.PlusPlus{}
	}

	var (
		mu       sync.Mutex // guards best, firstErr, progress calls
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
				if firstErr == nil {
					firstErr = err
				}
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
	if firstErr != nil {
		return nil, firstErr
	}
	if best == nil {
		return nil, ctx.Err()
	}
	stats.Method = methodName(m)
	res := sp.result(best, p.K, stats)
	if p.Features != nil {
		m, err := res.Model.WithFeatures(p.Features)
		if err != nil {
			return nil, err // unreachable: checked in prepare
		}
		res.Model = m
	}
	if cerr := ctx.Err(); cerr != nil {
		res.Status = Canceled
		return res, cerr
	}
	return res, nil
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

func runRestart(ctx context.Context, sp *Space, k, restart int, seeder seeding.Seeder, m Method, set Settings, progress func(Progress)) (*outcome, error) {
	d := sp.D
	rnd := rand.New(rand.NewPCG(set.Seed, uint64(restart)))
	centers := mat.NewDense(k, d, nil)
	// A parallel seeder runs on this restart's goroutines unless told
	// otherwise; its centers do not depend on the number.
	if ps, ok := seeder.(seeding.Concurrent); ok {
		seeder = ps.WithWorkers(sp.Workers())
	}
	if err := seeder.Seed(centers, mat.NewDense(sp.N, d, sp.X), sp.W, sp.Metric, rnd); err != nil {
		if errors.Is(err, seeding.ErrK) {
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
			var s float64
			for _, v := range c {
				s += v * v
			}
			if !(s > 0) {
				return nil, fmt.Errorf("%w: seeder returned a zero center under cosine", ErrSeeding)
			}
			s = math.Sqrt(s)
			for i := range c {
				c[i] /= s
			}
		}
	}
	pass, err := m.Start(sp, k)
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
	merged := NewPartial(k, d)
	next := make([]float64, k*d)
	var prevCost float64
	o := &outcome{restart: restart}
	for it := 1; ; it++ {
		st.Iteration = it
		st.Moved.Store(0)
		pass.Assign(st)
		merged.Reset()
		for b := range st.Blocks {
			merged.Merge(&st.Blocks[b])
		}
		moved := int(st.Moved.Load())
		cost := merged.TotalCost()
		if progress != nil {
			progress(Progress{Restart: restart, Iteration: it, Cost: cost, Moved: moved})
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
	return o, nil
}

// exactCost returns Σ w·loss of every row against its assigned center,
// reduced in block order; if perCluster is not nil it receives the cost of
// each cluster. Every Method's result is scored by this one function so
// that equal assignments give equal bits.
func (sp *Space) exactCost(centers []float64, assign []int, k int, perCluster []float64) float64 {
	d := sp.D
	parts := make([][]float64, sp.Blocks())
	sp.Parallel(func(b int) {
		c := make([]float64, k)
		lo, hi := sp.Block(b)
		for i := lo; i < hi; i++ {
			a := assign[i]
			c[a] += sp.Weight(i) * sp.Loss(i, centers[a*d:(a+1)*d])
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
	for _, v := range total {
		sum += v
	}
	copy(perCluster, total)
	return sum
}
