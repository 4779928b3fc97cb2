package validate

import (
	"fmt"
	"math"
	"slices"
)

// Thresholds for reading a reference cluster's Jaccard similarities over
// many resampled refits (see ClusterJaccard and ReadJaccard), following C.
// Hennig, "Cluster-wise assessment of cluster stability", Computational
// Statistics & Data Analysis 52:258–271, 2007. The values are common
// practice attributed to that paper (quoted from memory), not properties of
// the similarity itself.
const (
	// JaccardLost: a refit in which a cluster's best Jaccard similarity is
	// at most this value has lost the cluster: even its best match in the
	// refit shares at most half of the rows of their union.
	JaccardLost = 0.5
	// JaccardPartly: a cluster whose mean best Jaccard is at least this
	// value (and below JaccardReproduced) is partly reproduced: the refits
	// find a pattern there, but its exact membership varies.
	JaccardPartly = 0.6
	// JaccardReproduced: a cluster whose mean best Jaccard is at least
	// this value is reproduced by the refits.
	JaccardReproduced = 0.75
)

// Reproduction is how well refits of resampled data reproduce a cluster,
// read from its mean best Jaccard similarity by ReadJaccard. The zero value
// is NotReproduced, the cautious reading.
type Reproduction int

const (
	// NotReproduced: mean below JaccardPartly (0.6). The refits do not
	// find the cluster; do not build on it.
	NotReproduced Reproduction = iota
	// PartlyReproduced: mean from JaccardPartly (0.6) up to
	// JaccardReproduced (0.75). The refits find a pattern, but its rows
	// change from refit to refit.
	PartlyReproduced
	// Reproduced: mean at least JaccardReproduced (0.75).
	Reproduced
)

// String returns the reading in words: "not reproduced", "partly
// reproduced" or "reproduced".
func (r Reproduction) String() string {
	switch r {
	case NotReproduced:
		return "not reproduced"
	case PartlyReproduced:
		return "partly reproduced"
	case Reproduced:
		return "reproduced"
	}
	return fmt.Sprintf("Reproduction(%d)", int(r))
}

// ReadJaccard reads a cluster's mean best Jaccard similarity over
// resampled refits (the mean of ClusterJaccard's best over the refits that
// drew rows of the cluster) with the thresholds of Hennig (2007):
// Reproduced from 0.75, PartlyReproduced from 0.6, NotReproduced below
// (and for NaN, a cluster no refit saw).
func ReadJaccard(mean float64) Reproduction {
	switch {
	case mean >= JaccardReproduced:
		return Reproduced
	case mean >= JaccardPartly:
		return PartlyReproduced
	}
	return NotReproduced
}

// ClusterJaccard compares a reference clustering of a full data set with
// another clustering of rows drawn from it, cluster by cluster, as in
// Hennig's (2007) resampling assessment of cluster stability.
//
// ref labels the n rows of the full data. other labels a resample: other[k]
// is the label of full-data row rows[k]. rows may repeat a row (bootstrap
// draws) and need not cover every row (subsets); nil rows means other
// labels the full data row by row (for example a refit on jittered data),
// and then len(other) must equal n. A row drawn more than once counts once;
// if its copies got different labels it belongs to each of those clusters.
//
// For every reference cluster C the similarity is computed on the rows
// present in the resample, C* = C ∩ rows:
//
//	best(C) = max over clusters D of other of |C* ∩ D| / |C* ∪ D|
//
// the Jaccard similarity with the most similar cluster of other. It is 1
// when some cluster of other holds exactly C*, and NaN when no row of C was
// drawn (the refit says nothing about C; a driver averaging over refits
// should skip it). labels lists the distinct values of ref in ascending
// order and best[i] belongs to the cluster labels[i]; for a reference that
// uses every label 0..k-1, best[i] is cluster i. A stability driver averages
// best over many refits, reads the means with ReadJaccard and counts the
// refits in which best ≤ JaccardLost as losing the cluster.
//
// Labels follow the conventions of Contingency. It returns an error
// wrapping ErrEmpty if ref or other is empty, ErrLength if len(rows) (or n,
// for nil rows) differs from len(other), ErrLabel for a negative label and
// ErrRow for a row index outside [0, n). It costs O(m log m + n + R + C)
// for m = len(other) and R, C clusters, and allocates as much.
func ClusterJaccard(ref, other, rows []int) (labels []int, best []float64, err error) {
	if len(ref) == 0 || len(other) == 0 {
		return nil, nil, fmt.Errorf("%w: ref has %d rows and other has %d", ErrEmpty, len(ref), len(other))
	}
	n := len(ref)
	switch {
	case rows == nil && len(other) != n:
		return nil, nil, fmt.Errorf("%w: rows is nil but other has %d rows and ref has %d", ErrLength, len(other), n)
	case rows != nil && len(rows) != len(other):
		return nil, nil, fmt.Errorf("%w: rows has %d entries but other has %d", ErrLength, len(rows), len(other))
	}
	refCodes, refValues, err := labelCodes("ref", ref)
	if err != nil {
		return nil, nil, err
	}
	otherCodes, otherValues, err := labelCodes("other", other)
	if err != nil {
		return nil, nil, err
	}

	// Distinct (row, other cluster) memberships, ordered by row.
	c := uint64(len(otherValues))
	keys := make([]uint64, len(other))
	for k, code := range otherCodes {
		r := k
		if rows != nil {
			r = rows[k]
			if r < 0 || r >= n {
				return nil, nil, fmt.Errorf("%w: rows[%d] = %d, want 0 ≤ row < %d", ErrRow, k, r, n)
			}
		}
		keys[k] = uint64(r)*c + uint64(code)
	}
	slices.Sort(keys)
	keys = slices.Compact(keys)

	drawn := make([]int, len(refValues)) // |C*| per reference cluster
	pa := make([]int, len(keys))
	pb := make([]int, len(keys))
	last := -1
	for k, key := range keys {
		r := int(key / c)
		pa[k], pb[k] = refCodes[r], int(key%c)
		if r != last {
			drawn[refCodes[r]]++
			last = r
		}
	}
	// Cells count |C* ∩ D|; column sums count |D| in distinct rows.
	t := tableFromCodes(pa, pb, refValues, otherValues)
	best = make([]float64, len(refValues))
	for i := range best {
		if drawn[i] == 0 {
			best[i] = math.NaN()
			continue
		}
		for _, cell := range t.cells[t.rowStart[i]:t.rowStart[i+1]] {
			union := drawn[i] + t.colSums[cell.Col] - cell.Count
			best[i] = max(best[i], float64(cell.Count)/float64(union))
		}
	}
	return refValues, best, nil
}
