package kmeans

import (
	"sync/atomic"
)

// Method is a k-means solver. The driver (Cluster) owns seeding, restarts,
// the center update, convergence, limits and cancellation; a Method only
// assigns rows to their nearest centers, one pass at a time.
//
// A Method value holds options only and is safe to share between concurrent
// calls; Start creates the state of one restart.
type Method interface {
	// Start prepares one restart on sp with k clusters. It returns an error
	// wrapping ErrMetric if the method cannot use sp.Metric. The rows are
	// in sp.X, or in sp.X32 for float32 data (then sp.X is nil); Space.RowTo,
	// Space.Loss and Space.Add work on either.
	Start(sp *Space, k int) (Pass, error)
}

// Pass is the state of one restart of a Method (for example distance
// bounds kept per row across passes).
type Pass interface {
	// Assign sets st.Assign[i] to the index of the center in st.Centers
	// nearest to row i, the lowest index among equally near centers (so
	// every exact Method gives the same assignments), fills st.Blocks[b]
	// with the statistics of block b (via Space.Add, with the row's loss
	// against its center if st.NeedCost), and adds to st.Moved and
	// st.Distances.
	Assign(st *Step)
}

// Step is one assignment pass, filled in by the driver and completed by a
// Pass.
type Step struct {
	// Iteration is the pass number of this restart, from 1.
	Iteration int
	// Centers is the k×d row-major matrix of current centers. Read-only.
	Centers []float64
	// Previous holds the centers of the previous pass, nil on the first
	// pass. Bound-based solvers use it to measure how far centers moved.
	Previous []float64
	// Assign is the assignment of every row: on entry that of the previous
	// pass (-1 before the first), on return the new one.
	Assign []int
	// Blocks holds one Partial per block of the Space. The Pass resets and
	// fills each one.
	Blocks []Partial
	// NeedCost asks the Pass to add each row's exact loss to its block's
	// Cost. Without it the Pass may leave Cost at zero.
	NeedCost bool
	// Moved counts rows whose cluster changed; Distances counts distance
	// (or loss) evaluations between a row and a center, a dot product of
	// the blocked kernel counting as one. Center–center distances are not
	// counted. Add to them atomically.
	Moved     atomic.Int64
	Distances atomic.Int64
}
