package kmeans

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/floats"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/asm/f32"
	"github.com/centroidlab/centroid/internal/nearest"
)

// Partial holds the per-cluster statistics of a block of rows: weighted sums
// of the rows, total weights, row counts and cost. Partials of disjoint
// blocks merge into the statistics of their union, which is how Cluster
// stays deterministic (blocks merge in a fixed order), and how mini-batch,
// streaming and distributed updates combine work done elsewhere.
//
// For the Cosine metric the sums are of rows scaled to unit length (the
// spherical k-means center rule); otherwise of the rows themselves.
//
// The zero value is unusable; create one with NewPartial. Fields are
// exported so that a Partial can be encoded (for example with encoding/json)
// and shipped between processes. A Partial that received float32 rows (see
// Space.Add) also holds an unexported scratch row, which is not part of its
// statistics: compare Partials by their exported fields.
type Partial struct {
	K, D   int
	Sum    []float64 // K×D row-major: Σ w·x per cluster
	Weight []float64 // Σ w per cluster
	Count  []int64   // rows per cluster
	Cost   []float64 // Σ w·loss per cluster

	wide []float64 // scratch: a float32 row widened (see addScaled32)
}

// NewPartial returns empty statistics for k clusters of dimension d. It
// panics if k < 1 or d < 1.
func NewPartial(k, d int) *Partial {
	if k < 1 || d < 1 {
		panic("kmeans: NewPartial needs k ≥ 1 and d ≥ 1")
	}
	return &Partial{K: k, D: d, Sum: make([]float64, k*d), Weight: make([]float64, k), Count: make([]int64, k), Cost: make([]float64, k)}
}

// Reset sets all statistics to zero, keeping the shape.
func (p *Partial) Reset() {
	clear(p.Sum)
	clear(p.Weight)
	clear(p.Count)
	clear(p.Cost)
}

// Add adds row x with weight w and loss to cluster j: Sum_j += w·x,
// Weight_j += w, Count_j++, Cost_j += w·loss. It allocates nothing and
// panics if j is out of range or len(x) != D.
func (p *Partial) Add(j int, x []float64, w, loss float64) {
	p.addScaled(j, x, w, w, loss)
}

// addScaled adds s·x to the sums (s = w, or w/‖x‖ for unit rows).
func (p *Partial) addScaled(j int, x []float64, s, w, loss float64) {
	if len(x) != p.D {
		panic("kmeans: Partial.Add row length differs from D")
	}
	// sum += s·x: gonum's AxpyUnitary multiplies, then adds, element by
	// element (no fused multiply-add), so the bits are those of the loop.
	floats.AddScaled(p.Sum[j*p.D:(j+1)*p.D], s, x)
	p.Weight[j] += w
	p.Count[j]++
	p.Cost[j] += w * loss
}

// addScaled32 is addScaled for a float32 row, with the bits of adding the
// float64 row: in AVX-512 (f32.AddScaled: a multiply and an add per
// element, as gonum's amd64 assembly does), or else widened into p's
// scratch and added by the same gonum call.
func (p *Partial) addScaled32(j int, x []float32, s, w, loss float64) {
	if len(x) != p.D {
		panic("kmeans: Partial.Add row length differs from D")
	}
	sum := p.Sum[j*p.D : (j+1)*p.D]
	if !f32.AddScaled(sum, s, x) {
		if len(p.wide) < p.D {
			p.wide = make([]float64, p.D)
		}
		floats.AddScaled(sum, s, nearest.Widen(p.wide, x))
	}
	p.Weight[j] += w
	p.Count[j]++
	p.Cost[j] += w * loss
}

// Merge adds q's statistics into p. Merging is associative and commutative
// up to floating-point rounding; merge in a fixed order for bit-identical
// results. It panics if the shapes differ.
func (p *Partial) Merge(q *Partial) {
	if p.K != q.K || p.D != q.D {
		panic(fmt.Sprintf("kmeans: Partial.Merge shape %d×%d into %d×%d", q.K, q.D, p.K, p.D))
	}
	for i, v := range q.Sum {
		p.Sum[i] += v
	}
	for j := range p.Weight {
		p.Weight[j] += q.Weight[j]
		p.Count[j] += q.Count[j]
		p.Cost[j] += q.Cost[j]
	}
}

// TotalCost returns Σ Cost_j, summed in cluster order.
func (p *Partial) TotalCost() float64 {
	var s float64
	for _, c := range p.Cost {
		s += c
	}
	return s
}

// Mean writes the weighted mean of cluster j into dst (len D) and reports
// whether the cluster has positive weight; dst is left unchanged if not.
func (p *Partial) Mean(dst []float64, j int) bool {
	w := p.Weight[j]
	if !(w > 0) {
		return false
	}
	sum := p.Sum[j*p.D : (j+1)*p.D]
	for i, v := range sum {
		dst[i] = v / w
	}
	return true
}

// Centers writes the centers that rule gives for these statistics into dst
// (K×D row-major, len ≥ K·D) and returns, in increasing order, the clusters
// that get none (no weight, or a zero sum under UnitMeanRule); their rows
// of dst are left unchanged. MeanRule gives the weighted mean Sum_j/Weight_j;
// UnitMeanRule the sum of the members' unit rows renormalised to unit length
// (spherical k-means), which is why the Cosine sums are of unit rows.
//
// MedianRule returns an error wrapping ErrMetric: a coordinate-wise median
// is not a function of sums, so Partials cannot carry it. A caller that
// splits the rows (streaming, a distributed engine) and wants k-medians
// must bring each cluster's members, or per-cluster value counts fine
// enough to read the median from, to one place per coordinate; Cluster does
// this in memory. It panics if len(dst) < K·D.
func (p *Partial) Centers(dst []float64, rule distance.CenterRule) (empty []int, err error) {
	if len(dst) < p.K*p.D {
		panic("kmeans: Partial.Centers dst shorter than K·D")
	}
	var center func(dst []float64, j int) bool
	switch rule {
	case distance.MeanRule:
		center = p.Mean
	case distance.UnitMeanRule:
		center = p.unitMean
	case distance.MedianRule:
		return nil, fmt.Errorf("%w: the median center rule is not mergeable from sums", ErrMetric)
	default:
		return nil, fmt.Errorf("%w: unknown center rule %v", ErrMetric, rule)
	}
	for j := range p.K {
		if !center(dst[j*p.D:(j+1)*p.D], j) {
			empty = append(empty, j)
		}
	}
	return empty, nil
}

// unitMean writes Sum_j/‖Sum_j‖ into dst and reports whether the norm is
// positive and finite.
func (p *Partial) unitMean(dst []float64, j int) bool {
	if !(p.Weight[j] > 0) {
		return false
	}
	sum := p.Sum[j*p.D : (j+1)*p.D]
	n := norm(sum)
	if !(n > 0) || math.IsInf(n, 0) {
		return false
	}
	for i, v := range sum {
		dst[i] = v / n
	}
	return true
}
