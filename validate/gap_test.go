package validate

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"sync"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
)

// testLloyd is a small k-means for the gap tests: restarts from k distinct
// rows drawn with the seed, Lloyd iterations to a fixed point, best of
// restarts. It returns the pooled within-cluster sum of squares.
func testLloyd(restarts int) ClusterFunc {
	return func(ctx context.Context, X *mat.Dense, k int, seed uint64) (float64, error) {
		rows := rowsOf(X)
		n, d := len(rows), len(rows[0])
		best := math.Inf(1)
		for r := range restarts {
			if err := ctx.Err(); err != nil {
				return 0, err
			}
			rnd := rand.New(rand.NewPCG(seed, uint64(r)))
			perm := rnd.Perm(n)
			centers := make([][]float64, k)
			for c := range centers {
				centers[c] = append([]float64(nil), rows[perm[c]]...)
			}
			assign := make([]int, n)
			for i := range assign {
				assign[i] = -1
			}
			for iter := 0; iter < 100; iter++ {
				moved := false
				for i, x := range rows {
					bc, bd := 0, math.Inf(1)
					for c, ctr := range centers {
						if dd := sqDist(x, ctr); dd < bd {
							bc, bd = c, dd
						}
					}
					if assign[i] != bc {
						assign[i], moved = bc, true
					}
				}
				if !moved {
					break
				}
				sums := make([][]float64, k)
				counts := make([]int, k)
				for c := range sums {
					sums[c] = make([]float64, d)
				}
				for i, a := range assign {
					counts[a]++
					for j, v := range rows[i] {
						sums[a][j] += v
					}
				}
				for c := range centers {
					if counts[c] > 0 { // an empty cluster keeps its center
						for j := range centers[c] {
							centers[c][j] = sums[c][j] / float64(counts[c])
						}
					}
				}
			}
			var w float64
			for i, x := range rows {
				w += sqDist(x, centers[assign[i]])
			}
			best = math.Min(best, w)
		}
		return best, nil
	}
}

func sqDist(x, y []float64) float64 {
	var s float64
	for j := range x {
		s += (x[j] - y[j]) * (x[j] - y[j])
	}
	return s
}

// threeBlobs follows simulation (b) of Tibshirani, Walther & Hastie (2001),
// as recalled (from memory): three standard normal clusters in two
// dimensions centred at (0, 0), (0, 5) and (5, −3), with 25, 25 and 50
// rows.
func threeBlobs(rnd *rand.Rand) *mat.Dense {
	centers := [][2]float64{{0, 0}, {0, 5}, {5, -3}}
	sizes := []int{25, 25, 50}
	X := mat.NewDense(100, 2, nil)
	i := 0
	for c, s := range sizes {
		for range s {
			X.Set(i, 0, centers[c][0]+rnd.NormFloat64())
			X.Set(i, 1, centers[c][1]+rnd.NormFloat64())
			i++
		}
	}
	return X
}

// uniformSquare is a single cluster: rows uniform on the unit square.
func uniformSquare(rnd *rand.Rand, n, d int) *mat.Dense {
	X := mat.NewDense(n, d, nil)
	for i := range n {
		for j := range d {
			X.Set(i, j, rnd.Float64())
		}
	}
	return X
}

// TestGapChoosesK checks the rate at which Gap recovers the number of
// clusters. Tibshirani et al. (2001) report the gap statistic picking the
// true k in most of their simulated data sets, both for well-separated
// clusters and for the null model of a single uniform cluster (from
// memory); we require 8 of 10 and 7 of 10.
func TestGapChoosesK(t *testing.T) {
	const trials = 10
	ks := []int{1, 2, 3, 4, 5, 6}
	for _, sc := range []struct {
		name string
		data func(*rand.Rand) *mat.Dense
		want int
		rate float64
	}{
		{"three blobs", threeBlobs, 3, 0.8},
		{"uniform", func(r *rand.Rand) *mat.Dense { return uniformSquare(r, 100, 2) }, 1, 0.7},
	} {
		t.Run(sc.name, func(t *testing.T) {
			hits := 0
			var picks []int
			for seed := range trials {
				X := sc.data(rand.New(rand.NewPCG(uint64(seed), 1)))
				res, err := Gap(context.Background(), X, ks, testLloyd(3), &GapOptions{Seed: uint64(seed), Workers: 2})
				require.NoError(t, err)
				picks = append(picks, res.Best)
				if res.Best == sc.want {
					hits++
				}
			}
			t.Logf("%s: gap picked k = %d in %d of %d data sets (picks %v)", sc.name, sc.want, hits, trials, picks)
			assert.GreaterOrEqual(t, float64(hits)/float64(trials), sc.rate)
		})
	}
}

// recorder wraps a ClusterFunc and records every call.
type recorder struct {
	mu    sync.Mutex
	f     ClusterFunc
	costs map[*mat.Dense]map[int]float64
	first map[*mat.Dense]*mat.Dense // copy of each X as first seen
}

func newRecorder(f ClusterFunc) *recorder {
	return &recorder{f: f, costs: map[*mat.Dense]map[int]float64{}, first: map[*mat.Dense]*mat.Dense{}}
}

func (r *recorder) cluster(ctx context.Context, X *mat.Dense, k int, seed uint64) (float64, error) {
	w, err := r.f(ctx, X, k, seed)
	r.mu.Lock()
	defer r.mu.Unlock()
	if r.costs[X] == nil {
		r.costs[X] = map[int]float64{}
		r.first[X] = mat.DenseCopyOf(X)
	}
	_, dup := r.costs[X][k]
	if dup {
		return 0, errors.New("test: same data set clustered twice for one k")
	}
	r.costs[X][k] = w
	return w, err
}

// TestGapStatistics recomputes the statistics from the recorded costs with
// the formulas of Tibshirani et al. (2001), section 3.
func TestGapStatistics(t *testing.T) {
	X := threeBlobs(rand.New(rand.NewPCG(42, 1)))
	ks := []int{1, 2, 3, 5}
	const B = 7
	rec := newRecorder(testLloyd(2))
	res, err := Gap(context.Background(), X, ks, rec.cluster, &GapOptions{B: B, Seed: 3, Workers: 3})
	require.NoError(t, err)
	require.Len(t, rec.costs, B+1, "the data and B reference sets")
	require.Contains(t, rec.costs, X, "the data is passed as is")
	assert.Equal(t, ks, res.Ks)
	for i, k := range ks {
		var logs []float64
		for Z, c := range rec.costs {
			require.Len(t, c, len(ks))
			if Z != X {
				logs = append(logs, math.Log(c[k]))
			}
		}
		var lbar float64
		for _, l := range logs {
			lbar += l / B
		}
		var sd float64
		for _, l := range logs {
			sd += (l - lbar) * (l - lbar) / B
		}
		sk := math.Sqrt(sd) * math.Sqrt(1+1.0/B)
		logW := math.Log(rec.costs[X][k])
		near(t, logW, res.LogW[i], 1e-14, "log W, k = %d", k)
		near(t, lbar, res.ExpectedLogW[i], 1e-12, "E log W*, k = %d", k)
		near(t, lbar-logW, res.Gap[i], 1e-12, "gap, k = %d", k)
		near(t, sk, res.SK[i], 1e-12, "s_k, k = %d", k)
	}
	// The rule on consecutive entries of ks.
	best, found := ks[len(ks)-1], false
	for i := 0; i+1 < len(ks); i++ {
		if res.Gap[i] >= res.Gap[i+1]-res.SK[i+1] {
			best, found = ks[i], true
			break
		}
	}
	assert.Equal(t, best, res.Best)
	assert.Equal(t, found, res.Found)
}

// TestGapDeterministic checks that Workers does not change the result and
// that Seed does.
func TestGapDeterministic(t *testing.T) {
	X := uniformSquare(rand.New(rand.NewPCG(1, 1)), 60, 3)
	ks := []int{1, 2, 3, 4}
	run := func(workers int, seed uint64) *GapResult {
		res, err := Gap(context.Background(), X, ks, testLloyd(2), &GapOptions{B: 6, Seed: seed, Workers: workers})
		require.NoError(t, err)
		return res
	}
	want := run(1, 5)
	for _, w := range []int{2, 4, 100} {
		assert.Equal(t, want, run(w, 5), "workers %d", w)
	}
	assert.NotEqual(t, want.ExpectedLogW, run(1, 6).ExpectedLogW)
}

// TestGapReferenceBox checks where the reference rows are drawn: for data
// along a tilted line the PCA box hugs the line, while the uniform box
// spans the columns' ranges.
func TestGapReferenceBox(t *testing.T) {
	rnd := rand.New(rand.NewPCG(8, 8))
	const noise = 0.01
	X := mat.NewDense(80, 2, nil)
	for i := range 80 {
		u := rnd.Float64()*10 - 5
		v := (rnd.Float64()*2 - 1) * noise
		// Direction (3, 4)/5, perpendicular (−4, 3)/5, shifted to (7, −2).
		X.Set(i, 0, 7+0.6*u-0.8*v)
		X.Set(i, 1, -2+0.8*u+0.6*v)
	}
	lo := []float64{mat.Min(X.ColView(0)), mat.Min(X.ColView(1))}
	hi := []float64{mat.Max(X.ColView(0)), mat.Max(X.ColView(1))}
	offLine := func(x, y float64) float64 { return math.Abs(-0.8*(x-7) + 0.6*(y+2)) }

	for _, ref := range []Reference{PCABox, UniformBox} {
		rec := newRecorder(testLloyd(1))
		_, err := Gap(context.Background(), X, []int{1, 2}, rec.cluster, &GapOptions{B: 4, Reference: ref, Seed: 1})
		require.NoError(t, err)
		maxOff := 0.0
		for Z, copyZ := range rec.first {
			if Z == X {
				continue
			}
			r, c := copyZ.Dims()
			require.Equal(t, 80, r)
			require.Equal(t, 2, c)
			for i := range r {
				x, y := copyZ.At(i, 0), copyZ.At(i, 1)
				maxOff = math.Max(maxOff, offLine(x, y))
				if ref == UniformBox {
					assert.True(t, x >= lo[0] && x <= hi[0] && y >= lo[1] && y <= hi[1], "row %d outside the box", i)
				}
			}
		}
		if ref == PCABox {
			// The box follows the estimated principal axis, which is tilted
			// from the true line by about noise/length, so its rows stay
			// within a few times the noise of the line.
			assert.LessOrEqual(t, maxOff, 5*noise, "PCA box")
		} else {
			// The bounding box of a tilted line reaches far from it.
			assert.Greater(t, maxOff, 1.0, "uniform box")
		}
	}
}

func TestGapNotFound(t *testing.T) {
	X := uniformSquare(rand.New(rand.NewPCG(2, 2)), 20, 2)
	// W_k = e^−k for the data and 1 for every reference set: Gap(k) = k
	// grows and s_k = 0, so no k satisfies Gap(k) ≥ Gap(k+1) − s_{k+1}.
	f := func(_ context.Context, Z *mat.Dense, k int, _ uint64) (float64, error) {
		if Z == X {
			return math.Exp(-float64(k)), nil
		}
		return 1, nil
	}
	res, err := Gap(context.Background(), X, []int{1, 2, 4}, f, nil)
	require.NoError(t, err)
	assert.False(t, res.Found)
	assert.Equal(t, 4, res.Best)
	assert.Equal(t, []float64{1, 2, 4}, res.Gap)
	assert.Equal(t, []float64{0, 0, 0}, res.SK)
}

func TestGapBadInput(t *testing.T) {
	X := uniformSquare(rand.New(rand.NewPCG(3, 3)), 10, 2)
	ok := func(context.Context, *mat.Dense, int, uint64) (float64, error) { return 1, nil }
	boom := errors.New("boom")
	canceled, cancel := context.WithCancel(context.Background())
	cancel()
	var nilDense *mat.Dense
	tests := []struct {
		name string
		ctx  context.Context
		X    mat.Matrix
		ks   []int
		f    ClusterFunc
		opts *GapOptions
		want error
	}{
		{"nil data", nil, nil, []int{1}, ok, nil, ErrEmpty},
		{"typed nil", nil, nilDense, []int{1}, ok, nil, ErrEmpty},
		{"one row", nil, mat.NewDense(1, 2, []float64{1, 2}), []int{1}, ok, nil, ErrEmpty},
		{"NaN", nil, mat.NewDense(2, 1, []float64{1, math.NaN()}), []int{1}, ok, nil, ErrNotFinite},
		{"no ks", nil, X, nil, ok, nil, ErrParameter},
		{"k zero", nil, X, []int{0, 1}, ok, nil, ErrClusters},
		{"k above n", nil, X, []int{1, 11}, ok, nil, ErrClusters},
		{"ks unsorted", nil, X, []int{2, 1}, ok, nil, ErrParameter},
		{"ks repeated", nil, X, []int{2, 2}, ok, nil, ErrParameter},
		{"nil func", nil, X, []int{1}, nil, nil, ErrParameter},
		{"B one", nil, X, []int{1}, ok, &GapOptions{B: 1}, ErrParameter},
		{"B negative", nil, X, []int{1}, ok, &GapOptions{B: -3}, ErrParameter},
		{"workers negative", nil, X, []int{1}, ok, &GapOptions{Workers: -1}, ErrParameter},
		{"unknown reference", nil, X, []int{1}, ok, &GapOptions{Reference: 5}, ErrParameter},
		{"func fails", nil, X, []int{1, 2}, func(_ context.Context, Z *mat.Dense, k int, _ uint64) (float64, error) {
			if Z != X && k == 2 {
				return 0, boom
			}
			return 1, nil
		}, &GapOptions{Workers: 3}, boom},
		{"NaN cost", nil, X, []int{1}, func(context.Context, *mat.Dense, int, uint64) (float64, error) { return math.NaN(), nil }, nil, ErrParameter},
		{"negative cost", nil, X, []int{1}, func(context.Context, *mat.Dense, int, uint64) (float64, error) { return -1, nil }, nil, ErrParameter},
		{"zero data cost", nil, X, []int{1}, func(context.Context, *mat.Dense, int, uint64) (float64, error) { return 0, nil }, nil, ErrClusters},
		{"zero reference cost", nil, X, []int{1}, func(_ context.Context, Z *mat.Dense, _ int, _ uint64) (float64, error) {
			if Z == X {
				return 1, nil
			}
			return 0, nil
		}, nil, ErrParameter},
		{"canceled", canceled, X, []int{1}, ok, nil, context.Canceled},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			ctx := tc.ctx
			if ctx == nil {
				ctx = context.Background()
			}
			var err error
			require.NotPanics(t, func() { _, err = Gap(ctx, tc.X, tc.ks, tc.f, tc.opts) })
			assert.ErrorIs(t, err, tc.want)
		})
	}
}

// TestGapCancelDuringReference cancels from inside the ClusterFunc.
func TestGapCancelDuringReference(t *testing.T) {
	X := uniformSquare(rand.New(rand.NewPCG(4, 4)), 10, 2)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var mu sync.Mutex
	calls := 0
	f := func(ctx context.Context, Z *mat.Dense, _ int, _ uint64) (float64, error) {
		mu.Lock()
		defer mu.Unlock()
		calls++
		if calls == 3 {
			cancel()
		}
		return 1, nil
	}
	_, err := Gap(ctx, X, []int{1, 2}, f, &GapOptions{B: 50, Workers: 2})
	assert.ErrorIs(t, err, context.Canceled)
	assert.Less(t, calls, 20, "clustering stopped soon after the cancellation")
}

func TestGapReferencesLimit(t *testing.T) {
	X := mat.NewDense(10, 1, []float64{0, 1, 2, 3, 4, 10, 11, 12, 13, 14})
	none := func(context.Context, *mat.Dense, int, uint64) (float64, error) { return 1, nil }
	_, err := Gap(context.Background(), X, []int{1, 2}, none, &GapOptions{B: 1 << 40})
	require.ErrorIs(t, err, ErrParameter)
	_, err = Gap(context.Background(), X, []int{1, 2}, none, &GapOptions{B: MaxGapReferences + 1})
	require.ErrorIs(t, err, ErrParameter)
}
