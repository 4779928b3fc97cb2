package choosek

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/data/reference"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
	"github.com/centroidlab/centroid/validate"
)

// sweepText renders a sweep for comparisons and logs (NaN-safe, unlike
// reflect.DeepEqual).
func sweepText(t *testing.T, r *Result) string {
	t.Helper()
	var b strings.Builder
	_, err := r.WriteTo(&b)
	require.NoError(t, err)
	for _, p := range r.Points {
		fmt.Fprintf(&b, "k=%d cost=%x assign=%v stab=%+v\n", p.K, math.Float64bits(p.Cost), p.Result.Assignments, p.Stability)
	}
	if r.Gap != nil {
		fmt.Fprintf(&b, "gap %+v\n", *r.Gap)
	}
	return b.String()
}

func TestSweepBadInput(t *testing.T) {
	x, _ := sweepMixture([][]float64{{0, 0}, {10, 10}}, []int{20, 20}, 1, 1)
	dup := mat.NewDense(4, 1, []float64{1, 1, 2, 2})
	ctx := context.Background()
	cases := []struct {
		name string
		p    kmeans.Problem
		ks   []int
		s    *kmeans.Settings
		o    *Options
		want error
	}{
		{"nil data", kmeans.Problem{}, []int{2}, nil, nil, kmeans.ErrData},
		{"no ks", kmeans.Problem{Data: x}, nil, nil, nil, kmeans.ErrK},
		{"k zero", kmeans.Problem{Data: x}, []int{0, 1}, nil, nil, kmeans.ErrK},
		{"unsorted", kmeans.Problem{Data: x}, []int{3, 2}, nil, nil, kmeans.ErrK},
		{"repeated", kmeans.Problem{Data: x}, []int{2, 2}, nil, nil, kmeans.ErrK},
		{"k above distinct rows", kmeans.Problem{Data: dup}, []int{2, 3}, nil, nil, kmeans.ErrK},
		{"weights", kmeans.Problem{Data: x, Weights: make([]float64, 40)}, []int{2}, nil, nil, kmeans.ErrWeights},
		{"manhattan", kmeans.Problem{Data: x, Metric: distance.Manhattan{}}, []int{2}, nil, nil, kmeans.ErrMetric},
		{"negative restarts", kmeans.Problem{Data: x}, []int{2}, &kmeans.Settings{Restarts: -1}, nil, kmeans.ErrSettings},
		{"one silhouette sample", kmeans.Problem{Data: x}, []int{2}, nil, &Options{SilhouetteSamples: 1}, kmeans.ErrSettings},
		{"negative exact rows", kmeans.Problem{Data: x}, []int{2}, nil, &Options{ExactSilhouetteRows: -1}, kmeans.ErrSettings},
		{"one gap reference", kmeans.Problem{Data: x}, []int{2}, nil, &Options{GapReferences: 1}, kmeans.ErrSettings},
		{"negative gap restarts", kmeans.Problem{Data: x}, []int{2}, nil, &Options{GapRestarts: -2}, kmeans.ErrSettings},
		{"unknown reference", kmeans.Problem{Data: x}, []int{2}, nil, &Options{GapReference: 7}, kmeans.ErrSettings},
		{"NaN gap tolerance", kmeans.Problem{Data: x}, []int{2}, nil, &Options{GapTolerance: math.NaN()}, kmeans.ErrSettings},
		{"gap tolerance 1", kmeans.Problem{Data: x}, []int{2}, nil, &Options{GapTolerance: 1}, kmeans.ErrSettings},
		{"sample smaller than K", kmeans.Problem{Data: x}, []int{2, 3}, nil, &Options{SkipGap: true, SampleRows: 3}, kmeans.ErrK},
		{"NaN knee flat steps", kmeans.Problem{Data: x}, []int{2}, nil, &Options{KneeFlatSteps: math.NaN()}, kmeans.ErrSettings},
		{"negative knee flat steps", kmeans.Problem{Data: x}, []int{2}, nil, &Options{KneeFlatSteps: -1}, kmeans.ErrSettings},
		{"one resample", kmeans.Problem{Data: x}, []int{2}, nil, &Options{Stability: StabilityOptions{Resamples: 1}}, kmeans.ErrSettings},
		{"fraction above 1", kmeans.Problem{Data: x}, []int{2}, nil, &Options{Stability: StabilityOptions{Fraction: 1.5}}, kmeans.ErrSettings},
		{"subsample too small", kmeans.Problem{Data: x}, []int{2, 3}, nil, &Options{SkipGap: true, Stability: StabilityOptions{Fraction: 0.05}}, kmeans.ErrK},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r, err := Sweep(ctx, c.p, c.ks, c.s, nil, c.o)
			require.Error(t, err)
			assert.ErrorIs(t, err, c.want)
			assert.Nil(t, r)
		})
	}
}

func TestSweepCanceled(t *testing.T) {
	x, _ := sweepMixture([][]float64{{0, 0}, {10, 10}}, []int{20, 20}, 1, 1)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err := Sweep(ctx, kmeans.Problem{Data: x}, []int{1, 2, 3}, nil, nil, nil)
	require.ErrorIs(t, err, context.Canceled)
}

// TestSweepScoresInClusteringSpace recomputes every index of a sweep on
// z-scored data with package validate (the reference) and checks the data
// is not modified.
func TestSweepScoresInClusteringSpace(t *testing.T) {
	x, _ := sweepMixture([][]float64{{0, 0, 0}, {6, 0, 300}, {0, 6, -300}}, []int{30, 40, 50}, 1, 3)
	before := mat.DenseCopyOf(x)
	r, err := Sweep(context.Background(), kmeans.Problem{Data: x, Scaler: &scale.ZScore{}}, sweepRange(1, 5), &kmeans.Settings{Seed: 5}, nil,
		&Options{GapReferences: 4, Stability: StabilityOptions{Resamples: 3}})
	require.NoError(t, err)
	require.True(t, mat.Equal(before, x), "Sweep modified the data")
	n, d := x.Dims()
	for _, p := range r.Points {
		z := mat.NewDense(n, d, nil)
		for i := range n {
			p.Result.Model.Scaler().Apply(z.RawRowView(i), x.RawRowView(i))
		}
		a := p.Result.Assignments
		require.Equal(t, p.K, p.Result.Model.K())
		if p.K == 1 {
			assert.True(t, math.IsNaN(p.Silhouette.Mean) && math.IsNaN(p.DaviesBouldin) && math.IsNaN(p.CalinskiHarabasz) && math.IsNaN(p.Dunn))
			assert.Nil(t, p.Stability)
			continue
		}
		sil, err := validate.Silhouette(z, a, distance.Euclidean{})
		require.NoError(t, err)
		db, err := validate.DaviesBouldin(z, a)
		require.NoError(t, err)
		ch, err := validate.CalinskiHarabasz(z, a)
		require.NoError(t, err)
		dunn, err := validate.Dunn(z, a)
		require.NoError(t, err)
		wss, err := validate.WithinSS(z, a)
		require.NoError(t, err)
		var cost float64
		for _, w := range wss {
			cost += w
		}
		assert.Equal(t, sil, p.Silhouette.Mean, "k=%d", p.K)
		assert.Equal(t, n, p.Silhouette.Samples)
		assert.Equal(t, db, p.DaviesBouldin)
		assert.Equal(t, ch, p.CalinskiHarabasz)
		assert.Equal(t, dunn, p.Dunn)
		assert.InDelta(t, cost, p.Cost, 1e-9*cost)
		require.NotNil(t, p.Stability)
		assert.Equal(t, 3, p.Stability.Resamples)
	}
	require.NotNil(t, r.Gap)
	assert.Equal(t, 3, r.Recommendation.K, "three well-separated generating clusters")
	for i, p := range r.Points {
		assert.Equal(t, r.Gap.Gap[i], p.Gap)
		assert.Equal(t, r.Gap.SK[i], p.GapSE)
		// The data's dispersion in the gap statistic is the sweep's cost.
		assert.Equal(t, math.Log(p.Cost), r.Gap.LogW[i])
	}
}

// TestSweepSampledSilhouette checks the estimate above ExactSilhouetteRows
// brackets the exact value computed by package validate.
func TestSweepSampledSilhouette(t *testing.T) {
	x, _ := sweepMixture([][]float64{{0, 0}, {5, 0}, {0, 5}}, []int{150, 150, 150}, 1, 9)
	r, err := Sweep(context.Background(), kmeans.Problem{Data: x}, []int{2, 3, 4}, &kmeans.Settings{Seed: 2}, nil,
		&Options{ExactSilhouetteRows: 100, SilhouetteSamples: 200, DunnRows: -1, SkipGap: true, SkipStability: true})
	require.NoError(t, err)
	for _, p := range r.Points {
		exact, err := validate.Silhouette(x, p.Result.Assignments, nil)
		require.NoError(t, err)
		e := p.Silhouette
		assert.Equal(t, 200, e.Samples)
		assert.Less(t, e.Lo, e.Hi)
		// A 95% interval misses now and then; three sigma does not.
		assert.InDelta(t, exact, e.Mean, 3*e.StdErr+1e-12, "k=%d exact %.4f estimate %+v", p.K, exact, e)
		assert.True(t, math.IsNaN(p.Dunn), "Dunn is off with DunnRows < 0")
		assert.Nil(t, p.Stability)
	}
	dunn := r.Recommendation.Preferences[ByDunn]
	assert.Equal(t, ByDunn, dunn.By)
	assert.Zero(t, dunn.K)
	assert.Zero(t, r.Recommendation.Preferences[ByGap].K)
	for _, s := range r.Recommendation.Standings {
		assert.True(t, math.IsNaN(s.Scores[ByDunn]) && math.IsNaN(s.Scores[ByGap]), "k=%d: criteria not computed have no score", s.K)
	}
}

func TestSweepDeterministic(t *testing.T) {
	x, _ := sweepMixture([][]float64{{0, 0}, {4, 0}, {0, 4}, {4, 4}}, []int{40, 30, 30, 50}, 1, 4)
	o := &Options{GapReferences: 3, Stability: StabilityOptions{Resamples: 3}}
	run := func(workers int, seed uint64) string {
		r, err := Sweep(context.Background(), kmeans.Problem{Data: x}, sweepRange(1, 6), &kmeans.Settings{Seed: seed, Workers: workers, Restarts: 4}, nil, o)
		require.NoError(t, err)
		return sweepText(t, r)
	}
	one := run(1, 8)
	assert.Equal(t, one, run(2, 8), "Workers changed the result")
	assert.Equal(t, one, run(5, 8), "Workers changed the result")
	assert.NotEqual(t, one, run(1, 9), "the seed should matter")
}

// TestSweepS1S2 checks the recommendation on the S1 and S2 benchmark sets:
// 15 Gaussian clusters, ground truth published with the sets (P. Fränti
// and O. Virmajoki, "Iterative shrinking method for clustering problems",
// Pattern Recognition 39(5), 2006). The recommended clustering must also
// match the published centroids (s1-cb, s2-cb) cluster for cluster:
// centroid index 0 (Fränti, Rezaei & Zhao 2014).
func TestSweepS1S2(t *testing.T) {
	ks := sweepRange(2, 20)
	resamples := 4
	if sweepRace {
		ks, resamples = sweepRange(13, 17), 2 // the race detector is 5–10× slower
	}
	for _, name := range []string{"s1", "s2"} {
		t.Run(name, func(t *testing.T) {
			set := reference.LoadOrSkip(t, name)
			cb := reference.LoadOrSkip(t, name+"-cb")
			r, err := Sweep(context.Background(), kmeans.Problem{Data: set.X}, ks, &kmeans.Settings{Seed: 1, Restarts: 5}, nil,
				&Options{SkipGap: true, DunnRows: -1, Stability: StabilityOptions{Resamples: resamples, Restarts: 2}})
			require.NoError(t, err)
			var b strings.Builder
			r.WriteTo(&b)
			t.Logf("%s:\n%s", name, b.String())
			require.Equal(t, 15, r.Recommendation.K, "published number of clusters (Fränti & Virmajoki 2006)")
			ci, err := validate.CentroidIndex(cb.X, r.Recommended().Model.Centers())
			require.NoError(t, err)
			assert.Zero(t, ci, "centroid index against the published centroids")
			st := r.Point(15).Stability
			assert.Equal(t, validate.Reproduced, st.Reading(), "every S-set cluster is reproduced by resamples (Hennig 2007 reading, common practice)")
			assert.True(t, r.Recommendation.Clear, "15 well-separated Gaussian clusters are a clear structure")
		})
	}
}

// TestSweepIris reports what each index says on Fisher's iris data (150
// rows, 3 species; the published labels are in the shared dataset).
// Versicolor and virginica overlap, so 2 and 3 are both defensible: the
// test asserts no single k, only that the recommendation is one of them.
func TestSweepIris(t *testing.T) {
	set := reference.LoadOrSkip(t, "iris")
	r, err := Sweep(context.Background(), kmeans.Problem{Data: set.X, Scaler: &scale.ZScore{}}, sweepRange(1, 8), &kmeans.Settings{Seed: 1}, nil,
		&Options{GapReferences: 5, Stability: StabilityOptions{Resamples: 5}})
	require.NoError(t, err)
	var b strings.Builder
	r.WriteTo(&b)
	t.Logf("iris, z-scored:\n%s", b.String())
	for _, v := range r.Recommendation.Preferences {
		t.Logf("iris: %s prefers k = %d (%s)", v.By, v.K, v.Note)
	}
	assert.Contains(t, []int{2, 3}, r.Recommendation.K)
}

// TestGapHitRate follows the simulations of R. Tibshirani, G. Walther and
// T. Hastie, "Estimating the number of clusters in a data set via the gap
// statistic", JRSS B 63(2), 2001, section 6 (set-ups from memory): the gap
// rule should find the generating k of well-separated mixtures and k = 1 on
// uniform data in most seeds.
func TestGapHitRate(t *testing.T) {
	seeds := 10
	if sweepRace || testing.Short() {
		seeds = 3
	}
	scenarios := []struct {
		name string
		want int
		data func(seed uint64) *mat.Dense
		min  float64 // smallest acceptable hit rate
	}{
		{
			// Three clusters in two dimensions: 25, 25 and 50 standard normal
			// rows around (0,0), (0,5), (5,−3) (Tibshirani et al., set-up b,
			// from memory).
			name: "three clusters", want: 3, min: 0.8,
			data: func(seed uint64) *mat.Dense {
				x, _ := sweepMixture([][]float64{{0, 0}, {0, 5}, {5, -3}}, []int{25, 25, 50}, 1, seed)
				return x
			},
		},
		{
			// Five clusters in three dimensions of 25 or 50 standard normal
			// rows, centres 10 apart (our well-separated variant of set-up c,
			// which has four clusters of 25 or 50 rows in three dimensions).
			// The rule stops at the first k whose gap is within s_{k+1} of
			// the next: layouts where two clusters gain little over one
			// (a symmetric square of centres, say) can make it stop at k = 1.
			name: "five clusters", want: 5, min: 0.8,
			data: func(seed uint64) *mat.Dense {
				x, _ := sweepMixture([][]float64{{0, 0, 0}, {10, 0, 0}, {0, 10, 0}, {0, 0, 10}, {10, 10, 0}}, []int{25, 50, 25, 50, 50}, 1, seed)
				return x
			},
		},
		{
			// Null model: 200 rows uniform in 10 dimensions (set-up a).
			name: "uniform", want: 1, min: 0.7,
			data: func(seed uint64) *mat.Dense { return sweepUniform(200, 10, seed) },
		},
	}
	for _, sc := range scenarios {
		t.Run(sc.name, func(t *testing.T) {
			hits := 0
			var picks []int
			for seed := range uint64(seeds) {
				r, err := Sweep(context.Background(), kmeans.Problem{Data: sc.data(100 + seed)}, sweepRange(1, 8), &kmeans.Settings{Seed: seed, Restarts: 5}, nil,
					&Options{SkipStability: true, GapReferences: 10, GapRestarts: 2})
				require.NoError(t, err)
				v := r.Recommendation.Preferences[ByGap]
				picks = append(picks, v.K)
				if v.K == sc.want {
					hits++
				}
			}
			rate := float64(hits) / float64(seeds)
			t.Logf("gap rule, %s: picked k = %d in %d of %d seeds (%.0f%%); picks %v", sc.name, sc.want, hits, seeds, 100*rate, picks)
			assert.GreaterOrEqual(t, rate, sc.min)
		})
	}
}

// TestSweepWriteToError checks the writer's error is returned.
func TestSweepWriteToError(t *testing.T) {
	r := &Result{Points: []Point{{K: 1, Cost: 1, Silhouette: validate.Estimate{Mean: math.NaN()}, DaviesBouldin: math.NaN(), CalinskiHarabasz: math.NaN(), Dunn: math.NaN(), Gap: math.NaN()}}}
	r.recommend(curveEvidence{}, curveEvidence{}, false)
	_, err := r.WriteTo(failWriter{})
	require.Error(t, err)
}

type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, errors.New("disk full") }

// BenchmarkSweep measures a small sweep with every index, the gap statistic
// and stability.
func BenchmarkSweep(b *testing.B) {
	x, _ := sweepMixture([][]float64{{0, 0}, {6, 0}, {0, 6}, {6, 6}}, []int{100, 100, 100, 100}, 1, 1)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Sweep(context.Background(), kmeans.Problem{Data: x}, sweepRange(1, 8), &kmeans.Settings{Seed: 1, Restarts: 3}, nil, nil); err != nil {
			b.Fatal(err)
		}
	}
}
