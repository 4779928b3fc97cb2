package kmeans

import (
	"fmt"
	"math"
	"slices"

	"github.com/centroidlab/centroid/internal/quantile"
)

// Training summarises the rows a Model was made from, measured in the
// clustering space by Cluster from the final assignments.
type Training struct {
	// Rows is the number of rows clustered, weight-zero rows included.
	Rows int
	// Clusters holds one summary per cluster.
	Clusters []ClusterSummary
}

// ClusterSummary describes the training members of one cluster.
type ClusterSummary struct {
	// Size is the number of rows assigned to the cluster.
	Size int
	// Weight is their total weight (equal to Size without weights).
	Weight float64
	// Cost is the cluster's share of Result.Cost.
	Cost float64
	// Distances are quantiles of the members' distances to the center.
	Distances Quantiles
}

// Quantiles of the distances from a cluster's members to its center, in
// the clustering space and in the units of Model.Nearest. Only members of
// positive weight count, each as often as its weight: the q-quantile is the
// smallest member distance v such that the members at distance ≤ v hold at
// least the fraction q of the cluster's weight (the inverse of the weighted
// empirical distribution function; without weights the ⌈q·n⌉-th smallest
// of n distances). All are zero for a cluster without weight.
type Quantiles struct {
	P50, P90, P99 float64
	Max           float64
}

// Shares returns each cluster's share of the total training weight.
func (t *Training) Shares() []float64 {
	s := make([]float64, len(t.Clusters))
	var total float64
	for _, c := range t.Clusters {
		total += c.Weight
	}
	for j, c := range t.Clusters {
		s[j] = c.Weight / total
	}
	return s
}

// Cost returns the total cost, the sum of the clusters' costs in order.
func (t *Training) Cost() float64 {
	var s float64
	for _, c := range t.Clusters {
		s += c.Cost
	}
	return s
}

// Training returns a copy of the training summary, or nil if the model has
// none (it was decoded from a version 1 document).
func (m *Model) Training() *Training {
	if m == nil || m.training == nil {
		return nil
	}
	t := *m.training
	t.Clusters = append([]ClusterSummary(nil), t.Clusters...)
	return &t
}

// quantileLevels are the levels of Quantiles: P50, P90 and P99.
var quantileLevels = []float64{0.50, 0.90, 0.99}

// training summarises the final clustering for the model document: sizes,
// weights and costs from res, and the quantiles of each cluster's member
// distances (see Quantiles). It measures every row against its center once
// more (these evaluations are not counted in Stats.Distances, which counts
// the search), in parallel over the fixed blocks, and sorts each cluster's
// distances.
func (sp *Space) training(centers []float64, assign []int, k int, res *Result) *Training {
	d := sp.D
	dist := make([]float64, sp.N)
	sp.Parallel(func(b int) {
		lo, hi := sp.Block(b)
		buf := make([]float64, d)
		for i := lo; i < hi; i++ {
			a := assign[i]
			dist[i] = sp.Metric.Distance(sp.RowTo(buf, i), centers[a*d:(a+1)*d])
		}
	})
	// Group the rows of positive weight by cluster (counting sort).
	start := make([]int, k+1)
	for i, a := range assign {
		if sp.Weight(i) > 0 {
			start[a+1]++
		}
	}
	for j := range k {
		start[j+1] += start[j]
	}
	members := make([]quantile.Pair, start[k])
	next := slices.Clone(start[:k])
	for i, a := range assign {
		if w := sp.Weight(i); w > 0 {
			members[next[a]] = quantile.Pair{Value: dist[i], Weight: w}
			next[a]++
		}
	}
	t := &Training{Rows: sp.N, Clusters: make([]ClusterSummary, k)}
	var q [3]float64
	for j := range k {
		t.Clusters[j] = ClusterSummary{Size: res.Sizes[j], Weight: res.Weights[j], Cost: res.ClusterCost[j]}
		ms := members[start[j]:start[j+1]]
		if len(ms) == 0 {
			continue
		}
		quantile.Sort(ms)
		quantile.Levels(q[:], quantileLevels, ms)
		t.Clusters[j].Distances = Quantiles{P50: q[0], P90: q[1], P99: q[2], Max: ms[len(ms)-1].Value}
	}
	return t
}

// check validates a summary of k clusters (see Model.WithTraining).
func (t *Training) check(k int) error {
	bad := func(format string, args ...any) error {
		return fmt.Errorf("%w: training: %s", ErrModel, fmt.Sprintf(format, args...))
	}
	if t.Rows < 1 {
		return bad("rows = %d", t.Rows)
	}
	if len(t.Clusters) != k {
		return bad("%d clusters, model has %d", len(t.Clusters), k)
	}
	rows := 0
	var weight float64
	for j, c := range t.Clusters {
		if c.Size < 0 || c.Size > t.Rows-rows {
			return bad("cluster %d: size %d does not fit %d rows", j, c.Size, t.Rows)
		}
		rows += c.Size
		q := c.Distances
		for _, v := range [...]float64{c.Weight, c.Cost, q.P50, q.P90, q.P99, q.Max} {
			if !(v >= 0) || math.IsInf(v, 1) {
				return bad("cluster %d: value %v, want finite and ≥ 0", j, v)
			}
		}
		if !(q.P50 <= q.P90 && q.P90 <= q.P99 && q.P99 <= q.Max) {
			return bad("cluster %d: quantiles %v ≤ %v ≤ %v ≤ %v out of order", j, q.P50, q.P90, q.P99, q.Max)
		}
		if c.Size == 0 && (c.Weight != 0 || c.Cost != 0 || q.Max != 0) {
			return bad("cluster %d: no rows but weight, cost or distances", j)
		}
		weight += c.Weight
	}
	if rows != t.Rows {
		return bad("sizes add up to %d, rows = %d", rows, t.Rows)
	}
	if !(weight > 0) || math.IsInf(weight, 1) {
		return bad("total weight %v", weight)
	}
	return nil
}
