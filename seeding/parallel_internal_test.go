package seeding

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/distance"
)

// TestParallelRoundFollowsThePaper checks one sampling round against a
// brute-force reading of the paper's rule (Bahmani et al. 2012, algorithm
// 2, step 4): row x joins the candidates exactly when its draw u satisfies
// u < ℓ·w·D(x)/φ, with D the squared distance to the nearest candidate
// and φ = Σ w·D over all rows, both computed here directly.
func TestParallelRoundFollowsThePaper(t *testing.T) {
	rnd := rand.New(rand.NewPCG(8, 8))
	const n, d = 3000, 3
	x := make([]float64, n*d)
	w := make([]float64, n)
	for i := range n {
		for j := range d {
			x[i*d+j] = rnd.NormFloat64() * float64(1+i%4)
		}
		w[i] = float64(i % 3)
	}
	pl, err := Parallel{Oversampling: 40}.Plan(5, d, distance.Euclidean{}, 99)
	require.NoError(t, err)
	require.NoError(t, pl.SetFirst(x[:d]))
	for round := 1; round <= 3; round++ {
		before := slices.Clone(pl.cands)
		q := pl.NewPart()
		require.NoError(t, pl.Add(q, 0, x, w))
		// Brute force.
		nc := len(before) / d
		D := make([]float64, n)
		var phi float64
		for i := range n {
			D[i] = math.Inf(1)
			for j := range nc {
				D[i] = math.Min(D[i], distance.SqEuclidean(x[i*d:(i+1)*d], before[j*d:(j+1)*d]))
			}
			phi += w[i] * D[i]
		}
		var want [][]float64
		for i := range n {
			if w[i] > 0 && pl.uniform(round, uint64(i)) < 40*w[i]*D[i]/phi {
				want = append(want, x[i*d:(i+1)*d])
			}
		}
		assert.InEpsilon(t, phi, q.Cost, 1e-12)
		require.NoError(t, pl.Next(q))
		var got [][]float64
		for c := pl.cands[len(before):]; len(c) > 0; c = c[d:] {
			got = append(got, c[:d])
		}
		assert.Greater(t, len(want), 20, "round %d keeps about ℓ = 40 rows", round)
		assert.ElementsMatch(t, want, got, "round %d", round)
	}
}

// TestParallelUniformIsUniform checks the row draws: the mean and the
// share below 0.1 of 10⁵ draws within 5 standard errors (common practice),
// and no two rounds giving the same draw to a row.
func TestParallelUniformIsUniform(t *testing.T) {
	pl, err := Parallel{}.Plan(2, 1, nil, 5)
	require.NoError(t, err)
	const n = 100000
	var sum float64
	low := 0
	for i := range uint64(n) {
		u := pl.uniform(1, i)
		require.True(t, u > 0 && u < 1)
		require.NotEqual(t, u, pl.uniform(2, i))
		sum += u
		if u < 0.1 {
			low++
		}
	}
	assert.InDelta(t, 0.5, sum/n, 5*math.Sqrt(1.0/12/n))
	assert.InDelta(t, 0.1, float64(low)/n, 5*math.Sqrt(0.09/n))
}
