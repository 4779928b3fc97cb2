package seeding_test

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/seeding"
)

// seeders lists every seeder with the settings tests run it with.
var seeders = []struct {
	name string
	s    seeding.Seeder
	rows bool // centers are rows of data
}{
	{"Random", seeding.Random{}, true},
	{"Uniform", seeding.Uniform{}, false},
	{"PlusPlus", seeding.PlusPlus{}, true},
	{"PlusPlusClassic", seeding.PlusPlus{Candidates: 1}, true},
}

// gaussRows returns an n×d matrix of standard normal values.
func gaussRows(rnd *rand.Rand, n, d int) *mat.Dense {
	x := make([]float64, n*d)
	for i := range x {
		x[i] = rnd.NormFloat64()
	}
	return mat.NewDense(n, d, x)
}

// strided returns a view of an n×d matrix whose rows are not contiguous:
// its stride is d+3 and the columns around it hold NaN, so reading past a
// row shows up as an error.
func strided(src *mat.Dense) *mat.Dense {
	n, d := src.Dims()
	big := mat.NewDense(n, d+3, nil)
	for i := range n {
		for j := range d + 3 {
			big.Set(i, j, math.NaN())
		}
	}
	view := big.Slice(0, n, 1, d+1).(*mat.Dense)
	view.Copy(src)
	return view
}

// rowOf returns the index of the first row of data equal to c, or −1.
func rowOf(data mat.Matrix, c []float64) int {
	n, _ := data.Dims()
	for i := range n {
		if slices.Equal(mat.Row(nil, i, data), c) {
			return i
		}
	}
	return -1
}

// requireDistinct fails unless the rows of centers are pairwise different.
func requireDistinct(t *testing.T, centers *mat.Dense) {
	t.Helper()
	k, _ := centers.Dims()
	for a := range k {
		for b := range a {
			require.Falsef(t, slices.Equal(centers.RawRowView(a), centers.RawRowView(b)), "centers %d and %d are equal: %v", b, a, centers.RawRowView(a))
		}
	}
}

// assertShare checks an observed count against a probability p over n
// independent draws, allowing 5 binomial standard errors (common practice
// for a test that must essentially never fail by chance).
func assertShare(t *testing.T, count, n int, p float64, what string) {
	t.Helper()
	if p == 0 {
		assert.Zerof(t, count, "%s: impossible outcome drawn", what)
		return
	}
	se := math.Sqrt(p * (1 - p) / float64(n))
	got := float64(count) / float64(n)
	assert.InDeltaf(t, p, got, 5*se, "%s: frequency %.4f, probability %.4f", what, got, p)
}

func TestReproducible(t *testing.T) {
	data := gaussRows(rand.New(rand.NewPCG(7, 7)), 300, 3)
	weights := make([]float64, 300)
	for i := range weights {
		weights[i] = float64(i % 4) // a quarter of the rows have weight 0
	}
	for _, tc := range seeders {
		t.Run(tc.name, func(t *testing.T) {
			seed := func(s1, s2 uint64) *mat.Dense {
				dst := mat.NewDense(6, 3, nil)
				require.NoError(t, tc.s.Seed(dst, data, weights, distance.Euclidean{}, rand.New(rand.NewPCG(s1, s2))))
				return dst
			}
			a, b, c := seed(1, 2), seed(1, 2), seed(3, 4)
			assert.Equal(t, a.RawMatrix().Data, b.RawMatrix().Data, "same seed, different centers")
			assert.NotEqual(t, a.RawMatrix().Data, c.RawMatrix().Data, "different seeds, same centers")
		})
	}
}

func TestCentersAreRowsOfPositiveWeight(t *testing.T) {
	rnd := rand.New(rand.NewPCG(11, 0))
	const n, d, k = 60, 4, 10
	dense := gaussRows(rnd, n, d)
	data := strided(dense)
	weights := make([]float64, n)
	for i := range weights {
		if i%3 != 0 {
			weights[i] = 0.5 + rnd.Float64()
		}
	}
	for _, tc := range seeders {
		if !tc.rows {
			continue
		}
		t.Run(tc.name, func(t *testing.T) {
			for seed := range uint64(50) {
				dst := mat.NewDense(k, d, nil)
				require.NoError(t, tc.s.Seed(dst, data, weights, nil, rand.New(rand.NewPCG(seed, 1))))
				for j := range k {
					i := rowOf(dense, dst.RawRowView(j))
					require.GreaterOrEqualf(t, i, 0, "center %d is not a row of data", j)
					require.Positivef(t, weights[i], "center %d is row %d of weight 0", j, i)
				}
				requireDistinct(t, dst)
			}
		})
	}
}

// fiveValues returns 1000 rows in 2 columns holding only 5 distinct values,
// in a shuffled order, and the 5 values.
func fiveValues() (*mat.Dense, [][]float64) {
	values := [][]float64{{0, 0}, {1, 0}, {0, 1}, {3, 3}, {-2, 5}}
	rnd := rand.New(rand.NewPCG(5, 5))
	data := mat.NewDense(1000, 2, nil)
	for i := range 1000 {
		data.SetRow(i, values[rnd.IntN(len(values))])
	}
	return data, values
}

func TestManyDuplicateRows(t *testing.T) {
	data, values := fiveValues()
	skewed := make([]float64, 1000)
	for i := range skewed {
		skewed[i] = 1e-6
		if slices.Equal(data.RawRowView(i), values[0]) {
			skewed[i] = 1 // one value holds nearly all the weight
		}
	}
	for _, w := range []struct {
		name string
		w    []float64
	}{{"unweighted", nil}, {"skewed", skewed}} {
		for _, tc := range seeders {
			t.Run(w.name+"/"+tc.name, func(t *testing.T) {
				for seed := range uint64(20) {
					dst := mat.NewDense(5, 2, nil)
					require.NoError(t, tc.s.Seed(dst, data, w.w, nil, rand.New(rand.NewPCG(seed, 2))))
					requireDistinct(t, dst)
					if tc.rows {
						got := make([][]float64, 5)
						for j := range got {
							got[j] = dst.RawRowView(j)
						}
						assert.ElementsMatch(t, values, got)
					}
				}
				err := tc.s.Seed(mat.NewDense(6, 2, nil), data, w.w, nil, rand.New(rand.NewPCG(1, 2)))
				assert.ErrorIs(t, err, seeding.ErrK)
			})
		}
	}
}

func TestCosineParallelRowsAreOneDirection(t *testing.T) {
	// x and 2x have cosine dissimilarity 0: PlusPlus sees two directions.
	data := mat.NewDense(3, 2, []float64{1, 0, 2, 0, 0, 1})
	err := seeding.PlusPlus{}.Seed(mat.NewDense(3, 2, nil), data, nil, distance.Cosine{}, rand.New(rand.NewPCG(1, 1)))
	assert.ErrorIs(t, err, seeding.ErrK)
	for seed := range uint64(20) {
		dst := mat.NewDense(2, 2, nil)
		require.NoError(t, seeding.PlusPlus{}.Seed(dst, data, nil, distance.Cosine{}, rand.New(rand.NewPCG(seed, 1))))
		rows := []int{rowOf(data, dst.RawRowView(0)), rowOf(data, dst.RawRowView(1))}
		slices.Sort(rows)
		assert.Contains(t, [][]int{{0, 2}, {1, 2}}, rows, "one center per direction")
	}
}

func TestFirstCenterFollowsWeights(t *testing.T) {
	// Rows 0..3 with weights 1..4 (and a zero-weight row 4) must be drawn
	// like the same rows repeated 1..4 times without weights.
	values := [][]float64{{0, 0}, {1, 0}, {0, 1}, {1, 1}, {9, 9}}
	weights := []float64{1, 2, 3, 4, 0}
	weighted := mat.NewDense(5, 2, nil)
	for i, v := range values {
		weighted.SetRow(i, v)
	}
	var flat []float64
	for i, v := range values {
		for range int(weights[i]) {
			flat = append(flat, v...)
		}
	}
	repeated := mat.NewDense(len(flat)/2, 2, flat)
	const draws = 20000
	for _, tc := range seeders {
		if !tc.rows {
			continue
		}
		for _, in := range []struct {
			name string
			data *mat.Dense
			w    []float64
		}{{"weights", weighted, weights}, {"multiplicities", repeated, nil}} {
			t.Run(tc.name+"/"+in.name, func(t *testing.T) {
				rnd := rand.New(rand.NewPCG(21, 22))
				counts := make([]int, len(values))
				dst := mat.NewDense(1, 2, nil)
				for range draws {
					require.NoError(t, tc.s.Seed(dst, in.data, in.w, nil, rnd))
					counts[rowOf(weighted, dst.RawRowView(0))]++
				}
				for i, c := range counts {
					assertShare(t, c, draws, weights[i]/10, fmt.Sprintf("row %d", i))
				}
			})
		}
	}
}

func TestRandomSecondCenterWithoutReplacement(t *testing.T) {
	// Value 0 sits in three rows holding 90% of the weight, so most draws
	// after it is chosen repeat it and Random has to drop it from the
	// running sum. The exact law of the second center is computed by brute
	// force: P(second = v) = Σ_u P(first = u)·W_v/(T − W_u).
	values := [][]float64{{0}, {1}, {2}, {3}}
	rowValue := []int{0, 1, 0, 2, 3, 0}
	weights := []float64{0.3, 0.05, 0.3, 0.03, 0.02, 0.3}
	data := mat.NewDense(len(rowValue), 1, nil)
	W := make([]float64, len(values))
	var T float64
	for i, v := range rowValue {
		data.Set(i, 0, values[v][0])
		W[v] += weights[i]
		T += weights[i]
	}
	want := make([]float64, len(values))
	for u := range values {
		for v := range values {
			if v != u {
				want[v] += W[u] / T * W[v] / (T - W[u])
			}
		}
	}
	const draws = 20000
	rnd := rand.New(rand.NewPCG(31, 32))
	counts := make([]int, len(values))
	dst := mat.NewDense(2, 1, nil)
	for range draws {
		require.NoError(t, seeding.Random{}.Seed(dst, data, weights, nil, rnd))
		require.NotEqual(t, dst.At(0, 0), dst.At(1, 0))
		counts[int(dst.At(1, 0))]++
	}
	for v, c := range counts {
		assertShare(t, c, draws, want[v], fmt.Sprintf("value %d", v))
	}
}

func TestPlusPlusSecondCenterLaw(t *testing.T) {
	// Exact law of classic k-means++'s second center, by brute force:
	// P(second = j) = Σ_i P(first = i)·w_j·D(x_j, x_i) / Σ_l w_l·D(x_l, x_i),
	// with D the sampling loss of the metric: D² for Euclidean as in step 1b
	// of Arthur & Vassilvitskii 2007 (step numbering from memory), with the
	// weights acting as multiplicities of the rows.
	data := mat.NewDense(6, 2, []float64{
		0, 0,
		1, 0,
		0, 2,
		3, 1,
		-1, 4,
		5, 5, // weight 0: never chosen
	})
	weights := []float64{1, 2, 0.5, 1, 3, 0}
	sq := func(x float64) float64 { return x * x }
	losses := []struct {
		m distance.Metric
		D func(a, b []float64) float64
	}{
		{distance.Euclidean{}, func(a, b []float64) float64 { return sq(a[0]-b[0]) + sq(a[1]-b[1]) }},
		{distance.Manhattan{}, func(a, b []float64) float64 { return math.Abs(a[0]-b[0]) + math.Abs(a[1]-b[1]) }},
		{distance.Chebyshev{}, func(a, b []float64) float64 { return sq(max(math.Abs(a[0]-b[0]), math.Abs(a[1]-b[1]))) }},
	}
	n := len(weights)
	var T float64
	for _, w := range weights {
		T += w
	}
	for _, l := range losses {
		t.Run(l.m.Name(), func(t *testing.T) {
			want := make([]float64, n)
			for i := range n {
				var pot float64
				for j := range n {
					pot += weights[j] * l.D(data.RawRowView(j), data.RawRowView(i))
				}
				for j := range n {
					want[j] += weights[i] / T * weights[j] * l.D(data.RawRowView(j), data.RawRowView(i)) / pot
				}
			}
			const draws = 20000
			rnd := rand.New(rand.NewPCG(41, 42))
			counts := make([]int, n)
			dst := mat.NewDense(2, 2, nil)
			for range draws {
				require.NoError(t, seeding.PlusPlus{Candidates: 1}.Seed(dst, data, weights, l.m, rnd))
				counts[rowOf(data, dst.RawRowView(1))]++
			}
			for j, c := range counts {
				assertShare(t, c, draws, want[j], fmt.Sprintf("row %d", j))
			}
		})
	}
}

// blobs returns k tight groups of m rows each around centers spread over a
// line, and the true centers.
func blobs(rnd *rand.Rand, k, m int, spread float64) (*mat.Dense, [][]float64) {
	truth := make([][]float64, k)
	data := mat.NewDense(k*m, 2, nil)
	for b := range k {
		truth[b] = []float64{10 * float64(b), 10 * float64(b%2)}
		for i := range m {
			data.SetRow(b*m+i, []float64{truth[b][0] + spread*rnd.NormFloat64(), truth[b][1] + spread*rnd.NormFloat64()})
		}
	}
	return data, truth
}

// onePerBlob reports whether each true center has exactly one seed nearest
// to it.
func onePerBlob(centers *mat.Dense, truth [][]float64) bool {
	seen := make([]bool, len(truth))
	k, _ := centers.Dims()
	for j := range k {
		c := centers.RawRowView(j)
		best := 0
		for b := range truth {
			if distance.SqEuclidean(c, truth[b]) < distance.SqEuclidean(c, truth[best]) {
				best = b
			}
		}
		if seen[best] {
			return false
		}
		seen[best] = true
	}
	return true
}

func TestGreedyPlusPlusCoversBlobs(t *testing.T) {
	// The paper reports that drawing several candidates per step and keeping
	// the best improves seeds (Arthur & Vassilvitskii 2007, from memory);
	// here it must put one seed in each of 10 separated groups clearly more
	// often than classic k-means++.
	const k, runs = 10, 200
	data, truth := blobs(rand.New(rand.NewPCG(51, 52)), k, 40, 2.5)
	count := func(s seeding.Seeder) int {
		hits := 0
		for seed := range uint64(runs) {
			dst := mat.NewDense(k, 2, nil)
			require.NoError(t, s.Seed(dst, data, nil, nil, rand.New(rand.NewPCG(seed, 53))))
			if onePerBlob(dst, truth) {
				hits++
			}
		}
		return hits
	}
	classic, greedy := count(seeding.PlusPlus{Candidates: 1}), count(seeding.PlusPlus{})
	t.Logf("one seed per group: classic %d/%d, greedy %d/%d", classic, runs, greedy, runs)
	assert.Greater(t, greedy, 2*classic)
	assert.Greater(t, greedy, classic+runs/5)
}

func TestUniformInBoundingBox(t *testing.T) {
	rnd := rand.New(rand.NewPCG(61, 62))
	const n = 50
	data := mat.NewDense(n, 3, nil)
	weights := make([]float64, n)
	lo, hi := []float64{math.Inf(1), 7.25, math.Inf(1)}, []float64{math.Inf(-1), 7.25, math.Inf(-1)}
	for i := range n {
		row := []float64{rnd.NormFloat64(), 7.25, 1e3 * rnd.Float64()}
		if i%5 == 0 {
			row = []float64{100, -100, -1e6} // weight 0: outside the box
		} else {
			weights[i] = 1
			for j, v := range row {
				lo[j], hi[j] = min(lo[j], v), max(hi[j], v)
			}
		}
		data.SetRow(i, row)
	}
	for seed := range uint64(50) {
		dst := mat.NewDense(8, 3, nil)
		require.NoError(t, seeding.Uniform{}.Seed(dst, data, weights, nil, rand.New(rand.NewPCG(seed, 63))))
		requireDistinct(t, dst)
		for j := range 8 {
			c := dst.RawRowView(j)
			for col, v := range c {
				require.GreaterOrEqual(t, v, lo[col])
				require.LessOrEqual(t, v, hi[col])
			}
			require.Equal(t, 7.25, c[1], "a zero-width coordinate must be constant")
		}
	}
}

func TestUniformIsUniform(t *testing.T) {
	// Each coordinate of a center falls in the lowest quarter of the box
	// with probability 1/4.
	data := mat.NewDense(3, 2, []float64{-1, 10, 3, 20, 0, 12})
	const draws = 20000
	rnd := rand.New(rand.NewPCG(71, 72))
	var low [2]int
	dst := mat.NewDense(1, 2, nil)
	for range draws {
		require.NoError(t, seeding.Uniform{}.Seed(dst, data, nil, nil, rnd))
		if dst.At(0, 0) < 0 {
			low[0]++
		}
		if dst.At(0, 1) < 12.5 {
			low[1]++
		}
	}
	assertShare(t, low[0], draws, 0.25, "column 0")
	assertShare(t, low[1], draws, 0.25, "column 1")
}

func TestUniformRedrawsInNarrowBox(t *testing.T) {
	// A box one ulp wide in each coordinate holds exactly 4 representable
	// points; k = 4 needs redraws and must return all of them.
	a, b := 1.0, math.Nextafter(1, 2)
	values := [][]float64{{a, a}, {a, b}, {b, a}, {b, b}}
	data := mat.NewDense(8, 2, nil)
	for i := range 8 {
		data.SetRow(i, values[i%4])
	}
	for seed := range uint64(20) {
		dst := mat.NewDense(4, 2, nil)
		require.NoError(t, seeding.Uniform{}.Seed(dst, data, nil, nil, rand.New(rand.NewPCG(seed, 81))))
		got := make([][]float64, 4)
		for j := range got {
			got[j] = dst.RawRowView(j)
		}
		assert.ElementsMatch(t, values, got)
	}
}

func TestUniformHugeBoxStaysFinite(t *testing.T) {
	data := mat.NewDense(2, 1, []float64{-math.MaxFloat64, math.MaxFloat64})
	dst := mat.NewDense(2, 1, nil)
	for seed := range uint64(20) {
		require.NoError(t, seeding.Uniform{}.Seed(dst, data, nil, nil, rand.New(rand.NewPCG(seed, 91))))
		for j := range 2 {
			v := dst.At(j, 0)
			require.False(t, math.IsInf(v, 0) || math.IsNaN(v), "center %v", v)
		}
	}
}

func TestPlusPlusOverflow(t *testing.T) {
	data := mat.NewDense(2, 1, []float64{-1e200, 1e200})
	err := seeding.PlusPlus{}.Seed(mat.NewDense(2, 1, nil), data, nil, nil, rand.New(rand.NewPCG(1, 1)))
	assert.ErrorIs(t, err, distance.ErrNotFinite)
}

func TestBadInput(t *testing.T) {
	good := func() *mat.Dense {
		return mat.NewDense(4, 2, []float64{0, 0, 1, 0, 0, 1, 1, 1})
	}
	setAt := func(i, j int, v float64) *mat.Dense {
		d := good()
		d.Set(i, j, v)
		return d
	}
	shared := good()
	cases := []struct {
		name    string
		dst     *mat.Dense
		data    *mat.Dense
		weights []float64
		m       distance.Metric
		nilRand bool
		want    error
	}{
		{name: "nil dst", data: good(), want: seeding.ErrShape},
		{name: "nil data", dst: mat.NewDense(2, 2, nil), want: seeding.ErrShape},
		{name: "empty data", dst: mat.NewDense(2, 2, nil), data: &mat.Dense{}, want: seeding.ErrShape},
		{name: "k = 0", dst: &mat.Dense{}, data: good(), want: seeding.ErrK},
		{name: "columns", dst: mat.NewDense(2, 3, nil), data: good(), want: seeding.ErrShape},
		{name: "weights length", dst: mat.NewDense(2, 2, nil), data: good(), weights: []float64{1, 1, 1}, want: seeding.ErrShape},
		{name: "negative weight", dst: mat.NewDense(2, 2, nil), data: good(), weights: []float64{1, -1, 1, 1}, want: seeding.ErrWeights},
		{name: "NaN weight", dst: mat.NewDense(2, 2, nil), data: good(), weights: []float64{1, math.NaN(), 1, 1}, want: seeding.ErrWeights},
		{name: "Inf weight", dst: mat.NewDense(2, 2, nil), data: good(), weights: []float64{1, math.Inf(1), 1, 1}, want: seeding.ErrWeights},
		{name: "zero weights", dst: mat.NewDense(2, 2, nil), data: good(), weights: []float64{0, 0, 0, 0}, want: seeding.ErrWeights},
		{name: "weight sum overflows", dst: mat.NewDense(2, 2, nil), data: good(), weights: []float64{math.MaxFloat64, math.MaxFloat64, 1, 1}, want: seeding.ErrWeights},
		{name: "k > n", dst: mat.NewDense(5, 2, nil), data: good(), want: seeding.ErrK},
		{name: "k > positive rows", dst: mat.NewDense(3, 2, nil), data: good(), weights: []float64{1, 0, 0, 1}, want: seeding.ErrK},
		{name: "k > distinct rows", dst: mat.NewDense(3, 2, nil), data: mat.NewDense(4, 2, []float64{1, 1, 2, 2, 1, 1, 2, 2}), want: seeding.ErrK},
		{name: "k > distinct rows, −0 equals +0", dst: mat.NewDense(3, 1, nil), data: mat.NewDense(3, 1, []float64{0, math.Copysign(0, -1), 1}), want: seeding.ErrK},
		{name: "NaN in data", dst: mat.NewDense(2, 2, nil), data: setAt(2, 1, math.NaN()), want: distance.ErrNotFinite},
		{name: "Inf in data", dst: mat.NewDense(2, 2, nil), data: setAt(3, 0, math.Inf(-1)), want: distance.ErrNotFinite},
		{name: "NaN in zero-weight row", dst: mat.NewDense(2, 2, nil), data: setAt(0, 0, math.NaN()), weights: []float64{0, 1, 1, 1}, want: distance.ErrNotFinite},
		{name: "zero row under cosine", dst: mat.NewDense(2, 2, nil), data: good(), m: distance.Cosine{}, want: distance.ErrZeroVector},
		{name: "bad metric parameter", dst: mat.NewDense(2, 2, nil), data: good(), m: distance.Minkowski{}, want: distance.ErrParameter},
		{name: "nil rand", dst: mat.NewDense(2, 2, nil), data: good(), nilRand: true, want: seeding.ErrParameter},
		{name: "dst aliases data", dst: shared.Slice(2, 4, 0, 2).(*mat.Dense), data: shared, want: seeding.ErrShape},
	}
	for _, tc := range cases {
		for _, sd := range seeders {
			t.Run(tc.name+"/"+sd.name, func(t *testing.T) {
				var dataBefore, dstBefore []float64
				if tc.data != nil {
					dataBefore = slices.Clone(tc.data.RawMatrix().Data)
				}
				if tc.dst != nil {
					dstBefore = slices.Clone(tc.dst.RawMatrix().Data)
				}
				weightsBefore := slices.Clone(tc.weights)
				rnd := rand.New(rand.NewPCG(1, 2))
				if tc.nilRand {
					rnd = nil
				}
				var err error
				require.NotPanics(t, func() { err = sd.s.Seed(tc.dst, tc.data, tc.weights, tc.m, rnd) })
				require.Error(t, err)
				assert.Truef(t, errors.Is(err, tc.want), "got %v, want %v", err, tc.want)
				if tc.data != nil {
					assert.Equal(t, fmt.Sprint(dataBefore), fmt.Sprint(tc.data.RawMatrix().Data), "data modified")
				}
				if tc.dst != nil {
					assert.Equal(t, fmt.Sprint(dstBefore), fmt.Sprint(tc.dst.RawMatrix().Data), "dst modified on error")
				}
				assert.Equal(t, fmt.Sprint(weightsBefore), fmt.Sprint(tc.weights), "weights modified")
			})
		}
	}
	err := seeding.PlusPlus{Candidates: -1}.Seed(mat.NewDense(2, 2, nil), good(), nil, nil, rand.New(rand.NewPCG(1, 2)))
	assert.ErrorIs(t, err, seeding.ErrParameter)
	err = seeding.PlusPlus{Workers: -1}.Seed(mat.NewDense(2, 2, nil), good(), nil, nil, rand.New(rand.NewPCG(1, 2)))
	assert.ErrorIs(t, err, seeding.ErrParameter)
}

func TestInputsUnmodified(t *testing.T) {
	data := strided(gaussRows(rand.New(rand.NewPCG(3, 3)), 100, 3))
	weights := make([]float64, 100)
	for i := range weights {
		weights[i] = float64(i%3) * 0.7
	}
	dataBefore := slices.Clone(data.RawMatrix().Data)
	weightsBefore := slices.Clone(weights)
	for _, tc := range seeders {
		for _, m := range []distance.Metric{distance.Euclidean{}, distance.Manhattan{}, distance.Cosine{}} {
			require.NoError(t, tc.s.Seed(mat.NewDense(7, 3, nil), data, weights, m, rand.New(rand.NewPCG(4, 4))), tc.name)
			// NaN ≠ NaN, so compare the printed form (the view's gaps hold NaN).
			require.Equal(t, fmt.Sprint(dataBefore), fmt.Sprint(data.RawMatrix().Data), tc.name)
			require.Equal(t, weightsBefore, weights, tc.name)
		}
	}
}

func TestScratchDoesNotGrowPerRow(t *testing.T) {
	// Seeders allocate their O(n) scratch once per call: the number of
	// allocations must not depend on n.
	allocs := func(s seeding.Seeder, n int) float64 {
		data := gaussRows(rand.New(rand.NewPCG(9, 9)), n, 2)
		dst := mat.NewDense(8, 2, nil)
		rnd := rand.New(rand.NewPCG(9, 10))
		return testing.AllocsPerRun(5, func() {
			if err := s.Seed(dst, data, nil, nil, rnd); err != nil {
				panic(err)
			}
		})
	}
	for _, tc := range seeders {
		assert.Equal(t, allocs(tc.s, 100), allocs(tc.s, 5000), tc.name)
	}
}

func TestPlusPlusWorkersBitIdentical(t *testing.T) {
	// The block split depends only on n, so any number of goroutines must
	// give the same centers bit for bit. n = 20000 gives 19 blocks.
	const n, d = 20000, 3
	rnd := rand.New(rand.NewPCG(101, 102))
	data := gaussRows(rnd, n, d)
	weights := make([]float64, n)
	for i := range weights {
		if i%7 != 0 {
			weights[i] = 0.1 + 3*rnd.Float64() // every 7th row has weight 0
		}
	}
	for _, w := range []struct {
		name string
		w    []float64
	}{{"unweighted", nil}, {"weighted", weights}} {
		for _, m := range []distance.Metric{distance.Euclidean{}, distance.Manhattan{}} {
			for _, k := range []int{1, 2, 9, 40} {
				for _, cand := range []int{0, 1} {
					t.Run(fmt.Sprintf("%s/%s/k=%d/candidates=%d", w.name, m.Name(), k, cand), func(t *testing.T) {
						var want []float64
						for _, workers := range []int{1, 2, 3, 8} {
							dst := mat.NewDense(k, d, nil)
							s := seeding.PlusPlus{Candidates: cand, Workers: workers}
							require.NoError(t, s.Seed(dst, data, w.w, m, rand.New(rand.NewPCG(uint64(k), 103))))
							requireDistinct(t, dst)
							got := dst.RawMatrix().Data
							if want == nil {
								want = slices.Clone(got)
								continue
							}
							require.Equalf(t, want, got, "workers = %d", workers)
						}
					})
				}
			}
		}
	}
}

func TestPlusPlusDrawAcrossBlocks(t *testing.T) {
	// 3072 rows make 3 blocks; the only positive weights sit at block edges
	// and in the middle of blocks, so the draw must find the right block and
	// the right row in it: P(row i) = w_i / Σ w, computed here directly.
	const n = 3072
	rows := []int{0, 1023, 1024, 2500, 3071}
	weights := make([]float64, n)
	var total float64
	for j, i := range rows {
		weights[i] = float64(j + 1)
		total += weights[i]
	}
	data := mat.NewDense(n, 1, nil)
	for i := range n {
		data.Set(i, 0, float64(i))
	}
	const draws = 10000
	rnd := rand.New(rand.NewPCG(111, 112))
	counts := make(map[int]int)
	dst := mat.NewDense(1, 1, nil)
	for range draws {
		require.NoError(t, seeding.PlusPlus{}.Seed(dst, data, weights, nil, rnd))
		counts[int(dst.At(0, 0))]++
	}
	var seen int
	for _, i := range rows {
		assertShare(t, counts[i], draws, weights[i]/total, fmt.Sprintf("row %d", i))
		seen += counts[i]
	}
	assert.Equal(t, draws, seen, "a row of weight 0 was drawn")
}
