package validate

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
)

// internalIndices calls every internal index with the same inputs and
// returns the errors by name.
func internalIndices(X mat.Matrix, assign []int, m distance.Metric) map[string]error {
	errs := map[string]error{}
	_, errs["Silhouette"] = Silhouette(X, assign, m)
	_, errs["SilhouetteValues"] = SilhouetteValues(nil, X, assign, m)
	_, errs["ClusterSilhouettes"] = ClusterSilhouettes(X, assign, m)
	_, errs["SampledSilhouette"] = SampledSilhouette(X, assign, m, 2, rand.New(rand.NewPCG(1, 1)))
	_, errs["DaviesBouldin"] = DaviesBouldin(X, assign)
	_, errs["CalinskiHarabasz"] = CalinskiHarabasz(X, assign)
	_, errs["Dunn"] = Dunn(X, assign)
	_, errs["WithinSS"] = WithinSS(X, assign)
	return errs
}

func TestBadInput(t *testing.T) {
	good := mat.NewDense(4, 2, []float64{0, 0, 1, 0, 5, 5, 6, 5})
	withNaN := mat.NewDense(4, 2, []float64{0, 0, 1, math.NaN(), 5, 5, 6, 5})
	withInf := mat.NewDense(4, 2, []float64{0, 0, 1, 0, math.Inf(-1), 5, 6, 5})
	var nilDense *mat.Dense
	tests := []struct {
		name   string
		X      mat.Matrix
		assign []int
		m      distance.Metric
		want   error
		only   []string // nil = every index
	}{
		{name: "nil data", X: nil, assign: []int{0}, want: ErrEmpty},
		{name: "typed nil data", X: nilDense, assign: []int{0}, want: ErrEmpty},
		{name: "empty dense", X: &mat.Dense{}, assign: nil, want: ErrEmpty},
		{name: "short assign", X: good, assign: []int{0, 0, 1}, want: ErrLength},
		{name: "long assign", X: good, assign: []int{0, 0, 1, 1, 1}, want: ErrLength},
		{name: "length before NaN", X: withNaN, assign: []int{0}, want: ErrLength},
		{name: "NaN", X: withNaN, assign: []int{0, 0, 1, 1}, want: ErrNotFinite},
		{name: "Inf", X: withInf, assign: []int{0, 0, 1, 1}, want: ErrNotFinite},
		{name: "NaN before label", X: withNaN, assign: []int{0, -1, 1, 1}, want: ErrNotFinite},
		{name: "negative label", X: good, assign: []int{0, -1, 1, 1}, want: ErrLabel},
		{name: "one cluster", X: good, assign: []int{2, 2, 2, 2}, want: ErrClusters,
			only: []string{"Silhouette", "SilhouetteValues", "ClusterSilhouettes", "SampledSilhouette", "DaviesBouldin", "CalinskiHarabasz", "Dunn"}},
		{name: "all singletons", X: good, assign: []int{0, 1, 2, 3}, want: ErrClusters,
			only: []string{"Silhouette", "SilhouetteValues", "ClusterSilhouettes", "SampledSilhouette", "CalinskiHarabasz"}},
		{name: "huge label", X: good, assign: []int{0, 0, 1, 1 << 40}, want: ErrLabel,
			only: []string{"ClusterSilhouettes", "WithinSS"}},
		{name: "largest int label", X: good, assign: []int{0, 0, 1, math.MaxInt}, want: ErrLabel,
			only: []string{"ClusterSilhouettes", "WithinSS"}},
		{name: "bad Minkowski", X: good, assign: []int{0, 0, 1, 1}, m: distance.Minkowski{P: -1}, want: ErrParameter,
			only: []string{"Silhouette", "SilhouetteValues", "ClusterSilhouettes", "SampledSilhouette"}},
		{name: "zero row under cosine", X: good, assign: []int{0, 0, 1, 1}, m: distance.Cosine{}, want: distance.ErrZeroVector,
			only: []string{"Silhouette", "SilhouetteValues", "ClusterSilhouettes", "SampledSilhouette"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var errs map[string]error
			require.NotPanics(t, func() { errs = internalIndices(tc.X, tc.assign, tc.m) })
			names := tc.only
			if names == nil {
				for n := range errs {
					names = append(names, n)
				}
			}
			for _, n := range names {
				assert.ErrorIs(t, errs[n], tc.want, n)
			}
		})
	}
}

func TestDegenerateErrors(t *testing.T) {
	// Two clusters with the same mean: Davies–Bouldin is undefined.
	X := mat.NewDense(4, 1, []float64{-1, 1, -2, 2})
	_, err := DaviesBouldin(X, []int{0, 0, 1, 1})
	assert.ErrorIs(t, err, ErrClusters)
	// All rows equal: CH and Dunn are undefined.
	X = mat.NewDense(4, 1, []float64{3, 3, 3, 3})
	_, err = CalinskiHarabasz(X, []int{0, 0, 1, 1})
	assert.ErrorIs(t, err, ErrClusters)
	_, err = Dunn(X, []int{0, 0, 1, 1})
	assert.ErrorIs(t, err, ErrClusters)
	// Labels far apart are fine for the scalar indices (O(n) memory).
	X = mat.NewDense(4, 1, []float64{0, 1, 5, 6})
	sparse := []int{0, 0, 1 << 40, 1 << 40}
	db, err := DaviesBouldin(X, sparse)
	require.NoError(t, err)
	want, err := DaviesBouldin(X, []int{0, 0, 1, 1})
	require.NoError(t, err)
	assert.Equal(t, want, db)
	sil, err := Silhouette(X, sparse, nil)
	require.NoError(t, err)
	want, err = Silhouette(X, []int{0, 0, 1, 1}, nil)
	require.NoError(t, err)
	assert.Equal(t, want, sil)
}

func TestSampledSilhouetteParameters(t *testing.T) {
	X := mat.NewDense(4, 1, []float64{0, 1, 5, 6})
	assign := []int{0, 0, 1, 1}
	_, err := SampledSilhouette(X, assign, nil, 1, rand.New(rand.NewPCG(1, 1)))
	assert.ErrorIs(t, err, ErrParameter)
	_, err = SampledSilhouette(X, assign, nil, 3, nil)
	assert.ErrorIs(t, err, ErrParameter)
}

// brokenMetric returns NaN or negative distances.
type brokenMetric struct{ v float64 }

func (b brokenMetric) Distance(x, y []float64) float64 { return b.v }
func (brokenMetric) Name() string                      { return "broken" }

func TestSilhouetteBrokenMetric(t *testing.T) {
	X := mat.NewDense(4, 1, []float64{0, 1, 5, 6})
	for _, v := range []float64{math.NaN(), -1, math.Inf(1)} {
		errs := internalIndices(X, []int{0, 0, 1, 1}, brokenMetric{v})
		for _, n := range []string{"Silhouette", "SilhouetteValues", "ClusterSilhouettes", "SampledSilhouette"} {
			assert.ErrorIs(t, errs[n], ErrNotFinite, "%s with distance %v", n, v)
		}
	}
}
