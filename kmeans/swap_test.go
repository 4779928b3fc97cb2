package kmeans

import (
	"context"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/data/reference"
)

// labelMeans returns the mean of every labelled class: the centers of the
// published partition.
func labelMeans(x *mat.Dense, labels []int, k int) *mat.Dense {
	n, d := x.Dims()
	c := mat.NewDense(k, d, nil)
	cnt := make([]float64, k)
	for i := range n {
		l := labels[i]
		cnt[l]++
		for j := range d {
			c.Set(l, j, c.At(l, j)+x.At(i, j))
		}
	}
	for l := range k {
		for j := range d {
			c.Set(l, j, c.At(l, j)/cnt[l])
		}
	}
	return c
}

// partitionCost is the within-cluster sum of squares of the labelled
// partition around its label means, by brute force.
func partitionCost(x *mat.Dense, labels []int, means *mat.Dense) float64 {
	var s float64
	for i, l := range labels {
		a, b := x.RawRowView(i), means.RawRowView(l)
		for j := range a {
			e := a[j] - b[j]
			s += e * e
		}
	}
	return s
}

// checkFound asserts centroid index 0 in both directions (Fränti, Rezaei
// & Zhao 2014; computed by brute force in orphans) against the label means
// and a cost at most 1.001 times that of the published partition.
func checkFound(t *testing.T, name string, res *Result, truth *mat.Dense, trueCost float64) {
	t.Helper()
	found := res.Model.Centers()
	assert.Equal(t, 0, orphans(found, truth), "%s: true centers no found center maps to", name)
	assert.Equal(t, 0, orphans(truth, found), "%s: found centers no true center maps to", name)
	assert.LessOrEqual(t, res.Cost, 1.001*trueCost, "%s: cost / cost of the published partition = %.5f", name, res.Cost/trueCost)
}

// TestDefaultFindsReferenceClusters: with default settings and any of ten
// seeds, Cluster finds the published partitions of S1–S4 (Fränti &
// Virmajoki 2006), A1–A3 (Kärkkäinen & Fränti 2002) and Unbalance (Rezaei &
// Fränti 2016) — centroid index 0 against the label means and a cost
// within 0.1 % of the partition's (shared datasets, PROVENANCE.md).
func TestDefaultFindsReferenceClusters(t *testing.T) {
	seeds := uint64(10)
	if raceOn {
		seeds = 3
	}
	for _, c := range []struct {
		name string
		k    int
	}{{"s1", 15}, {"s2", 15}, {"s3", 15}, {"s4", 15}, {"a1", 20}, {"a2", 35}, {"a3", 50}, {"unbalance", 8}} {
		t.Run(c.name, func(t *testing.T) {
			s := reference.LoadOrSkip(t, c.name)
			truth := labelMeans(s.X, s.Labels, c.k)
			trueCost := partitionCost(s.X, s.Labels, truth)
			for seed := range seeds {
				res, err := Cluster(context.Background(), Problem{Data: s.X, K: c.k}, &Settings{Seed: seed}, nil)
				require.NoError(t, err)
				checkFound(t, c.name, res, truth, trueCost)
			}
		})
	}
}

// gridMixture draws n rows from a 10 × 10 grid of spherical Gaussian
// clusters (spacing 10, standard deviation 1.5; invented data, shaped like
// the well-known grid benchmark) and returns them with the labels.
func gridMixture(n int, seed uint64) (*mat.Dense, []int) {
	rnd := rand.New(rand.NewPCG(seed, 99))
	x := mat.NewDense(n, 2, nil)
	labels := make([]int, n)
	for i := range n {
		c := i % 100
		labels[i] = c
		x.Set(i, 0, float64(c%10)*10+1.5*rnd.NormFloat64())
		x.Set(i, 1, float64(c/10)*10+1.5*rnd.NormFloat64())
	}
	return x, labels
}

// TestDefaultFindsGrid: 100 000 rows in 100 clusters, k = 100, default
// settings: every true cluster found, for ten seeds (three under the race
// detector). One k-means++ restart alone leaves one or two wrong centers.
func TestDefaultFindsGrid(t *testing.T) {
	if testing.Short() {
		t.Skip("100 000 rows, k = 100")
	}
	x, labels := gridMixture(100000, 1)
	truth := labelMeans(x, labels, 100)
	trueCost := partitionCost(x, labels, truth)
	seeds := uint64(10)
	if raceOn {
		seeds = 2
	}
	plainWrong := 0
	for seed := range seeds {
		res, err := Cluster(context.Background(), Problem{Data: x, K: 100}, &Settings{Seed: seed}, nil)
		require.NoError(t, err)
		checkFound(t, "grid", res, truth, trueCost)
		if seed == 0 {
			plain, err := Cluster(context.Background(), Problem{Data: x, K: 100}, &Settings{Seed: seed, Restarts: 1, SwapTrials: -1}, nil)
			require.NoError(t, err)
			plainWrong = orphans(truth, plain.Model.Centers())
		}
	}
	assert.Positive(t, plainWrong, "the grid is hard for one plain restart")
}

// TestSwapNeverRaisesCost: the refined result costs no more than the best
// restart it started from (the same restarts without refinement), for
// every solver.
func TestSwapNeverRaisesCost(t *testing.T) {
	x := blobs(3000, 2, 25, 11)
	for _, m := range []Method{Lloyd{}, Hamerly{}, Elkan{}} {
		for seed := range uint64(4) {
			base, err := Cluster(context.Background(), Problem{Data: x, K: 25}, &Settings{Seed: seed, Restarts: 2, SwapTrials: -1}, m)
			require.NoError(t, err)
			ref, err := Cluster(context.Background(), Problem{Data: x, K: 25}, &Settings{Seed: seed, Restarts: 2, SwapTrials: 500}, m)
			require.NoError(t, err)
			assert.LessOrEqual(t, ref.Cost, base.Cost, "seed %d", seed)
			assert.Equal(t, 500, max(ref.Stats.SwapTrials, 500), "at most the trials asked for")
			if ref.Stats.Refined {
				assert.Less(t, ref.Cost, base.Cost)
				assert.Positive(t, ref.Stats.SwapsAccepted)
			} else {
				assert.Equal(t, base.Cost, ref.Cost)
			}
			// The result is a k-means fixed point: every row on its nearest
			// returned center.
			c := ref.Model.ScaledCenters()
			for i := range 3000 {
				require.Equal(t, bruteNearest(ref.Model.Metric(), x.RawRowView(i), c), ref.Assignments[i])
			}
		}
	}
}

// TestSwapDeterministic: the refinement is reproducible from the seed and
// bit-identical for any number of workers.
func TestSwapDeterministic(t *testing.T) {
	s := reference.LoadOrSkip(t, "a2")
	var first *Result
	for _, w := range []int{1, 2, 7} {
		res, err := Cluster(context.Background(), Problem{Data: s.X, K: 35}, &Settings{Seed: 5, Workers: w}, nil)
		require.NoError(t, err)
		require.Positive(t, res.Stats.SwapTrials)
		if first == nil {
			first = res
			continue
		}
		require.Equal(t, first.Assignments, res.Assignments, "workers=%d", w)
		require.Equal(t, first.Cost, res.Cost)
		require.Equal(t, first.Model.ScaledCenters().RawMatrix().Data, res.Model.ScaledCenters().RawMatrix().Data)
		require.Equal(t, first.Stats.SwapTrials, res.Stats.SwapTrials)
		require.Equal(t, first.Stats.SwapsAccepted, res.Stats.SwapsAccepted)
	}
}

// TestSwapRule: the automatic rule refines Euclidean problems with
// k ≥ MinSwapK and d ≤ MaxSwapDim only, with DefaultRefinedRestarts
// restarts; explicit settings win.
func TestSwapRule(t *testing.T) {
	x := blobs(2000, 2, 10, 3)
	res, err := Cluster(context.Background(), Problem{Data: x, K: 10}, nil, nil)
	require.NoError(t, err)
	assert.Positive(t, res.Stats.SwapTrials)
	assert.Len(t, res.Stats.RestartCosts, DefaultRefinedRestarts)
	res, err = Cluster(context.Background(), Problem{Data: x, K: MinSwapK - 1}, nil, nil)
	require.NoError(t, err)
	assert.Zero(t, res.Stats.SwapTrials)
	assert.Len(t, res.Stats.RestartCosts, DefaultRestarts)
	wide := blobs(2000, MaxSwapDim+1, 10, 3)
	res, err = Cluster(context.Background(), Problem{Data: wide, K: 10}, nil, nil)
	require.NoError(t, err)
	assert.Zero(t, res.Stats.SwapTrials)
	res, err = Cluster(context.Background(), Problem{Data: wide, K: 10}, &Settings{SwapTrials: 50}, nil)
	require.NoError(t, err)
	assert.Equal(t, 50, max(res.Stats.SwapTrials, 50))
	assert.Positive(t, res.Stats.SwapTrials)
	res, err = Cluster(context.Background(), Problem{Data: x, K: 10}, &Settings{Restarts: 4}, nil)
	require.NoError(t, err)
	assert.Len(t, res.Stats.RestartCosts, 4)
	_, err = Cluster(context.Background(), Problem{Data: x, K: 10}, &Settings{SwapPatience: -1}, nil)
	require.ErrorIs(t, err, ErrSettings)
}
