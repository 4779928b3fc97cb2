package validate

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestClusterJaccardBadInput(t *testing.T) {
	ref := []int{0, 0, 1, 1}
	cases := []struct {
		name             string
		ref, other, rows []int
		want             error
	}{
		{"empty ref", nil, []int{0}, []int{0}, ErrEmpty},
		{"empty other", ref, nil, nil, ErrEmpty},
		{"rows length", ref, []int{0, 1}, []int{0}, ErrLength},
		{"nil rows length", ref, []int{0, 1}, nil, ErrLength},
		{"row too big", ref, []int{0, 1}, []int{0, 4}, ErrRow},
		{"row negative", ref, []int{0, 1}, []int{-1, 2}, ErrRow},
		{"negative ref label", []int{0, -2}, []int{0}, []int{0}, ErrLabel},
		{"negative other label", ref, []int{0, -1}, []int{0, 1}, ErrLabel},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, _, err := ClusterJaccard(c.ref, c.other, c.rows)
			require.ErrorIs(t, err, c.want)
		})
	}
}

// Worked by hand with the set definition of Hennig 2007: for each reference
// cluster C, C* = C ∩ drawn rows and best = max_D |C* ∩ D| / |C* ∪ D|.
func TestClusterJaccardWorked(t *testing.T) {
	ref := []int{0, 0, 0, 1, 1, 1, 2, 2, 7}
	// Bootstrap-like draw: row 6 twice, rows 5, 7, 8 not drawn.
	rows := []int{0, 1, 2, 3, 4, 6, 6}
	other := []int{5, 5, 7, 7, 7, 9, 9}
	// C*0 = {0,1,2}, C*1 = {3,4}, C*2 = {6}, C*7 = ∅.
	// D5 = {0,1}, D7 = {2,3,4}, D9 = {6}.
	// C0: D5 2/3, D7 1/5 → 2/3. C1: D7 2/3. C2: D9 1/1. C7: NaN.
	rows0, other0 := slices.Clone(rows), slices.Clone(other)
	labels, best, err := ClusterJaccard(ref, other, rows)
	require.NoError(t, err)
	assert.Equal(t, []int{0, 1, 2, 7}, labels)
	require.Len(t, best, 4)
	assert.Equal(t, []float64{2.0 / 3, 2.0 / 3, 1}, best[:3])
	assert.True(t, math.IsNaN(best[3]))
	assert.Equal(t, rows0, rows)
	assert.Equal(t, other0, other)

	// The two copies of row 6 now disagree (9 and 7): row 6 belongs to both
	// clusters, D7 = {2,3,4,6}, D9 = {6}. C1: D7 2/|{2,3,4,6}| = 2/4.
	// C2: D7 1/4, D9 1/1 → 1. C0 unchanged 2/3.
	other[6] = 7
	_, best, err = ClusterJaccard(ref, other, rows)
	require.NoError(t, err)
	assert.Equal(t, []float64{2.0 / 3, 0.5, 1}, best[:3])

	// nil rows: other labels the full data. Splitting cluster 1 in two:
	// C1 = {3,4,5}: best |{3,4}|/|{3,4,5}| = 2/3.
	_, best, err = ClusterJaccard(ref, []int{0, 0, 0, 1, 1, 4, 2, 2, 3}, nil)
	require.NoError(t, err)
	assert.Equal(t, []float64{1, 2.0 / 3, 1, 1}, best)
}

// bruteJaccard follows the definition with explicit row sets.
func bruteJaccard(ref, other, rows []int) map[int]float64 {
	drawn := map[int]bool{}
	clusters := map[int]map[int]bool{} // other label → set of rows
	for k, r := range rows {
		drawn[r] = true
		if clusters[other[k]] == nil {
			clusters[other[k]] = map[int]bool{}
		}
		clusters[other[k]][r] = true
	}
	out := map[int]float64{}
	for _, l := range ref {
		cStar := map[int]bool{}
		for r, m := range ref {
			if m == l && drawn[r] {
				cStar[r] = true
			}
		}
		if len(cStar) == 0 {
			out[l] = math.NaN()
			continue
		}
		best := 0.0
		for _, d := range clusters {
			inter := 0
			for r := range cStar {
				if d[r] {
					inter++
				}
			}
			best = max(best, float64(inter)/float64(len(cStar)+len(d)-inter))
		}
		out[l] = best
	}
	return out
}

func TestClusterJaccardBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 1))
	for range 100 {
		n := 1 + rng.IntN(50)
		ref := randomLabels(rng, n, 1+rng.IntN(6))
		m := 1 + rng.IntN(2*n)
		rows := make([]int, m)
		for k := range rows {
			rows[k] = rng.IntN(n)
		}
		other := randomLabels(rng, m, 1+rng.IntN(6))
		labels, best, err := ClusterJaccard(ref, other, rows)
		require.NoError(t, err)
		want := bruteJaccard(ref, other, rows)
		require.Len(t, labels, len(want))
		require.True(t, slices.IsSorted(labels))
		for i, l := range labels {
			if math.IsNaN(want[l]) {
				assert.True(t, math.IsNaN(best[i]), "label %d", l)
				continue
			}
			assert.Equal(t, want[l], best[i], "label %d", l)
		}
	}
}

// TestReadJaccard checks the reading against the thresholds of C. Hennig,
// "Cluster-wise assessment of cluster stability", CSDA 52, 2007, as they
// are commonly applied (common practice): 0.75 and above reproduced, below
// 0.6 not reproduced, at most 0.5 in one refit lost.
func TestReadJaccard(t *testing.T) {
	for _, c := range []struct {
		mean float64
		want Reproduction
	}{
		{0, NotReproduced}, {0.5, NotReproduced}, {0.599, NotReproduced}, {math.NaN(), NotReproduced},
		{0.6, PartlyReproduced}, {0.7499, PartlyReproduced},
		{0.75, Reproduced}, {0.9, Reproduced}, {1, Reproduced},
	} {
		assert.Equal(t, c.want, ReadJaccard(c.mean), "%v", c.mean)
	}
	assert.Equal(t, 0.5, JaccardLost)
	assert.Equal(t, 0.6, JaccardPartly)
	assert.Equal(t, 0.75, JaccardReproduced)
	assert.Equal(t, "not reproduced|partly reproduced|reproduced|Reproduction(7)",
		NotReproduced.String()+"|"+PartlyReproduced.String()+"|"+Reproduced.String()+"|"+Reproduction(7).String())
	var zero Reproduction
	assert.Equal(t, NotReproduced, zero, "the zero value is the cautious reading")
}
