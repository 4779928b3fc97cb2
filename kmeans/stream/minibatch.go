package stream

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/seeding"
)

// Defaults of MiniBatch.
const (
	DefaultBatchSize = 1024
	DefaultPatience  = 100
	DefaultSmoothing = 0.05
)

// MiniBatch is mini-batch k-means (D. Sculley, "Web-scale k-means
// clustering", WWW 2010): each batch of rows is assigned to the current
// centers, then each row x pulls its center c toward it by
// c ← (1 − η)·c + η·x with the per-center learning rate η = 1/v, where v
// counts the rows the center has received so far (so a center is the
// running mean of its rows). Under Cosine the rows are taken at unit
// length and the centers renormalised after each batch.
//
// Batches: rows go through a shuffle buffer of BufferRows rows; each batch
// takes BatchSize rows from random places in the buffer, which the next
// rows of the source fill, so a file sorted by some column is not seen in
// its order (each row is used once per pass). All draws come from
// Settings.Seed: the result is reproducible, and independent of Workers.
//
// Stopping rule: let c_b be the mean loss of batch b against the centers
// before its update, and s_b = (1 − α)·s_{b−1} + α·c_b its exponentially
// smoothed value (α = Smoothing, s_1 = c_1). Mini-batch stops when s has
// not reached a new minimum for Patience batches (Status CostTolerance),
// after MaxBatches batches, or after Passes passes over the source
// (IterationLimit). On a one-pass source, Passes is 1.
//
// On a reopenable source, ExactPasses exact Lloyd passes then move the
// centers, and one more pass scores the result exactly (Result.Exact) and
// measures the training summary; a fixed point reached earlier stops them,
// as in Exact. On a one-pass source the scaler is learned and the seeds
// drawn (greedy k-means++) on the first Settings.SampleRows rows, and the
// cost and training summary are those of each row against the centers when
// it was used.
//
// Memory: the buffer (BufferRows·d float64), a batch, the centers and
// counts, and the source's blocks.
type MiniBatch struct {
	// BatchSize is the number of rows per batch. Zero means
	// DefaultBatchSize (1024, about the paper's b = 1000, from memory).
	BatchSize int
	// Passes is the largest number of passes over a reopenable source.
	// Zero means 1.
	Passes int
	// MaxBatches, if positive, limits the number of batches.
	MaxBatches int
	// Patience is the number of batches without a new minimum of the
	// smoothed cost after which mini-batch stops. Zero means
	// DefaultPatience (100); negative means never stop early.
	Patience int
	// Smoothing is α of the smoothed cost, in (0, 1]. Zero means
	// DefaultSmoothing (0.05).
	Smoothing float64
	// ExactPasses is the number of exact Lloyd passes that move the
	// centers after mini-batch on a reopenable source (zero: none; the
	// scoring pass always runs).
	ExactPasses int
	// BufferRows is the size of the shuffle buffer. Zero means
	// 64·BatchSize; less than BatchSize is raised to it.
	BufferRows int
}

func (MiniBatch) name() string { return "mini-batch" }

func (mb MiniBatch) resolve() (MiniBatch, error) {
	switch {
	case mb.BatchSize < 0:
		return mb, fmt.Errorf("%w: MiniBatch.BatchSize = %d", kmeans.ErrSettings, mb.BatchSize)
	case mb.Passes < 0:
		return mb, fmt.Errorf("%w: MiniBatch.Passes = %d", kmeans.ErrSettings, mb.Passes)
	case mb.MaxBatches < 0:
		return mb, fmt.Errorf("%w: MiniBatch.MaxBatches = %d", kmeans.ErrSettings, mb.MaxBatches)
	case math.IsNaN(mb.Smoothing) || mb.Smoothing < 0 || mb.Smoothing > 1:
		return mb, fmt.Errorf("%w: MiniBatch.Smoothing = %v, want 0 ≤ α ≤ 1", kmeans.ErrSettings, mb.Smoothing)
	case mb.ExactPasses < 0:
		return mb, fmt.Errorf("%w: MiniBatch.ExactPasses = %d", kmeans.ErrSettings, mb.ExactPasses)
	case mb.BufferRows < 0:
		return mb, fmt.Errorf("%w: MiniBatch.BufferRows = %d", kmeans.ErrSettings, mb.BufferRows)
	}
	if mb.BatchSize == 0 {
		mb.BatchSize = DefaultBatchSize
	}
	if mb.Passes == 0 {
		mb.Passes = 1
	}
	if mb.Patience == 0 {
		mb.Patience = DefaultPatience
	}
	if mb.Smoothing == 0 {
		mb.Smoothing = DefaultSmoothing
	}
	if mb.BufferRows == 0 {
		mb.BufferRows = 64 * mb.BatchSize
	}
	mb.BufferRows = max(mb.BufferRows, mb.BatchSize)
	return mb, nil
}

// batcher is the state of a mini-batch run.
type batcher struct {
	j       *job
	mb      MiniBatch
	rnd     *rand.Rand
	centers []float64
	counts  []float64

	buf    []float64 // shuffle buffer, filled rows first (scaled)
	bufIdx []int64
	bufInv []float64
	filled int
	batch  []float64
	bIdx   []int64
	bInv   []float64

	smoothed, best float64
	since          int
	batches        int
	stopped        bool
	status         kmeans.Status

	// Accounting for a one-pass run: every row against the centers when
	// it was used.
	sizes   []int64
	costs   []float64
	cost    float64
	samples *distSample
	touched []bool
}

func (j *job) newBatcher(mb MiniBatch, centers []float64) *batcher {
	d := j.d
	return &batcher{
		j: j, mb: mb, centers: centers,
		rnd:     rand.New(rand.NewPCG(j.set.Seed, 0x6d696e69)),
		counts:  make([]float64, j.k),
		buf:     make([]float64, mb.BufferRows*d),
		bufIdx:  make([]int64, mb.BufferRows),
		bufInv:  make([]float64, mb.BufferRows),
		batch:   make([]float64, mb.BatchSize*d),
		bIdx:    make([]int64, mb.BatchSize),
		bInv:    make([]float64, mb.BatchSize),
		sizes:   make([]int64, j.k),
		costs:   make([]float64, j.k),
		samples: newDistSample(j.k, max(64, j.set.SampleRows/j.k), mix64(j.set.Seed^0x71756e74)),
		touched: make([]bool, j.k),
		best:    math.Inf(1),
	}
}

// push adds the m rows of z (scaled, with 1/‖z‖ in inv under Cosine) to
// the buffer, running a batch whenever it is full. It returns errStop once
// the stopping rule fires.
func (bt *batcher) push(z []float64, inv []float64, m int, first int64) error {
	d := bt.j.d
	for t := range m {
		if bt.stopped {
			return errStop
		}
		if bt.filled == bt.mb.BufferRows {
			bt.run(bt.mb.BatchSize)
		}
		copy(bt.buf[bt.filled*d:(bt.filled+1)*d], z[t*d:(t+1)*d])
		bt.bufIdx[bt.filled] = first + int64(t)
		if inv != nil {
			bt.bufInv[bt.filled] = inv[t]
		}
		bt.filled++
	}
	if bt.stopped {
		return errStop
	}
	return nil
}

// drain runs batches until the buffer is empty or the rule stops.
func (bt *batcher) drain() {
	for bt.filled > 0 && !bt.stopped {
		bt.run(min(bt.mb.BatchSize, bt.filled))
	}
	bt.filled = 0
}

// run takes b rows from random places of the buffer and applies one
// mini-batch step.
func (bt *batcher) run(b int) {
	j, d := bt.j, bt.j.d
	for t := range b {
		p := bt.rnd.IntN(bt.filled)
		copy(bt.batch[t*d:(t+1)*d], bt.buf[p*d:(p+1)*d])
		bt.bIdx[t], bt.bInv[t] = bt.bufIdx[p], bt.bufInv[p]
		last := bt.filled - 1
		copy(bt.buf[p*d:(p+1)*d], bt.buf[last*d:(last+1)*d])
		bt.bufIdx[p], bt.bufInv[p] = bt.bufIdx[last], bt.bufInv[last]
		bt.filled--
	}
	x := bt.batch[:b*d]
	j.asg.set(bt.centers, j.k)
	j.search(x, b)
	var sum float64
	for t := range b {
		a, l := j.near[t], j.loss[t]
		sum += l
		bt.sizes[a]++
		bt.costs[a] += l
		bt.cost += l
		bt.samples.add(a, bt.bIdx[t], j.distance(l))
	}
	// Sculley's update, row by row in batch order.
	clear(bt.touched)
	for t := range b {
		a := j.near[t]
		bt.counts[a]++
		eta := 1 / bt.counts[a]
		c := bt.centers[a*d : (a+1)*d]
		s := 1.0
		if j.cosine {
			s = bt.bInv[t]
		}
		for i, v := range x[t*d : (t+1)*d] {
			c[i] = (1-eta)*c[i] + eta*(s*v)
		}
		bt.touched[a] = true
	}
	if j.cosine {
		for a, ok := range bt.touched {
			if !ok {
				continue
			}
			c := bt.centers[a*d : (a+1)*d]
			var n float64
			for _, v := range c {
				n += v * v
			}
			if n = math.Sqrt(n); n > 0 {
				for i := range c {
					c[i] /= n
				}
			}
		}
	}
	bt.batches++
	cb := sum / float64(b)
	if bt.batches == 1 {
		bt.smoothed = cb
	} else {
		bt.smoothed = (1-bt.mb.Smoothing)*bt.smoothed + bt.mb.Smoothing*cb
	}
	j.cost = bt.smoothed
	if bt.smoothed < bt.best {
		bt.best, bt.since = bt.smoothed, 0
	} else {
		bt.since++
	}
	switch {
	case bt.mb.Patience > 0 && bt.since >= bt.mb.Patience:
		bt.stopped, bt.status = true, kmeans.CostTolerance
	case bt.mb.MaxBatches > 0 && bt.batches >= bt.mb.MaxBatches:
		bt.stopped, bt.status = true, kmeans.IterationLimit
	}
}

// miniBatch runs mini-batch passes over a reopenable source from centers.
func (j *job) miniBatch(mb MiniBatch, centers []float64) ([]float64, error) {
	bt := j.newBatcher(mb, centers)
	for pass := 0; pass < mb.Passes && !bt.stopped; pass++ {
		hook := j.begin(StageMiniBatch)
		err := j.rd.pass(j.ctx, func(x []float64, m int, at int64) error {
			z, err := j.prepare(x, m, at)
			if err != nil {
				return err
			}
			err = bt.push(z, j.inv, m, at)
			hook(at+int64(m), false)
			return err
		})
		if err != nil && err != errStop {
			return nil, err
		}
		bt.drain()
		hook(j.rd.n, true)
	}
	if !bt.stopped {
		bt.status = kmeans.IterationLimit
	}
	j.res.Batches = bt.batches
	j.res.Status = bt.status
	return bt.centers, nil
}

// miniBatchOnce runs mini-batch over a source read once: the head of
// SampleRows rows learns the scaler and draws the seeds, then every row,
// the head first, goes through the batches.
func (j *job) miniBatchOnce(mb MiniBatch) ([]float64, error) {
	d := j.d
	head := make([]float64, 0, min(j.set.SampleRows, 1<<16)*d)
	var bt *batcher
	start := func() error {
		if len(head) == 0 {
			return nil
		}
		n := len(head) / d
		if err := j.learnOnHead(head, n); err != nil {
			return err
		}
		z, err := j.prepare(head, n, 0)
		if err != nil {
			return err
		}
		centers, err := j.headCenters(z, n)
		if err != nil {
			return err
		}
		bt = j.newBatcher(mb, centers)
		var inv []float64
		if j.cosine {
			inv = j.inv
		}
		return bt.push(z, inv, n, 0)
	}
	hook := j.begin(StageMiniBatch)
	var rows int64
	err := j.rd.pass(j.ctx, func(x []float64, m int, at int64) error {
		rows = at + int64(m)
		defer hook(rows, false)
		if bt == nil {
			take := min(m, j.set.SampleRows-len(head)/d)
			head = append(head, x[:take*d]...)
			if len(head)/d < j.set.SampleRows {
				return nil
			}
			if err := start(); err != nil {
				return err
			}
			head = nil
			x, m, at = x[take*d:], m-take, at+int64(take)
			if m == 0 {
				return nil
			}
		}
		z, err := j.prepare(x, m, at)
		if err != nil {
			return err
		}
		return bt.push(z, j.inv, m, at)
	})
	if err != nil && err != errStop {
		return nil, err
	}
	if bt == nil {
		if err := start(); err != nil {
			return nil, err
		}
	}
	bt.drain()
	hook(rows, true)
	if !bt.stopped {
		bt.status = kmeans.IterationLimit
	}
	n := int64(0)
	for _, s := range bt.sizes {
		n += s
	}
	j.res.Batches = bt.batches
	j.res.Status = bt.status
	j.res.Cost = bt.cost
	j.res.Rows = n
	j.res.Sizes = slices.Clone(bt.sizes)
	p := kmeans.NewPartial(j.k, d)
	for a := range j.k {
		p.Count[a] = bt.sizes[a]
		p.Weight[a] = float64(bt.sizes[a])
		p.Cost[a] = bt.costs[a]
	}
	j.training = summarise(p, bt.samples, n)
	return bt.centers, nil
}

// learnOnHead learns the scaler on the first n raw rows of a one-pass
// source.
func (j *job) learnOnHead(head []float64, n int) error {
	if j.p.Scaler == nil {
		return nil
	}
	learned, err := j.p.Scaler.Learn(mat.NewDense(n, j.d, head), nil)
	if err != nil {
		return fmt.Errorf("%w: scaler: %w", kmeans.ErrData, err)
	}
	if learned.Dim() != j.d {
		return fmt.Errorf("%w: scaler learned %d columns, data has %d", kmeans.ErrData, learned.Dim(), j.d)
	}
	j.scaler = learned
	j.res.Scaling = fmt.Sprintf("%s learned on the first %d rows", learned.Kind(), n)
	return nil
}

// headCenters seeds on the first n scaled rows of a one-pass source.
func (j *job) headCenters(z []float64, n int) ([]float64, error) {
	if j.p.Centers != nil {
		j.res.Seeding = "given centers"
		return j.givenCenters()
	}
	dst := mat.NewDense(j.k, j.d, nil)
	pp := seeding.PlusPlus{Workers: j.set.Workers}
	if err := pp.Seed(dst, mat.NewDense(n, j.d, z), nil, j.metric, rand.New(rand.NewPCG(j.set.Seed, seedKey))); err != nil {
		return nil, seedingErr(err)
	}
	j.res.Seeding = fmt.Sprintf("greedy k-means++ on the first %d rows", n)
	c := dst.RawMatrix().Data
	return c, j.unitCenters(c)
}
