package quantile_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/stat"

	"github.com/centroidlab/centroid/internal/quantile"
)

// pairsOf returns the pairs of values and weights (nil = all ones).
func pairsOf(x, w []float64) []quantile.Pair {
	out := make([]quantile.Pair, len(x))
	for i, v := range x {
		out[i] = quantile.Pair{Value: v, Weight: 1}
		if w != nil {
			out[i].Weight = w[i]
		}
	}
	return out
}

// gonumQuantile is the reference: gonum's stat.Quantile with stat.Empirical
// on the values sorted by gonum's stat.SortWeighted.
func gonumQuantile(p float64, x, w []float64) float64 {
	x = slices.Clone(x)
	if w != nil {
		w = slices.Clone(w)
		stat.SortWeighted(x, w)
	} else {
		slices.Sort(x)
	}
	return stat.Quantile(p, stat.Empirical, x, w)
}

// bruteForce is the definition written out: the smallest value v of
// positive weight whose cumulative weight Σ{w : value ≤ v} reaches p·W.
func bruteForce(p float64, x, w []float64) float64 {
	var total float64
	for i := range x {
		total += weightOf(w, i)
	}
	best := math.Inf(1)
	for i, v := range x {
		if weightOf(w, i) == 0 {
			continue
		}
		var c float64
		for k, u := range x {
			if u <= v {
				c += weightOf(w, k)
			}
		}
		if c >= p*total && v < best {
			best = v
		}
	}
	return best
}

func weightOf(w []float64, i int) float64 {
	if w == nil {
		return 1
	}
	return w[i]
}

// data returns n values and weights of the named kind.
func data(kind string, n int, seed uint64) (x, w []float64) {
	rnd := rand.New(rand.NewPCG(seed, 3))
	x = make([]float64, n)
	for i := range x {
		x[i] = 100 * rnd.NormFloat64()
		if kind == "ties" || kind == "dyadic" {
			x[i] = float64(rnd.IntN(7)) // many equal values
		}
	}
	switch kind {
	case "unweighted", "ties":
		return x, nil
	case "dyadic": // multiples of 1/4 and zeros: every sum is exact
		w = make([]float64, n)
		for i := range w {
			w[i] = float64(rnd.IntN(9)) / 4
		}
		w[rnd.IntN(n)] = 1 // a positive total
		return x, w
	}
	w = make([]float64, n) // continuous weights, about a fifth zero
	for i := range w {
		if rnd.IntN(5) > 0 {
			w[i] = 3 * rnd.Float64()
		}
	}
	w[rnd.IntN(n)] = 0.5
	return x, w
}

// levels are fixed levels, including 0, 1 and levels where p·n is an
// integer, so that cumulative weights hit p·W exactly.
var levels = []float64{0, 0.01, 0.1, 0.125, 0.25, 1.0 / 3, 0.5, 0.6, 0.75, 0.875, 0.9, 0.99, 1}

func TestOfAgainstGonum(t *testing.T) {
	for _, kind := range []string{"unweighted", "ties", "dyadic"} {
		for _, n := range []int{1, 2, 3, 4, 7, 8, 16, 33, 100} {
			t.Run(fmt.Sprintf("%s/n=%d", kind, n), func(t *testing.T) {
				x, w := data(kind, n, uint64(n))
				pairs := pairsOf(x, w)
				quantile.Sort(pairs)
				for _, p := range levels {
					want := bruteForce(p, x, w)
					got := quantile.Of(p, pairs)
					require.Equal(t, want, got, "p=%v: brute force", p)
					if p == 0 && w != nil && pairs[0].Weight == 0 {
						continue // gonum returns a leading zero-weight value at p = 0 (documented)
					}
					// Reference: gonum stat.Quantile(p, stat.Empirical, x, w).
					// Unweighted and dyadic weights sum exactly in any
					// order, so the results are the same bits.
					assert.Equal(t, gonumQuantile(p, x, w), got, "p=%v: gonum", p)
				}
			})
		}
	}
}

func TestOfAgainstGonumContinuousWeights(t *testing.T) {
	rnd := rand.New(rand.NewPCG(5, 5))
	for _, n := range []int{1, 5, 64, 257} {
		t.Run(fmt.Sprintf("n=%d", n), func(t *testing.T) {
			x, w := data("continuous", n, uint64(n)+40)
			pairs := pairsOf(x, w)
			quantile.Sort(pairs)
			for range 200 {
				// Random levels inside (0, 1): p·W almost surely hits no
				// cumulative weight, where the order of summation of W
				// could matter.
				p := rnd.Float64()
				// Reference: gonum stat.Quantile(p, stat.Empirical, x, w).
				assert.Equal(t, gonumQuantile(p, x, w), quantile.Of(p, pairs), "p=%v", p)
			}
			// At the ends: the smallest and the largest value of positive
			// weight (brute force).
			assert.Equal(t, bruteForce(0, x, w), quantile.Of(0, pairs))
			assert.Equal(t, bruteForce(1, x, w), quantile.Of(1, pairs))
		})
	}
}

func TestOfUnweightedIsOrderStatistic(t *testing.T) {
	// Hyndman & Fan (1996) definition 1: the ⌈p·n⌉-th smallest value
	// (the smallest for p = 0).
	for _, n := range []int{1, 2, 3, 4, 5, 10, 99} {
		x, _ := data("unweighted", n, uint64(n)+7)
		sorted := slices.Sorted(slices.Values(x))
		pairs := pairsOf(x, nil)
		quantile.Sort(pairs)
		for _, p := range levels {
			k := max(1, int(math.Ceil(p*float64(n))))
			assert.Equal(t, sorted[k-1], quantile.Of(p, pairs), "n=%d p=%v", n, p)
		}
	}
}

func TestOfByHand(t *testing.T) {
	cases := []struct {
		name    string
		x, w    []float64
		p, want float64
	}{
		// Definition 1 of Hyndman & Fan (1996), by hand.
		{"median of 1 2 3 4 is the lower middle", []float64{4, 1, 3, 2}, nil, 0.5, 2},
		{"first quartile of 1 2 3 4", []float64{1, 2, 3, 4}, nil, 0.25, 1},
		{"third quartile of 1 2 3 4", []float64{1, 2, 3, 4}, nil, 0.75, 3},
		{"median of 1..5", []float64{5, 4, 3, 2, 1}, nil, 0.5, 3},
		{"one value", []float64{7}, nil, 0.3, 7},
		{"p = 0 is the minimum", []float64{3, 1, 2}, nil, 0, 1},
		{"p = 1 is the maximum", []float64{3, 1, 2}, nil, 1, 3},
		// Weights 3 1 1 1 on 10 20 30 40: cumulative 3 4 5 6 of W = 6.
		{"weighted median", []float64{10, 20, 30, 40}, []float64{3, 1, 1, 1}, 0.5, 10},
		{"weighted 0.6", []float64{10, 20, 30, 40}, []float64{3, 1, 1, 1}, 0.6, 20},
		{"weighted 0.75", []float64{10, 20, 30, 40}, []float64{3, 1, 1, 1}, 0.75, 30},
		// Zero weights are never returned, even at the ends.
		{"leading zero weight at p = 0", []float64{1, 2, 3}, []float64{0, 1, 1}, 0, 2},
		{"trailing zero weight at p = 1", []float64{1, 2, 3}, []float64{1, 1, 0}, 1, 2},
		{"inner zero weight", []float64{1, 2, 3}, []float64{1, 0, 1}, 0.75, 3},
		{"infinite values", []float64{math.Inf(-1), 0, math.Inf(1)}, nil, 1, math.Inf(1)},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			pairs := pairsOf(c.x, c.w)
			quantile.Sort(pairs)
			assert.Equal(t, c.want, quantile.Of(c.p, pairs))
			assert.Equal(t, c.want, bruteForce(c.p, c.x, c.w), "the brute force agrees")
		})
	}
}

func TestIntegerWeightsAreRepetitions(t *testing.T) {
	x, _ := data("unweighted", 40, 11)
	rnd := rand.New(rand.NewPCG(11, 11))
	w := make([]float64, len(x))
	var repeated []float64
	for i, v := range x {
		w[i] = float64(rnd.IntN(4))
		for range int(w[i]) {
			repeated = append(repeated, v)
		}
	}
	w[0]++
	repeated = append(repeated, x[0])
	a, b := pairsOf(x, w), pairsOf(repeated, nil)
	quantile.Sort(a)
	quantile.Sort(b)
	for _, p := range levels {
		assert.Equal(t, quantile.Of(p, b), quantile.Of(p, a), "p=%v", p)
	}
}

func TestLevelsEqualsOf(t *testing.T) {
	for _, kind := range []string{"unweighted", "ties", "dyadic", "continuous"} {
		t.Run(kind, func(t *testing.T) {
			x, w := data(kind, 77, 21)
			pairs := pairsOf(x, w)
			quantile.Sort(pairs)
			before := slices.Clone(pairs)
			ps := []float64{0, 0, 0.25, 0.5, 0.5, 0.9, 0.99, 1, 1}
			dst := make([]float64, len(ps))
			got := quantile.Levels(dst, ps, pairs)
			require.Equal(t, &dst[0], &got[0], "returns dst")
			for i, p := range ps {
				assert.Equal(t, math.Float64bits(quantile.Of(p, pairs)), math.Float64bits(dst[i]), "p=%v", p)
			}
			assert.Equal(t, before, pairs, "pairs unmodified")
			assert.Empty(t, quantile.Levels(nil, nil, pairs))
		})
	}
}

func TestSort(t *testing.T) {
	x, w := data("continuous", 50, 31)
	pairs := pairsOf(x, w)
	quantile.Sort(pairs)
	assert.True(t, slices.IsSortedFunc(pairs, func(a, b quantile.Pair) int {
		switch {
		case a.Value < b.Value:
			return -1
		case a.Value > b.Value:
			return 1
		}
		return 0
	}))
	// Every pair keeps its weight: the multiset is the same (gonum's
	// stat.SortWeighted sorts the same values with their weights).
	xs, ws := slices.Clone(x), slices.Clone(w)
	stat.SortWeighted(xs, ws)
	for i, p := range pairs {
		assert.Equal(t, xs[i], p.Value)
	}
	for _, p := range pairs {
		i := slices.Index(x, p.Value)
		require.GreaterOrEqual(t, i, 0)
		assert.Equal(t, w[i], p.Weight)
	}
}

func TestAllocatesNothing(t *testing.T) {
	x, w := data("continuous", 200, 41)
	pairs := pairsOf(x, w)
	ps := []float64{0.5, 0.9, 0.99}
	dst := make([]float64, 3)
	allocs := testing.AllocsPerRun(50, func() {
		quantile.Sort(pairs)
		quantile.Of(0.5, pairs)
		quantile.Levels(dst, ps, pairs)
	})
	assert.Zero(t, allocs)
}

func TestPanics(t *testing.T) {
	good := pairsOf([]float64{1, 2, 3}, nil)
	cases := []struct {
		name string
		fn   func()
	}{
		{"no pairs", func() { quantile.Of(0.5, nil) }},
		{"p below 0", func() { quantile.Of(-0.1, good) }},
		{"p above 1", func() { quantile.Of(1.5, good) }},
		{"p NaN", func() { quantile.Of(math.NaN(), good) }},
		{"unsorted", func() { quantile.Of(0.5, pairsOf([]float64{2, 1}, nil)) }},
		{"NaN value first", func() { quantile.Of(0.5, pairsOf([]float64{math.NaN()}, nil)) }},
		{"NaN value later", func() { quantile.Of(0.5, pairsOf([]float64{1, math.NaN()}, nil)) }},
		{"negative weight", func() { quantile.Of(0.5, pairsOf([]float64{1, 2}, []float64{1, -1})) }},
		{"NaN weight", func() { quantile.Of(0.5, pairsOf([]float64{1, 2}, []float64{1, math.NaN()})) }},
		{"+Inf weight", func() { quantile.Of(0.5, pairsOf([]float64{1, 2}, []float64{1, math.Inf(1)})) }},
		{"zero total", func() { quantile.Of(0.5, pairsOf([]float64{1, 2}, []float64{0, 0})) }},
		{"overflowing total", func() { quantile.Of(0.5, pairsOf([]float64{1, 2}, []float64{math.MaxFloat64, math.MaxFloat64})) }},
		{"Levels length", func() { quantile.Levels(make([]float64, 1), []float64{0.1, 0.2}, good) }},
		{"Levels descending", func() { quantile.Levels(make([]float64, 2), []float64{0.5, 0.2}, good) }},
		{"Levels level NaN", func() { quantile.Levels(make([]float64, 1), []float64{math.NaN()}, good) }},
		{"Levels no pairs", func() { quantile.Levels(nil, nil, nil) }},
	}
	for _, c := range cases {
		assert.Panics(t, c.fn, c.name)
	}
	assert.NotPanics(t, func() { quantile.Of(0.5, good) })
}

// benchmarkSortLevels measures sorting n pairs and reading three levels,
// the work of one cluster's training quantiles.
func benchmarkSortLevels(b *testing.B, n int) {
	x, w := data("continuous", n, 1)
	src := pairsOf(x, w)
	pairs := make([]quantile.Pair, n)
	ps, dst := []float64{0.5, 0.9, 0.99}, make([]float64, 3)
	b.ReportAllocs()
	for b.Loop() {
		copy(pairs, src)
		quantile.Sort(pairs)
		quantile.Levels(dst, ps, pairs)
	}
}

func BenchmarkSortLevelsSmall(b *testing.B)  { benchmarkSortLevels(b, 100) }
func BenchmarkSortLevelsMedium(b *testing.B) { benchmarkSortLevels(b, 10000) }
