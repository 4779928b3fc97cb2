package kmeans

import (
	"cmp"
	"slices"
)

// Result is the outcome of Cluster: the winning restart's model, assignments
// and cost, plus statistics over the whole call.
type Result struct {
	// Model holds the centers, metric and scaler; it labels new rows.
	Model *Model
	// Assignments[i] is the cluster of row i: the index of its nearest
	// returned center (lowest index on ties).
	Assignments []int
	// Sizes[j] is the number of rows in cluster j.
	Sizes []int
	// Weights[j] is the total weight of cluster j (equal to Sizes when
	// Problem.Weights is nil).
	Weights []float64
	// Cost is the objective Σ w·loss(x, center) over all rows in the
	// clustering (scaled) space: the within-cluster sum of squares for
	// Euclidean, the sum of distances for Manhattan, Σ w(1−cos) for Cosine.
	Cost float64
	// ClusterCost[j] is cluster j's share of Cost.
	ClusterCost []float64
	// Iterations is the number of assignment passes of the winning restart.
	Iterations int
	// Status says why the winning restart stopped; Canceled if the context
	// ended the call.
	Status Status
	// Stats describes the work done by all restarts.
	Stats Stats
}

// Stats counts the work of one call to Cluster.
type Stats struct {
	// Distances counts loss or distance evaluations between a row and a
	// center over all restarts (assignment passes, empty-cluster repairs and
	// the final scoring pass), excluding the seeder's.
	Distances int64
	// Passes is the number of assignment passes over all restarts.
	Passes int
	// RestartIterations[r] and RestartCosts[r] are the passes and final cost
	// of restart r (zero for a restart that never ran).
	RestartIterations []int
	RestartCosts      []float64
	// BestRestart is the index of the winning restart.
	BestRestart int
	// EmptyRepairs counts clusters that lost all their rows and were given
	// a new center (see the package documentation).
	EmptyRepairs int
	// Method names the solver that ran.
	Method string
}

func (sp *Space) result(best *outcome, k int, stats Stats) *Result {
	res := &Result{
		Assignments: best.assign,
		Sizes:       make([]int, k),
		Weights:     make([]float64, k),
		Cost:        best.cost,
		ClusterCost: best.clusterCost,
		Iterations:  best.iterations,
		Status:      best.status,
		Stats:       stats,
	}
	res.Stats.BestRestart = best.restart
	for i, a := range best.assign {
		res.Sizes[a]++
		res.Weights[a] += sp.Weight(i)
	}
	res.Model = newModel(best.centers, k, sp.D, sp.Metric, sp.Scaler)
	res.Model.training = sp.training(res.Model.centers, best.assign, k, res)
	return res
}

// quantileLevels are the levels of Quantiles as fractions num/100.
var quantileLevels = [...]float64{50, 90, 99}

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
		for i := lo; i < hi; i++ {
			a := assign[i]
			dist[i] = sp.Metric.Distance(sp.Row(i), centers[a*d:(a+1)*d])
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
	type member struct{ dist, w float64 }
	members := make([]member, start[k])
	next := slices.Clone(start[:k])
	for i, a := range assign {
		if w := sp.Weight(i); w > 0 {
			members[next[a]] = member{dist[i], w}
			next[a]++
		}
	}
	t := &Training{Rows: sp.N, Clusters: make([]ClusterSummary, k)}
	for j := range k {
		t.Clusters[j] = ClusterSummary{Size: res.Sizes[j], Weight: res.Weights[j], Cost: res.ClusterCost[j]}
		ms := members[start[j]:start[j+1]]
		if len(ms) == 0 {
			continue
		}
		slices.SortFunc(ms, func(a, b member) int { return cmp.Compare(a.dist, b.dist) })
		var total float64
		for _, m := range ms {
			total += m.w
		}
		var q [len(quantileLevels)]float64
		level, cum := 0, 0.0
		for _, m := range ms {
			cum += m.w
			for level < len(q) && cum >= total*quantileLevels[level]/100 {
				q[level] = m.dist
				level++
			}
		}
		for ; level < len(q); level++ { // rounding left cum just below a level
			q[level] = ms[len(ms)-1].dist
		}
		t.Clusters[j].Distances = Quantiles{P50: q[0], P90: q[1], P99: q[2], Max: ms[len(ms)-1].dist}
	}
	return t
}
