package profile

import (
	"errors"
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

// failWriter fails every write.
type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, errors.New("disk full") }
