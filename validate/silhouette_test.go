package validate

import (
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
)

var silhouetteMetrics = []struct {
	name  string
	m     distance.Metric
	brute func(x, y []float64) float64
}{
	{"euclidean", distance.Euclidean{}, euclid},
	{"manhattan", distance.Manhattan{}, manhattan},
	{"cosine", distance.Cosine{}, cosineDissim},
}

// TestSilhouetteAgainstBruteForce compares Silhouette, SilhouetteValues and
// ClusterSilhouettes with the n×n-matrix reference for three metrics.
func TestSilhouetteAgainstBruteForce(t *testing.T) {
	cases := randomCases()
	if !testing.Short() {
		cases = append(cases, datasetCases(t)...)
	}
	for _, c := range cases {
		X := rowsOf(c.X)
		for _, met := range silhouetteMetrics {
			if _, d := c.X.Dims(); d == 1 && met.name == "cosine" {
				// In one dimension the cosine dissimilarity is 0 or 2 up to
				// rounding, and silhouettes of rounding noise are arbitrary.
				continue
			}
			t.Run(c.name+"/"+met.name, func(t *testing.T) {
				want := bruteSilhouette(X, c.assign, met.brute)
				vals, err := SilhouetteValues(nil, c.X, c.assign, met.m)
				require.NoError(t, err)
				require.Len(t, vals, len(want))
				for i := range want {
					near(t, want[i], vals[i], 1e-12, "row %d", i)
				}
				var sum float64
				for _, s := range want {
					sum += s
				}
				got, err := Silhouette(c.X, c.assign, met.m)
				require.NoError(t, err)
				near(t, sum/float64(len(want)), got, 1e-12, "mean")

				per, err := ClusterSilhouettes(c.X, c.assign, met.m)
				require.NoError(t, err)
				m, _ := members(c.assign)
				for l, pl := range per {
					var s float64
					for _, i := range m[l] {
						s += want[i]
					}
					if len(m[l]) > 0 {
						s /= float64(len(m[l]))
					}
					near(t, s, pl, 1e-12, "cluster %d", l)
				}
			})
		}
	}
}

// TestSilhouetteValuesDst checks that a large enough dst is reused.
func TestSilhouetteValuesDst(t *testing.T) {
	X := mat.NewDense(4, 1, []float64{0, 2, 10, 12})
	assign := []int{0, 0, 1, 1}
	dst := make([]float64, 2, 10)
	got, err := SilhouetteValues(dst, X, assign, nil)
	require.NoError(t, err)
	require.Len(t, got, 4)
	assert.Same(t, &dst[0], &got[0])
	got, err = SilhouetteValues(make([]float64, 1), X, assign, nil)
	require.NoError(t, err)
	assert.Len(t, got, 4)
}

// TestSilhouetteWorkers checks bit-identical results for any number of
// goroutines, both through the internal worker count and GOMAXPROCS.
func TestSilhouetteWorkers(t *testing.T) {
	rnd := rand.New(rand.NewPCG(4, 4))
	X, assign := blobs(rnd, 333, 5, 6, 4, 1)
	for _, met := range silhouetteMetrics {
		s, err := newSilhouette(X, assign, met.m)
		require.NoError(t, err)
		want, err := s.values(nil, nil, 1)
		require.NoError(t, err)
		for _, w := range []int{2, 3, 7, 16} {
			got, err := s.values(nil, nil, w)
			require.NoError(t, err)
			for i := range want {
				require.Equal(t, math.Float64bits(want[i]), math.Float64bits(got[i]), "%s, %d workers, row %d", met.name, w, i)
			}
		}
	}
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	runtime.GOMAXPROCS(1)
	want, err := Silhouette(X, assign, nil)
	require.NoError(t, err)
	for _, p := range []int{2, 4, 8} {
		runtime.GOMAXPROCS(p)
		got, err := Silhouette(X, assign, nil)
		require.NoError(t, err)
		assert.Equal(t, math.Float64bits(want), math.Float64bits(got), "GOMAXPROCS %d", p)
	}
}

// TestSampledSilhouetteExact checks that a sample of every row gives the
// exact mean.
func TestSampledSilhouetteExact(t *testing.T) {
	rnd := rand.New(rand.NewPCG(5, 5))
	X, assign := blobs(rnd, 60, 2, 3, 3, 1)
	want, err := Silhouette(X, assign, nil)
	require.NoError(t, err)
	for _, m := range []int{60, 1000} {
		est, err := SampledSilhouette(X, assign, nil, m, rand.New(rand.NewPCG(1, 2)))
		require.NoError(t, err)
		assert.Equal(t, Estimate{Mean: want, Lo: want, Hi: want, Samples: 60}, est)
	}
}

// TestSampledSilhouetteSample rebuilds the documented sample (partial
// Fisher–Yates with the same random stream) and checks the mean and
// standard error against the brute-force silhouettes of those rows.
func TestSampledSilhouetteSample(t *testing.T) {
	rnd := rand.New(rand.NewPCG(6, 6))
	X, assign := blobs(rnd, 200, 3, 4, 5, 1)
	all := bruteSilhouette(rowsOf(X), assign, manhattan)
	const m = 37
	est, err := SampledSilhouette(X, assign, distance.Manhattan{}, m, rand.New(rand.NewPCG(8, 9)))
	require.NoError(t, err)

	shadow := rand.New(rand.NewPCG(8, 9))
	perm := make([]int, len(all))
	for i := range perm {
		perm[i] = i
	}
	for t := range m {
		u := t + shadow.IntN(len(perm)-t)
		perm[t], perm[u] = perm[u], perm[t]
	}
	var sum, ss float64
	for _, i := range perm[:m] {
		sum += all[i]
	}
	mean := sum / m
	for _, i := range perm[:m] {
		ss += (all[i] - mean) * (all[i] - mean)
	}
	// Standard error of a mean under simple random sampling without
	// replacement: (s/√m)·√(1−m/N) (Cochran, Sampling Techniques, 1977,
	// theorem 2.2, from memory).
	se := math.Sqrt(ss/(m-1)) / math.Sqrt(m) * math.Sqrt(1-float64(m)/float64(len(all)))
	assert.Equal(t, m, est.Samples)
	near(t, mean, est.Mean, 1e-12)
	near(t, se, est.StdErr, 1e-12)
	near(t, math.Max(-1, mean-1.959963984540054*se), est.Lo, 1e-12)
	near(t, math.Min(1, mean+1.959963984540054*se), est.Hi, 1e-12)
}

// TestSampledSilhouetteCoverage checks that the 95% interval covers the
// exact mean in about 95% of samples.
func TestSampledSilhouetteCoverage(t *testing.T) {
	rnd := rand.New(rand.NewPCG(10, 10))
	// Overlapping blobs give a wide spread of s(i).
	X, assign := blobs(rnd, 400, 2, 4, 8, 1)
	exact, err := Silhouette(X, assign, nil)
	require.NoError(t, err)
	trials := 200
	if testing.Short() {
		trials = 50
	}
	hits := 0
	for seed := range trials {
		est, err := SampledSilhouette(X, assign, nil, 80, rand.New(rand.NewPCG(uint64(seed), 77)))
		require.NoError(t, err)
		require.LessOrEqual(t, est.Lo, est.Mean)
		require.LessOrEqual(t, est.Mean, est.Hi)
		if est.Lo <= exact && exact <= est.Hi {
			hits++
		}
	}
	t.Logf("95%% interval covered the exact silhouette %.4f in %d of %d samples", exact, hits, trials)
	// A nominal 95% interval: allow for binomial noise (sd ≈ 1.5% at 200).
	assert.GreaterOrEqual(t, float64(hits)/float64(trials), 0.88)
}

const (
	benchSilhouetteRows = 2000
	benchSilhouetteDim  = 8
)

func benchmarkSilhouette(b *testing.B, m distance.Metric) {
	rnd := rand.New(rand.NewPCG(1, 1))
	X, assign := blobs(rnd, benchSilhouetteRows, benchSilhouetteDim, 10, 3, 1)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Silhouette(X, assign, m); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkSilhouetteEuclidean(b *testing.B) { benchmarkSilhouette(b, distance.Euclidean{}) }
func BenchmarkSilhouetteManhattan(b *testing.B) { benchmarkSilhouette(b, distance.Manhattan{}) }
func BenchmarkSilhouetteCosine(b *testing.B)    { benchmarkSilhouette(b, distance.Cosine{}) }
