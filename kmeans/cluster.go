package kmeans

import (
	"context"
	"errors"
	"fmt"
	"github.com/centroidlab/centroid/internal/rowset"
	"math"
	"math/rand/v2"
	"sync"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/scale"
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
	set, err := s.resolved()
	if err != nil {
		return nil, err
	}
	pr, err := prepare(p)
	if err != nil {
		return nil, err
	}
	if m == nil {
		m = choose(pr.sp, p.K)
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}

	conc := min(set.Restarts, set.Workers)
	pr.sp.workers = max(1, set.Workers/conc)
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
			o, err := runRestart(ctx, pr, p.K, r, seeder, m, set, progress)
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
	res := pr.result(best, p.K, stats)
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

// prepared is a validated problem with its clustering space.
type prepared struct {
	sp     *Space
	metric distance.Objective
	scaler scale.Scaler // learned, or nil
}

func prepare(p Problem) (*prepared, error) {
	if p.Data == nil {
		return nil, fmt.Errorf("%w: nil matrix", ErrData)
	}
	n, d := p.Data.Dims()
	if n == 0 || d == 0 {
		return nil, fmt.Errorf("%w: %d×%d matrix", ErrData, n, d)
	}
	if p.K < 1 || p.K > n {
		return nil, fmt.Errorf("%w: K = %d with %d rows", ErrK, p.K, n)
	}
	metric := p.Metric
	if metric == nil {
		metric = distance.Euclidean{}
	}
	if err := distance.Check(metric); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrMetric, err)
	}
	obj, ok := metric.(distance.Objective)
	if !ok {
		return nil, fmt.Errorf("%w: %s has no k-means center rule (use Euclidean, Manhattan or Cosine)", ErrMetric, metric.Name())
	}
	if p.Features != nil {
		if _, err := checkFeatures(p.Features, d); err != nil {
			return nil, err
		}
	}
	if err := checkWeights(p.Weights, n); err != nil {
		return nil, err
	}
	x, err := rows(p.Data)
	if err != nil {
		return nil, err
	}
	pr := &prepared{metric: obj}
	if p.Scaler != nil {
		learned, err := p.Scaler.Learn(p.Data, p.Weights)
		if err != nil {
			return nil, fmt.Errorf("%w: scaler: %w", ErrData, err)
		}
		if learned.Dim() != d {
			return nil, fmt.Errorf("%w: scaler learned %d columns, data has %d", ErrData, learned.Dim(), d)
		}
		scaled := make([]float64, n*d)
		for i := range n {
			learned.Apply(scaled[i*d:(i+1)*d], x[i*d:(i+1)*d])
		}
		if err := checkFinite(scaled, d); err != nil {
			return nil, fmt.Errorf("%w after scaling", err)
		}
		x = scaled
		pr.scaler = learned
	}
	if rc, ok := metric.(distance.RowChecker); ok {
		for i := range n {
			if err := rc.CheckRow(x[i*d : (i+1)*d]); err != nil {
				return nil, fmt.Errorf("%w: row %d: %w", ErrMetric, i, err)
			}
		}
	}
	if distinct := countDistinct(x, n, d, p.Weights, p.K); distinct < p.K {
		return nil, fmt.Errorf("%w: K = %d but only %d distinct rows with positive weight", ErrK, p.K, distinct)
	}
	pr.sp = newSpace(x, n, d, p.Weights, obj, 1)
	return pr, nil
}

// rows returns the data row-major without copying when possible, after
// checking every value is finite.
func rows(a mat.Matrix) ([]float64, error) {
	n, d := a.Dims()
	var x []float64
	if rm, ok := a.(mat.RawMatrixer); ok {
		raw := rm.RawMatrix()
		if raw.Stride == d {
			x = raw.Data[:n*d]
		} else {
			x = make([]float64, n*d)
			for i := range n {
				copy(x[i*d:(i+1)*d], raw.Data[i*raw.Stride:i*raw.Stride+d])
			}
		}
	} else {
		x = make([]float64, n*d)
		for i := range n {
			for j := range d {
				x[i*d+j] = a.At(i, j)
			}
		}
	}
	return x, checkFinite(x, d)
}

func checkFinite(x []float64, d int) error {
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%w: row %d column %d is %v", ErrData, i/d, i%d, v)
		}
	}
	return nil
}

func checkWeights(w []float64, n int) error {
	if w == nil {
		return nil
	}
	if len(w) != n {
		return fmt.Errorf("%w: %d weights for %d rows", ErrWeights, len(w), n)
	}
	var sum float64
	for i, v := range w {
		if !(v >= 0) || math.IsInf(v, 1) {
			return fmt.Errorf("%w: weight %d is %v", ErrWeights, i, v)
		}
		sum += v
	}
	if !(sum > 0) || math.IsInf(sum, 1) {
		return fmt.Errorf("%w: weights sum to %v", ErrWeights, sum)
	}
	return nil
}

// countDistinct counts distinct rows of positive weight, stopping at limit.
func countDistinct(x []float64, n, d int, w []float64, limit int) int {
	set := rowset.New(limit)
	for i := 0; i < n && set.Len() < limit; i++ {
		if w == nil || w[i] > 0 {
			set.Add(x[i*d : (i+1)*d])
		}
	}
	return set.Len()
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

func runRestart(ctx context.Context, pr *prepared, k, restart int, seeder seeding.Seeder, m Method, set Settings, progress func(Progress)) (*outcome, error) {
	sp := pr.sp
	d := sp.D
	rnd := rand.New(rand.NewPCG(set.Seed, uint64(restart)))
	centers := mat.NewDense(k, d, nil)
	// k-means++ runs on this restart's goroutines unless told otherwise;
	// its centers do not depend on the number.
	switch pp := seeder.(type) {
	case seeding.PlusPlus:
		if pp.Workers == 0 {
			pp.Workers = sp.Workers()
			seeder = pp
		}
	case *seeding.PlusPlus:
		if pp != nil && pp.Workers == 0 {
			c := *pp
			c.Workers = sp.Workers()
			seeder = c
		}
	}
	if err := seeder.Seed(centers, mat.NewDense(sp.N, d, sp.X), sp.W, pr.metric, rnd); err != nil {
		if errors.Is(err, seeding.ErrK) {
			return nil, fmt.Errorf("%w: %w", ErrK, err)
		}
		return nil, fmt.Errorf("%w: %w", ErrSeeding, err)
	}
	cur := centers.RawMatrix().Data
	if err := checkFinite(cur, d); err != nil {
		return nil, fmt.Errorf("%w: seeder returned %w", ErrSeeding, err)
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
	o.cost = pr.exactCost(o.centers, o.assign, k, o.clusterCost)
	o.distances += int64(sp.N)
	return o, nil
}

// exactCost returns Σ w·loss of every row against its assigned center,
// reduced in block order; if perCluster is not nil it receives the cost of
// each cluster. Every Method's result is scored by this one function so
// that equal assignments give equal bits.
func (pr *prepared) exactCost(centers []float64, assign []int, k int, perCluster []float64) float64 {
	sp := pr.sp
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
