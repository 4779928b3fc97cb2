package synth

import (
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// Blobs returns n rows of dimension d drawn from a mixture of the given
// number of spherical Gaussian clusters: centers uniform in [0, 100]^d,
// standard deviation 4 in every coordinate, cluster of each row uniform.
// It panics if n, d or clusters is below 1.
func Blobs(n, d, clusters int, seed uint64) *mat.Dense {
	if n < 1 || d < 1 || clusters < 1 {
		panic("synth: Blobs needs n, d and clusters ≥ 1")
	}
	rnd := rand.New(rand.NewPCG(seed, uint64(n)*1_000_003+uint64(d)))
	centers := make([]float64, clusters*d)
	for i := range centers {
		centers[i] = rnd.Float64() * 100
	}
	x := make([]float64, n*d)
	for i := range n {
		c := centers[rnd.IntN(clusters)*d:]
		for j := range d {
			x[i*d+j] = c[j] + rnd.NormFloat64()*4
		}
	}
	return mat.NewDense(n, d, x)
}

// GridClusters is the number of true clusters in the benchmark grid's data.
const GridClusters = 50
