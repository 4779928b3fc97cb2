package seeding_test

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/data/reference"
	"github.com/centroidlab/centroid/internal/data/synth"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/seeding"
)

func TestParallelReproducibleAnyWorkers(t *testing.T) {
	data := synth.Blobs(6000, 5, 8, 3) // 5 fixed blocks
	weights := make([]float64, 6000)
	for i := range weights {
		weights[i] = float64(i%5) / 2 // a fifth of the rows have weight 0
	}
	for _, w := range [][]float64{nil, weights} {
		for _, m := range []distance.Metric{distance.Euclidean{}, distance.Cosine{}} {
			var first []float64
			for _, workers := range []int{1, 2, 7} {
				dst := mat.NewDense(8, 5, nil)
				p := seeding.Parallel{Workers: workers}
				require.NoError(t, p.Seed(dst, data, w, m, rand.New(rand.NewPCG(4, 2))))
				requireDistinct(t, dst)
				if first == nil {
					first = dst.RawMatrix().Data
					continue
				}
				require.Equal(t, first, dst.RawMatrix().Data, "workers %d", workers)
			}
			other := mat.NewDense(8, 5, nil)
			require.NoError(t, seeding.Parallel{}.Seed(other, data, w, m, rand.New(rand.NewPCG(5, 2))))
			assert.NotEqual(t, first, other.RawMatrix().Data, "another seed gives the same centers")
		}
	}
}

func TestParallelStridedData(t *testing.T) {
	dense := gaussRows(rand.New(rand.NewPCG(3, 3)), 3000, 4)
	a, b := mat.NewDense(7, 4, nil), mat.NewDense(7, 4, nil)
	require.NoError(t, seeding.Parallel{}.Seed(a, dense, nil, nil, rand.New(rand.NewPCG(1, 1))))
	require.NoError(t, seeding.Parallel{Workers: 2}.Seed(b, strided(dense), nil, nil, rand.New(rand.NewPCG(1, 1))))
	assert.Equal(t, a.RawMatrix().Data, b.RawMatrix().Data)
}

func TestParallelCentersAreDistinctRowsOfPositiveWeight(t *testing.T) {
	rnd := rand.New(rand.NewPCG(11, 0))
	const n, d, k = 60, 4, 10
	dense := gaussRows(rnd, n, d)
	weights := make([]float64, n)
	for i := range weights {
		if i%3 != 0 {
			weights[i] = 0.5 + rnd.Float64()
		}
	}
	for seed := range uint64(50) {
		dst := mat.NewDense(k, d, nil)
		require.NoError(t, seeding.Parallel{}.Seed(dst, dense, weights, nil, rand.New(rand.NewPCG(seed, 1))))
		for j := range k {
			i := rowOf(dense, dst.RawRowView(j))
			require.GreaterOrEqualf(t, i, 0, "center %d is not a row of data", j)
			require.Positivef(t, weights[i], "center %d is row %d of weight 0", j, i)
		}
		requireDistinct(t, dst)
	}
}

func TestParallelFewDistinctRows(t *testing.T) {
	data, values := fiveValues()
	for seed := range uint64(20) {
		dst := mat.NewDense(5, 2, nil)
		// A small oversampling makes the rounds run out of candidates
		// unless the extra rounds work.
		require.NoError(t, seeding.Parallel{Oversampling: 0.5}.Seed(dst, data, nil, nil, rand.New(rand.NewPCG(seed, 2))))
		got := make([][]float64, 5)
		for j := range got {
			got[j] = dst.RawRowView(j)
		}
		assert.ElementsMatch(t, values, got)
	}
	err := seeding.Parallel{}.Seed(mat.NewDense(6, 2, nil), data, nil, nil, rand.New(rand.NewPCG(1, 2)))
	assert.ErrorIs(t, err, seeding.ErrK)
	// x and 2x have cosine dissimilarity 0: two directions only.
	cos := mat.NewDense(3, 2, []float64{1, 0, 2, 0, 0, 1})
	err = seeding.Parallel{}.Seed(mat.NewDense(3, 2, nil), cos, nil, distance.Cosine{}, rand.New(rand.NewPCG(1, 1)))
	assert.ErrorIs(t, err, seeding.ErrK)
}

func TestParallelBadOptions(t *testing.T) {
	data := gaussRows(rand.New(rand.NewPCG(1, 1)), 50, 2)
	rnd := rand.New(rand.NewPCG(1, 1))
	for _, p := range []seeding.Parallel{{Rounds: -1}, {Oversampling: -1}, {Oversampling: math.NaN()}, {Oversampling: math.Inf(1)}, {Workers: -1}} {
		err := p.Seed(mat.NewDense(3, 2, nil), data, nil, nil, rnd)
		assert.ErrorIs(t, err, seeding.ErrParameter, "%+v", p)
	}
	bad := mat.DenseCopyOf(data)
	bad.Set(7, 1, math.NaN())
	assert.ErrorIs(t, seeding.Parallel{}.Seed(mat.NewDense(3, 2, nil), bad, nil, nil, rnd), distance.ErrNotFinite)
	_, err := seeding.Parallel{}.Plan(0, 2, nil, 1)
	assert.ErrorIs(t, err, seeding.ErrK)
}

// TestParallelPlanAnySplit drives the pass API as a distributed job would:
// the rows are cut into parts at random places and the parts merged in a
// random order. The candidates and the centers must be those of one part
// holding every row (bit for bit: the picks and the choice do not depend
// on the order, and the weights are integer counts); the pass costs agree
// to rounding.
func TestParallelPlanAnySplit(t *testing.T) {
	data := synth.Blobs(5000, 3, 8, 9)
	x := data.RawMatrix().Data
	run := func(split *rand.Rand) (*mat.Dense, []float64, int) {
		pl, err := seeding.Parallel{}.Plan(8, 3, nil, 77)
		require.NoError(t, err)
		var costs []float64
		for !pl.Done() {
			var parts []*seeding.ParallelPart
			for lo := 0; lo < 5000; {
				hi := 5000
				if split != nil {
					hi = min(5000, lo+1+split.IntN(900))
				}
				q := pl.NewPart()
				require.NoError(t, pl.Add(q, uint64(lo), x[lo*3:hi*3], nil))
				parts = append(parts, q)
				lo = hi
			}
			if split != nil {
				split.Shuffle(len(parts), func(i, j int) { parts[i], parts[j] = parts[j], parts[i] })
			}
			merged := pl.NewPart()
			for _, q := range parts {
				merged.Merge(q)
			}
			require.EqualValues(t, 5000, merged.Rows)
			costs = append(costs, merged.Cost)
			require.NoError(t, pl.Next(merged))
		}
		dst := mat.NewDense(8, 3, nil)
		require.NoError(t, pl.Centers(dst, rand.New(rand.NewPCG(1, 1))))
		return dst, costs, pl.Passes()
	}
	whole, wholeCosts, passes := run(nil)
	// First-candidate pass, 5 sampling rounds, the weighing pass.
	assert.Equal(t, 1+seeding.DefaultRounds+1, passes)
	for s := range uint64(5) {
		got, costs, _ := run(rand.New(rand.NewPCG(s, 9)))
		assert.Equal(t, whole.RawMatrix().Data, got.RawMatrix().Data, "split %d", s)
		require.Len(t, costs, len(wholeCosts))
		for i := range costs {
			assert.InEpsilon(t, wholeCosts[i]+1, costs[i]+1, 1e-12, "pass %d", i)
		}
	}
}

func TestParallelPlanMisuse(t *testing.T) {
	pl, err := seeding.Parallel{Rounds: 1}.Plan(2, 2, nil, 1)
	require.NoError(t, err)
	dst := mat.NewDense(2, 2, nil)
	assert.ErrorIs(t, pl.Centers(dst, rand.New(rand.NewPCG(1, 1))), seeding.ErrParameter)
	q := pl.NewPart()
	assert.ErrorIs(t, pl.Add(q, 0, []float64{1, 2, 3}, nil), seeding.ErrShape)
	assert.ErrorIs(t, pl.Add(q, 0, []float64{1, 2}, []float64{-1}), seeding.ErrWeights)
	assert.ErrorIs(t, pl.Add(q, 0, []float64{1, math.Inf(1)}, nil), distance.ErrNotFinite)
	assert.ErrorIs(t, pl.Next(q), seeding.ErrK) // no row of positive weight
	require.NoError(t, pl.SetFirst([]float64{0, 0}))
	assert.ErrorIs(t, pl.SetFirst([]float64{0, 0}), seeding.ErrParameter)
	stale := pl.NewPart()
	require.NoError(t, pl.Add(stale, 0, []float64{0, 0, 3, 4, 5, 5}, nil))
	require.NoError(t, pl.Next(stale))
	assert.ErrorIs(t, pl.Add(stale, 0, []float64{1, 1}, nil), seeding.ErrParameter, "a part of an earlier pass")
}

// TestParallelSameCostAsPlusPlus runs Lloyd from k-means‖ and from greedy
// k-means++ with the same restarts on the shared reference datasets: the
// paper reports final costs of k-means‖ on par with k-means++ (Bahmani et
// al. 2012, tables 1–4, from memory); here the best cost over 10 restarts
// must be within 1%, and the seeding must make at most 6 passes over the
// data (5 rounds and the weighing pass; the first candidate is drawn from
// the weights alone).
func TestParallelSameCostAsPlusPlus(t *testing.T) {
	cases := []struct {
		name string
		k    int
	}{{"iris", 3}, {"s1", 15}, {"a3", 50}, {"unbalance", 8}, {"wine", 3}, {"seeds", 3}}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			set := reference.LoadOrSkip(t, tc.name)
			cost := func(s seeding.Seeder) float64 {
				res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: set.X, K: tc.k, Seeder: s}, &kmeans.Settings{Seed: 3}, kmeans.Lloyd{})
				require.NoError(t, err)
				return res.Cost
			}
			par, pp := cost(seeding.Parallel{}), cost(seeding.PlusPlus{})
			t.Logf("%s k=%d: k-means‖ %.6g, k-means++ %.6g, ratio %.5f", tc.name, tc.k, par, pp, par/pp)
			assert.LessOrEqual(t, par, pp*1.01)
		})
	}
	set := reference.LoadOrSkip(t, "s1")
	pl, err := seeding.Parallel{}.Plan(15, 2, nil, 1)
	require.NoError(t, err)
	require.NoError(t, pl.SetFirst(set.X.RawRowView(0)))
	for !pl.Done() {
		q := pl.NewPart()
		require.NoError(t, pl.Add(q, 0, set.X.RawMatrix().Data, nil))
		require.NoError(t, pl.Next(q))
	}
	assert.LessOrEqual(t, pl.Passes(), 6, "passes over the data")
}

// TestParallelPlanWorkers checks that the workers of one Add change
// nothing: the same parts, bit for bit.
func TestParallelPlanWorkers(t *testing.T) {
	data := synth.Blobs(9000, 4, 6, 2)
	x := data.RawMatrix().Data
	var want []float64
	for _, workers := range []int{1, 2, 5} {
		pl, err := seeding.Parallel{Workers: workers}.Plan(6, 4, nil, 3)
		require.NoError(t, err)
		require.NoError(t, pl.SetFirst(x[:4]))
		var costs []float64
		for !pl.Done() {
			q := pl.NewPart()
			require.NoError(t, pl.Add(q, 0, x, nil))
			costs = append(costs, q.Cost)
			require.NoError(t, pl.Next(q))
		}
		got := append(costs, pl.Candidates().RawMatrix().Data...)
		if want == nil {
			want = got
			continue
		}
		assert.Equal(t, want, got, "workers %d", workers)
	}
}
