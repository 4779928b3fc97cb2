package kmeans

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
)

// blobs returns n rows of dimension d drawn around k well-separated centres
// (invented data for property tests only).
func blobs(n, d, k int, seed uint64) *mat.Dense {
	rnd := rand.New(rand.NewPCG(seed, 7))
	centres := make([]float64, k*d)
	for i := range centres {
		centres[i] = rnd.Float64() * 100
	}
	x := mat.NewDense(n, d, nil)
	for i := range n {
		c := rnd.IntN(k)
		for j := range d {
			x.Set(i, j, centres[c*d+j]+rnd.NormFloat64()*3)
		}
	}
	return x
}

// bruteNearest returns the index of the center (rows of c) with the lowest
// loss for x, the lowest index on ties.
func bruteNearest(m distance.Objective, x []float64, c *mat.Dense) int {
	k, _ := c.Dims()
	best, bl := -1, math.Inf(1)
	for j := range k {
		if l := m.Loss(x, c.RawRowView(j)); l < bl {
			best, bl = j, l
		}
	}
	return best
}

// weightedMedian is the smallest v with cumulative weight ≥ half the total,
// computed by brute force over all candidate values.
func weightedMedian(vals, w []float64) float64 {
	var total float64
	for _, x := range w {
		total += x
	}
	best := math.Inf(1)
	for _, v := range vals {
		var below float64
		for i, u := range vals {
			if u <= v {
				below += w[i]
			}
		}
		if below >= total/2 && v < best {
			best = v
		}
	}
	return best
}
