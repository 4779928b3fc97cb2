package kmeans

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
	// SwapTrials and SwapsAccepted count the random-swap trials run on the
	// winning restart and those that lowered its cost (see
	// Settings.SwapTrials); Refined reports whether the result comes from
	// the refinement (its final passes are counted in Passes and
	// Distances, and in Result.Iterations).
	SwapTrials, SwapsAccepted int
	Refined                   bool
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
		res.Weights[a] += sp.rawWeight(i)
	}
	res.Model = newModel(best.centers, k, sp.D, sp.Metric, sp.Scaler)
	res.Model.training = sp.training(res.Model.centers, best.assign, k, res)
	return res
}
