package validate

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/data/reference"
)

func TestCentroidIndexBadInput(t *testing.T) {
	ok := mat.NewDense(2, 2, []float64{0, 0, 1, 1})
	cases := []struct {
		name string
		a, b *mat.Dense
		want error
	}{
		{"nil a", nil, ok, ErrEmpty},
		{"nil b", ok, nil, ErrEmpty},
		{"empty", &mat.Dense{}, ok, ErrEmpty},
		{"dimension", ok, mat.NewDense(2, 3, nil), ErrLength},
		{"NaN", ok, mat.NewDense(1, 2, []float64{0, math.NaN()}), ErrNotFinite},
		{"Inf", mat.NewDense(1, 2, []float64{math.Inf(-1), 0}), ok, ErrNotFinite},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := CentroidIndex(c.a, c.b)
			require.ErrorIs(t, err, c.want)
		})
	}
}

// Worked by hand on a line (Fränti, Rezaei & Zhao 2014 definitions).
func TestCentroidIndexWorked(t *testing.T) {
	col := func(v ...float64) *mat.Dense { return mat.NewDense(len(v), 1, v) }
	cases := []struct {
		name string
		a, b *mat.Dense
		want int
	}{
		// a→b: 0→0, 10→1 (|10−1| = 9 < 10), 20→20: no orphan in b.
		// b→a: 0→0, 1→0, 20→20: 10 is an orphan in a. CI = max(0, 1) = 1.
		{"one cluster missed", col(0, 10, 20), col(0, 1, 20), 1},
		// Same centers in another order.
		{"reordered", col(0, 10, 20), col(20, 0, 10), 0},
		// a→b: 0→0, 10→0 (tie at distance 10 goes to the lower row), 20→20:
		// no orphan in b. b→a: 0→0, 20→20: 10 is an orphan in a.
		// CI = max(0, 1) = 1 (k differs by one).
		{"fewer centers", col(0, 10, 20), col(0, 20), 1},
		// Two clusters of b sit where a has one: a→b maps 0→0, 100→99
		// (tie with 101 goes to the lower row);
		// b→a maps 0→0, 1→0, 99→100, 101→100: a has no orphan; b's 1 and
		// 101 are orphans. CI = 2.
		{"two doubled", col(0, 100), col(0, 1, 99, 101), 2},
		{"single", col(5), col(-3), 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got, err := CentroidIndex(c.a, c.b)
			require.NoError(t, err)
			assert.Equal(t, c.want, got)
			back, err := CentroidIndex(c.b, c.a)
			require.NoError(t, err)
			assert.Equal(t, got, back, "symmetric")
		})
	}
}

func TestCentroidIndexIdenticalAndScaleFree(t *testing.T) {
	rng := rand.New(rand.NewPCG(6, 6))
	c := mat.NewDense(12, 3, nil)
	for i := range 12 {
		for j := range 3 {
			c.Set(i, j, rng.NormFloat64())
		}
	}
	orig := mat.DenseCopyOf(c)
	ci, err := CentroidIndex(c, c)
	require.NoError(t, err)
	assert.Equal(t, 0, ci)
	require.True(t, mat.Equal(orig, c), "input unchanged")

	// Moving center 0 onto center 1 loses one cluster (CI 1), at any scale:
	// huge values must not overflow to +Inf ties, tiny ones not underflow.
	for _, s := range []float64{1, 1e300, 1e-300, 1e-310} {
		a := mat.NewDense(12, 3, nil)
		a.Scale(s, orig)
		b := mat.DenseCopyOf(a)
		b.SetRow(0, b.RawRowView(1))
		ci, err := CentroidIndex(a, b)
		require.NoError(t, err)
		assert.Equal(t, 1, ci, "scale %g", s)
	}
}

// Published data: the S1 ground-truth centroids s1-cb (Fränti & Virmajoki
// 2006; SIPU) against the means of the published labels of s1.csv.
// PROVENANCE.md states that each cb row is nearest to the mean of exactly
// that label, so the centroid index (Fränti, Rezaei & Zhao 2014) is 0.
func TestCentroidIndexS1(t *testing.T) {
	cb := reference.LoadOrSkip(t, "s1-cb").X
	s1 := reference.LoadOrSkip(t, "s1")
	k, d := cb.Dims()
	require.Equal(t, 15, k)
	means := mat.NewDense(k, d, nil)
	counts := make([]float64, k)
	for i, l := range s1.Labels {
		counts[l]++
		for j := range d {
			means.Set(l, j, means.At(l, j)+s1.X.At(i, j))
		}
	}
	for l := range k {
		require.Positive(t, counts[l])
		for j := range d {
			means.Set(l, j, means.At(l, j)/counts[l])
		}
	}
	ci, err := CentroidIndex(cb, means)
	require.NoError(t, err)
	assert.Equal(t, 0, ci)

	// Perturb one center to coincide with another: one cluster lost.
	moved := mat.DenseCopyOf(cb)
	moved.SetRow(3, cb.RawRowView(7))
	ci, err = CentroidIndex(moved, means)
	require.NoError(t, err)
	assert.Equal(t, 1, ci)

	// Drop a center: k differs by one, CI 1.
	ci, err = CentroidIndex(mat.DenseCopyOf(cb.Slice(0, k-1, 0, d)), means)
	require.NoError(t, err)
	assert.Equal(t, 1, ci)
}

func BenchmarkCentroidIndex50(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 1))
	x, y := mat.NewDense(50, 8, nil), mat.NewDense(50, 8, nil)
	for i := range 50 {
		for j := range 8 {
			x.Set(i, j, rng.Float64())
			y.Set(i, j, rng.Float64())
		}
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := CentroidIndex(x, y); err != nil {
			b.Fatal(err)
		}
	}
}
