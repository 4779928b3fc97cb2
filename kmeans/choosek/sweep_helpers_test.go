package choosek

import (
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// sweepMixture returns rows drawn from spherical normal clusters with the
// given centres (one row of centres per cluster), sizes[c] rows each, and
// their cluster of origin. Invented data for tests.
func sweepMixture(centres [][]float64, sizes []int, sd float64, seed uint64) (*mat.Dense, []int) {
	rnd := rand.New(rand.NewPCG(seed, 11))
	d := len(centres[0])
	var vals []float64
	var truth []int
	for c, m := range sizes {
		for range m {
			for j := range d {
				vals = append(vals, centres[c][j]+sd*rnd.NormFloat64())
			}
			truth = append(truth, c)
		}
	}
	return mat.NewDense(len(truth), d, vals), truth
}

// sweepUniform returns n rows drawn uniformly from the unit cube of
// dimension d. Invented data for tests.
func sweepUniform(n, d int, seed uint64) *mat.Dense {
	rnd := rand.New(rand.NewPCG(seed, 13))
	x := mat.NewDense(n, d, nil)
	for i := range n {
		for j := range d {
			x.Set(i, j, rnd.Float64())
		}
	}
	return x
}

// sweepRange returns lo, lo+1, ..., hi.
func sweepRange(lo, hi int) []int {
	var ks []int
	for k := lo; k <= hi; k++ {
		ks = append(ks, k)
	}
	return ks
}
