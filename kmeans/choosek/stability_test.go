package choosek

import (
	"context"
	"fmt"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/validate"
)

// TestStabilityClusteredVersusUniform: four well-separated clusters are
// reproduced by every resample, uniform data cut into five is not. Reading of
// the Jaccard means after C. Hennig, "Cluster-wise assessment of cluster
// stability", CSDA 52, 2007: 0.75 and above stable (common practice).
func TestStabilityClusteredVersusUniform(t *testing.T) {
	ctx := context.Background()
	blobs, truth := sweepMixture([][]float64{{0, 0}, {12, 0}, {0, 12}, {12, 12}}, []int{100, 80, 120, 100}, 1, 21)
	st, err := MeasureStability(ctx, kmeans.Problem{Data: blobs, K: 4}, nil, &kmeans.Settings{Seed: 3}, nil, nil)
	require.NoError(t, err)
	t.Logf("clustered: mean ARI %.3f, Jaccard %.3f", st.MeanARI, st.Jaccard)
	assert.Equal(t, DefaultStabilityResamples, st.Resamples)
	assert.Equal(t, DefaultStabilityFraction, st.Fraction)
	assert.Equal(t, 400, st.Rows)
	for j, v := range st.Jaccard {
		assert.Greater(t, v, 0.75, "cluster %d", j)
		assert.Equal(t, st.Resamples, st.Drawn[j])
	}
	assert.Greater(t, st.MeanARI, 0.99)
	assert.Equal(t, validate.Reproduced, st.Reading())
	assert.Equal(t, []int{0, 0, 0, 0}, st.Lost, "no resample loses a well-separated cluster")

	// The same with the generating labels as the reference.
	st2, err := MeasureStability(ctx, kmeans.Problem{Data: blobs, K: 4}, truth, &kmeans.Settings{Seed: 3}, nil, nil)
	require.NoError(t, err)
	assert.Greater(t, st2.MinJaccard(), 0.75)

	uni := sweepUniform(400, 2, 5)
	su, err := MeasureStability(ctx, kmeans.Problem{Data: uni, K: 5}, nil, &kmeans.Settings{Seed: 3}, nil, nil)
	require.NoError(t, err)
	t.Logf("uniform, k = 5: mean ARI %.3f, Jaccard %.3f", su.MeanARI, su.Jaccard)
	assert.Less(t, su.MeanARI, st.MeanARI-0.1)
	assert.Less(t, su.MinJaccard(), st.MinJaccard()-0.1)
	assert.Less(t, su.MinJaccard(), 0.75, "some cut of uniform data is not reproduced")
	assert.NotEqual(t, validate.Reproduced, su.Reading())
	checkLost(t, st)
	checkLost(t, su)
}

// checkLost checks Lost against what it implies for the means: a resample
// that loses cluster j contributes at most validate.JaccardLost to its mean
// and one that keeps it more than that, at most 1.
func checkLost(t *testing.T, st *Stability) {
	t.Helper()
	require.Len(t, st.Lost, st.K)
	for j := range st.K {
		d, l := float64(st.Drawn[j]), float64(st.Lost[j])
		require.LessOrEqual(t, st.Lost[j], st.Drawn[j])
		if d == 0 {
			continue
		}
		assert.LessOrEqual(t, st.Jaccard[j], (validate.JaccardLost*l+(d-l))/d+1e-12, "cluster %d", j)
		if l < d {
			assert.Greater(t, st.Jaccard[j], validate.JaccardLost*(d-l)/d, "cluster %d", j)
		}
	}
}

func TestStabilityDeterministic(t *testing.T) {
	x, _ := sweepMixture([][]float64{{0, 0}, {3, 0}, {0, 3}}, []int{60, 60, 60}, 1, 2)
	run := func(workers int, seed uint64) string {
		st, err := MeasureStability(context.Background(), kmeans.Problem{Data: x, K: 3, Weights: slices.Repeat([]float64{1, 2}, 90)}, nil,
			&kmeans.Settings{Seed: seed, Workers: workers}, nil, &StabilityOptions{Resamples: 4, Fraction: 0.7, Restarts: 2})
		require.NoError(t, err)
		return fmt.Sprintf("%+v", *st)
	}
	a := run(1, 4)
	assert.Equal(t, a, run(2, 4))
	assert.Equal(t, a, run(3, 4))
	assert.NotEqual(t, a, run(1, 5))
}

func TestStabilityBadInput(t *testing.T) {
	x, _ := sweepMixture([][]float64{{0, 0}, {5, 5}}, []int{10, 10}, 1, 1)
	ref := make([]int, 20)
	ctx := context.Background()
	cases := []struct {
		name string
		p    kmeans.Problem
		ref  []int
		s    *kmeans.Settings
		o    *StabilityOptions
		want error
	}{
		{"one resample", kmeans.Problem{Data: x, K: 2}, ref, nil, &StabilityOptions{Resamples: 1}, kmeans.ErrSettings},
		{"negative resamples", kmeans.Problem{Data: x, K: 2}, ref, nil, &StabilityOptions{Resamples: -3}, kmeans.ErrSettings},
		{"fraction above one", kmeans.Problem{Data: x, K: 2}, ref, nil, &StabilityOptions{Fraction: 1.01}, kmeans.ErrSettings},
		{"negative fraction", kmeans.Problem{Data: x, K: 2}, ref, nil, &StabilityOptions{Fraction: -0.5}, kmeans.ErrSettings},
		{"negative restarts", kmeans.Problem{Data: x, K: 2}, ref, nil, &StabilityOptions{Restarts: -1}, kmeans.ErrSettings},
		{"bad settings", kmeans.Problem{Data: x, K: 2}, ref, &kmeans.Settings{Workers: -1}, nil, kmeans.ErrSettings},
		{"nil data", kmeans.Problem{K: 2}, ref, nil, nil, kmeans.ErrData},
		{"short reference", kmeans.Problem{Data: x, K: 2}, ref[:5], nil, nil, kmeans.ErrData},
		{"label out of range", kmeans.Problem{Data: x, K: 2}, append(make([]int, 19), 2), nil, nil, kmeans.ErrK},
		{"negative label", kmeans.Problem{Data: x, K: 2}, append(make([]int, 19), -1), nil, nil, kmeans.ErrK},
		{"subsample smaller than K", kmeans.Problem{Data: x, K: 2}, ref, nil, &StabilityOptions{Fraction: 0.05}, kmeans.ErrK},
		{"clustering fails", kmeans.Problem{Data: x, K: 30}, nil, nil, nil, kmeans.ErrK},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			st, err := MeasureStability(ctx, c.p, c.ref, c.s, nil, c.o)
			require.ErrorIs(t, err, c.want)
			assert.Nil(t, st)
		})
	}
}

// TestStabilityReadings checks the per-cluster readings follow
// validate.ReadJaccard and the clustering's reading is its weakest
// cluster's.
func TestStabilityReadings(t *testing.T) {
	st := &Stability{K: 3, Jaccard: []float64{0.9, 0.65, 0.2}}
	assert.Equal(t, []validate.Reproduction{validate.Reproduced, validate.PartlyReproduced, validate.NotReproduced}, st.Readings())
	assert.Equal(t, validate.NotReproduced, st.Reading())
	assert.Equal(t, 0.2, st.MinJaccard())
	assert.Equal(t, validate.PartlyReproduced, (&Stability{Jaccard: []float64{0.8, 0.7}}).Reading())
	assert.Zero(t, (&Stability{}).MinJaccard())
}

// TestSubsampleAndCommonRows checks the resampling helpers against brute
// force.
func TestSubsampleAndCommonRows(t *testing.T) {
	for _, size := range []int{1, 7, 50, 100} {
		rows := subsample(100, size, 42)
		require.Len(t, rows, size)
		assert.True(t, slices.IsSorted(rows))
		assert.Len(t, slices.Compact(slices.Clone(rows)), size, "rows repeat")
		assert.GreaterOrEqual(t, rows[0], 0)
		assert.Less(t, rows[size-1], 100)
		assert.Equal(t, rows, subsample(100, size, 42))
	}
	assert.NotEqual(t, subsample(100, 10, 1), subsample(100, 10, 2))
	ra, rb := subsample(60, 40, 1), subsample(60, 40, 2)
	la, lb := make([]int, 40), make([]int, 40)
	for i := range la {
		la[i], lb[i] = ra[i]%3, rb[i]%5
	}
	ca, cb := commonLabels(ra, la, rb, lb)
	var wa, wb []int
	for i, r := range ra {
		for j, s := range rb {
			if r == s {
				wa, wb = append(wa, la[i]), append(wb, lb[j])
			}
		}
	}
	assert.Equal(t, wa, ca)
	assert.Equal(t, wb, cb)
}
