package stream

import (
	"math"
	"sync"
	"sync/atomic"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/nearest"
)

// assigner finds the nearest of k centers for blocks of rows, exactly as
// kmeans.Lloyd does: under Euclidean through the blocked kernel of
// internal/nearest (exact argmin of the direct loss, lowest index on
// ties), otherwise by the metric's Loss in index order. It is the one
// place this package calls internal/nearest.
type assigner struct {
	metric  distance.Objective
	euclid  bool
	k, d    int
	centers []float64
	packed  nearest.Centers
	pool    sync.Pool // *nearest.Searcher
	workers int
}

func newAssigner(m distance.Objective, d, workers int) *assigner {
	return &assigner{
		metric:  m,
		euclid:  distance.ArithmeticOf(m) == distance.SquaredDifferences,
		d:       d,
		workers: max(1, workers),
		pool:    sync.Pool{New: func() any { return new(nearest.Searcher) }},
	}
}

// set makes the k×d row-major centers current; they must not change until
// the next set.
func (a *assigner) set(centers []float64, k int) {
	a.centers, a.k = centers, k
	if a.euclid {
		a.packed.Pack(centers, k, a.d)
	}
}

// tileRows is the number of rows one goroutine assigns at a time.
const tileRows = 256

// assign sets asg[i] to the nearest center of row i of x (m rows) and
// loss[i] to the metric's loss against it, computed directly (as
// kmeans.Cluster scores rows). Tiles of rows go to a.workers goroutines;
// every row's answer is independent of the split.
func (a *assigner) assign(asg []int, loss []float64, x []float64, m int) {
	tiles := (m + tileRows - 1) / tileRows
	w := min(a.workers, tiles)
	if w <= 1 {
		for t := range tiles {
			a.tile(asg, loss, x, t*tileRows, min(m, (t+1)*tileRows))
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for range w {
		wg.Go(func() {
			for t := int(next.Add(1)) - 1; t < tiles; t = int(next.Add(1)) - 1 {
				a.tile(asg, loss, x, t*tileRows, min(m, (t+1)*tileRows))
			}
		})
	}
	wg.Wait()
}

// tile assigns rows [lo, hi) of x.
func (a *assigner) tile(asg []int, loss []float64, x []float64, lo, hi int) {
	d, c := a.d, a.centers
	if a.euclid {
		s := a.pool.Get().(*nearest.Searcher)
		rows := x[lo*d : hi*d]
		s.Assign(asg[lo:hi], rows, hi-lo, &a.packed, func(i, j int) float64 {
			return a.metric.Loss(rows[i*d:(i+1)*d], c[j*d:(j+1)*d])
		})
		a.pool.Put(s)
		for i := lo; i < hi; i++ {
			j := asg[i]
			loss[i] = a.metric.Loss(x[i*d:(i+1)*d], c[j*d:(j+1)*d])
		}
		return
	}
	for i := lo; i < hi; i++ {
		row := x[i*d : (i+1)*d]
		best, bl := 0, math.Inf(1)
		for j := range a.k {
			if l := a.metric.Loss(row, c[j*d:(j+1)*d]); l < bl {
				best, bl = j, l
			}
		}
		asg[i], loss[i] = best, bl
	}
}
