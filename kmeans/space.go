package kmeans

import (
	"github.com/centroidlab/centroid/internal/blocks"
	"math"

	"github.com/centroidlab/centroid/distance"
)

// Space is a prepared problem as a Method sees it: the rows in the
// clustering space (scaled), their weights, the metric and the fixed block
// split that every pass uses. It is read-only and shared by concurrent
// restarts.
type Space struct {
	// N rows of D columns, row-major in X.
	N, D int
	// X holds the rows in the clustering space. Never modify it: it may be
	// the caller's data.
	X []float64
	// W holds the row weights, or nil for all ones.
	W []float64
	// Metric is the clustering metric; Rule is its center rule.
	Metric distance.Objective
	Rule   distance.CenterRule

	invNorm []float64    // 1/‖x_i‖ for the Cosine rule, else nil
	blocks  blocks.Split // fixed split of the rows (depends only on N)
	workers int          // goroutines per restart
}

func newSpace(x []float64, n, d int, w []float64, m distance.Objective, workers int) *Space {
	sp := &Space{N: n, D: d, X: x, W: w, Metric: m, Rule: m.Rule(), workers: max(1, workers)}
	sp.blocks = blocks.Of(n)
	if sp.Rule == distance.UnitMeanRule {
		sp.invNorm = make([]float64, n)
		for i := range n {
			var s float64
			for _, v := range sp.Row(i) {
				s += v * v
			}
			sp.invNorm[i] = 1 / math.Sqrt(s)
		}
	}
	return sp
}

// Row returns row i (a view into X; do not modify).
func (sp *Space) Row(i int) []float64 { return sp.X[i*sp.D : (i+1)*sp.D : (i+1)*sp.D] }

// Weight returns the weight of row i.
func (sp *Space) Weight(i int) float64 {
	if sp.W == nil {
		return 1
	}
	return sp.W[i]
}

// Blocks returns the number of fixed row blocks.
func (sp *Space) Blocks() int { return sp.blocks.Count() }

// Block returns the rows [lo, hi) of block b.
func (sp *Space) Block(b int) (lo, hi int) { return sp.blocks.Bounds(b) }

// Workers returns the number of goroutines Parallel uses.
func (sp *Space) Workers() int { return sp.workers }

// Parallel calls fn(b) once for every block b, on up to Workers()
// goroutines, and returns when all calls have returned. fn must write only
// to state owned by block b so that results do not depend on scheduling.
func (sp *Space) Parallel(fn func(b int)) { sp.blocks.Each(sp.workers, fn) }

// Loss returns the metric's loss of row i against center c.
func (sp *Space) Loss(i int, c []float64) float64 { return sp.Metric.Loss(sp.Row(i), c) }

// Add adds row i, assigned to cluster j with the given loss, to p, applying
// the center rule's row scaling (unit rows for Cosine).
func (sp *Space) Add(p *Partial, i, j int, loss float64) {
	w := sp.Weight(i)
	s := w
	if sp.invNorm != nil {
		s = w * sp.invNorm[i]
	}
	p.addScaled(j, sp.Row(i), s, w, loss)
}
