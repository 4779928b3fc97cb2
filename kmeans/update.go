package kmeans

import (
	"slices"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/quantile"
)

// update moves the centers by the space's center rule from the merged
// statistics of the pass (and, for the median rule, the members), writing
// into next. Clusters left without weight are repaired and counted.
//
// Empty-cluster repair: every cluster that received no weight (or, for the
// unit-mean rule, whose members' unit vectors cancel out) gets a new center
// at a row that contributes most to the cost, w_i·loss(x_i, c_a(i)) with
// ties to the lowest row index. With several empty clusters the rows are
// taken in decreasing order of that contribution, skipping rows equal to one
// already taken, so no two repaired centers coincide. Such a row always
// exists because K never exceeds the number of distinct rows.
func (r *run) update(next []float64, st *Step, merged *Partial) {
	sp := r.sp
	var empty []int
	if sp.Rule == distance.MedianRule {
		empty = r.medians(next, st.Assign, merged)
	} else {
		empty, _ = merged.Centers(next, sp.Rule) // mean rules cannot fail
	}
	if len(empty) > 0 {
		r.repair(next, st, empty)
	}
}

// medians writes the coordinate-wise weighted median of each cluster's
// members into next and returns the clusters without weight. The weighted
// median is quantile.Of(0.5, …), the module's one quantile definition: the
// smallest member value v with Σ{w : value ≤ v} ≥ W/2, W the cluster's
// weight summed in sorted order.
func (r *run) medians(next []float64, assign []int, merged *Partial) []int {
	sp, k, d := r.sp, r.k, r.sp.D
	// Bucket row indices by cluster (counting sort keeps row order).
	start := make([]int, k+1)
	for _, a := range assign {
		start[a+1]++
	}
	for j := range k {
		start[j+1] += start[j]
	}
	if cap(r.order) < sp.N {
		r.order = make([]int, sp.N)
	}
	order := r.order[:sp.N]
	fill := slices.Clone(start[:k])
	for i, a := range assign {
		order[fill[a]] = i
		fill[a]++
	}
	var empty []int
	var buf []quantile.Pair
	for j := range k {
		members := order[start[j]:start[j+1]]
		if !(merged.Weight[j] > 0) {
			empty = append(empty, j)
			continue
		}
		for c := range d {
			buf = buf[:0]
			for _, i := range members {
				if w := sp.Weight(i); w > 0 {
					buf = append(buf, quantile.Pair{Value: sp.at(i, c), Weight: w})
				}
			}
			quantile.Sort(buf)
			next[j*d+c] = quantile.Of(0.5, buf)
		}
	}
	return empty
}

// repair places each empty cluster's center on a costly row (see update).
func (r *run) repair(next []float64, st *Step, empty []int) {
	sp, d := r.sp, r.sp.D
	if cap(r.contrib) < sp.N {
		r.contrib = make([]float64, sp.N)
	}
	contrib := r.contrib[:sp.N]
	sp.Parallel(func(b int) {
		lo, hi := sp.Block(b)
		buf := make([]float64, d)
		for i := lo; i < hi; i++ {
			a := st.Assign[i]
			contrib[i] = sp.Weight(i) * sp.loss(i, st.Centers[a*d:(a+1)*d], buf)
		}
	})
	r.distances += int64(sp.N)
	var taken []int
	for _, j := range empty {
		best := -1
		for i, c := range contrib {
			if !(c > 0) || (best >= 0 && c <= contrib[best]) {
				continue
			}
			if slices.ContainsFunc(taken, func(t int) bool { return sp.sameRow(t, i) }) {
				continue
			}
			best = i
		}
		if best < 0 {
			// Unreachable while K ≤ distinct rows; keep the old center.
			copy(next[j*d:(j+1)*d], st.Centers[j*d:(j+1)*d])
			continue
		}
		taken = append(taken, best)
		c := next[j*d : (j+1)*d]
		copy(c, sp.RowTo(c, best))
		if sp.invNorm != nil {
			for i := range c {
				c[i] *= sp.invNorm[best]
			}
		}
		r.repairs++
	}
}
