package sample

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestWithout(t *testing.T) {
	rnd := rand.New(rand.NewPCG(1, 2))
	s := Without(rnd, 50, 20)
	require.Len(t, s, 20)
	seen := map[int]bool{}
	for _, i := range s {
		require.True(t, i >= 0 && i < 50)
		require.False(t, seen[i], "duplicate %d", i)
		seen[i] = true
	}
	// Same generator state, same subset.
	again := Without(rand.New(rand.NewPCG(1, 2)), 50, 20)
	require.Equal(t, s, again)
	// m == n is a permutation.
	all := Without(rnd, 10, 10)
	slices.Sort(all)
	require.Equal(t, []int{0, 1, 2, 3, 4, 5, 6, 7, 8, 9}, all)
	require.Panics(t, func() { Without(rnd, 3, 4) })
}

// Every index is drawn with probability m/n; over many draws the counts are
// within 5 standard errors of the binomial expectation (common practice).
func TestWithoutUniform(t *testing.T) {
	rnd := rand.New(rand.NewPCG(3, 4))
	const n, m, draws = 10, 3, 20000
	counts := make([]int, n)
	for range draws {
		for _, i := range Without(rnd, n, m) {
			counts[i]++
		}
	}
	p := float64(m) / n
	mean, sd := draws*p, math.Sqrt(draws*p*(1-p))
	for i, c := range counts {
		require.InDelta(t, mean, float64(c), 5*sd, "index %d", i)
	}
}
