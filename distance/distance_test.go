package distance_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/floats"

	"github.com/centroidlab/centroid/distance"
)

// lengths are the vector lengths the random checks run on.
var lengths = []int{1, 2, 3, 7, 64, 1000}

// randomVector returns n values drawn from N(0, scale²).
func randomVector(rnd *rand.Rand, n int, scale float64) []float64 {
	v := make([]float64, n)
	for i := range v {
		v[i] = scale * rnd.NormFloat64()
	}
	return v
}

// assertClose asserts |want−got| ≤ rel·max(1, |want|).
func assertClose(t *testing.T, want, got, rel float64, msgAndArgs ...any) {
	t.Helper()
	assert.InDelta(t, want, got, rel*math.Max(1, math.Abs(want)), msgAndArgs...)
}

// cosineReference is 1 − x·y/(‖x‖‖y‖) written with gonum floats.Dot and
// floats.Norm, the definition this package's Cosine is checked against.
func cosineReference(x, y []float64) float64 {
	return 1 - floats.Dot(x, y)/(floats.Norm(x, 2)*floats.Norm(y, 2))
}

// minkowskiCase pairs a metric with the order L of gonum's floats.Distance
// that computes the same value.
type minkowskiCase struct {
	metric distance.Metric
	l      float64
}

// lpCases are the metrics gonum's floats.Distance(x, y, L) is the reference
// for.
var lpCases = []minkowskiCase{
	{distance.Euclidean{}, 2},
	{distance.Manhattan{}, 1},
	{distance.Chebyshev{}, math.Inf(1)},
	{distance.Minkowski{P: 0.5}, 0.5},
	{distance.Minkowski{P: 1}, 1},
	{distance.Minkowski{P: 1.5}, 1.5},
	{distance.Minkowski{P: 2}, 2},
	{distance.Minkowski{P: 3}, 3},
	{distance.Minkowski{P: 7.5}, 7.5},
}

func TestDistanceAgainstGonum(t *testing.T) {
	rnd := rand.New(rand.NewPCG(1, 1))
	for _, tc := range lpCases {
		for _, n := range lengths {
			t.Run(fmt.Sprintf("%s_p%v_n%d", tc.metric.Name(), tc.l, n), func(t *testing.T) {
				for range 20 {
					x := randomVector(rnd, n, 3)
					y := randomVector(rnd, n, 3)
					x0, y0 := slices.Clone(x), slices.Clone(y)
					want := floats.Distance(x, y, tc.l) // reference: gonum floats.Distance
					assertClose(t, want, tc.metric.Distance(x, y), 1e-12)
					got, err := distance.Between(tc.metric, x, y)
					require.NoError(t, err)
					assertClose(t, want, got, 1e-12)
					assert.Equal(t, x0, x, "x modified")
					assert.Equal(t, y0, y, "y modified")
				}
			})
		}
	}
}

func TestCosineAgainstGonum(t *testing.T) {
	rnd := rand.New(rand.NewPCG(2, 2))
	for _, n := range lengths {
		t.Run(fmt.Sprint(n), func(t *testing.T) {
			for range 20 {
				x := randomVector(rnd, n, 5)
				y := randomVector(rnd, n, 0.2)
				want := cosineReference(x, y) // reference: gonum floats.Dot and floats.Norm
				got := distance.Cosine{}.Distance(x, y)
				assert.InDelta(t, want, got, 1e-12)
				// The cosine of a pair does not change when the rows are
				// scaled by positive factors, however extreme: the
				// rescaling path must agree with the reference too.
				tiny := slices.Clone(x)
				floats.Scale(1e-200, tiny)
				huge := slices.Clone(y)
				floats.Scale(1e250, huge)
				assert.InDelta(t, want, distance.Cosine{}.Distance(tiny, huge), 1e-12)
				assert.InDelta(t, want, distance.Cosine{}.Distance(huge, tiny), 1e-12)
			}
		})
	}
}

func TestSqEuclideanAgainstGonum(t *testing.T) {
	rnd := rand.New(rand.NewPCG(3, 3))
	for _, n := range lengths {
		for range 20 {
			x := randomVector(rnd, n, 2)
			y := randomVector(rnd, n, 2)
			d := floats.Distance(x, y, 2) // reference: gonum floats.Distance
			assertClose(t, d*d, distance.SqEuclidean(x, y), 1e-12)
			e := distance.Euclidean{}.Distance(x, y)
			assertClose(t, e*e, distance.SqEuclidean(x, y), 1e-12, "SqEuclidean = Euclidean²")
		}
	}
}

func TestOneFeature(t *testing.T) {
	// A one-feature distance of two values 34 and 30 is 4 for every Lp
	// distance: |34−30| = 4 (common practice).
	x, y := []float64{34}, []float64{30}
	for _, m := range []distance.Metric{
		distance.Euclidean{},
		distance.Manhattan{},
		distance.Chebyshev{},
		distance.Minkowski{P: 0.5},
		distance.Minkowski{P: 1},
		distance.Minkowski{P: 2},
		distance.Minkowski{P: 3},
		distance.Minkowski{P: 400},
	} {
		t.Run(metricLabel(m), func(t *testing.T) {
			assert.Equal(t, 4.0, m.Distance(x, y))
			assert.Equal(t, 4.0, m.Distance(y, x))
		})
	}
	assert.Equal(t, 16.0, distance.SqEuclidean(x, y))
}

func TestMinkowskiLargeOrder(t *testing.T) {
	// |x_i−y_i|^P overflows or underflows for large P unless the sum is
	// scaled; the values below are worked by hand: (2·d^P)^(1/P) = d·2^(1/P).
	tests := []struct {
		p, d float64
	}{
		{400, 10},
		{400, 0.1},
		{1000, 3},
		{1000, 1e-3},
	}
	for _, tc := range tests {
		got := distance.Minkowski{P: tc.p}.Distance([]float64{0, 0}, []float64{tc.d, -tc.d})
		assertClose(t, tc.d*math.Pow(2, 1/tc.p), got, 1e-14, "P=%v d=%v", tc.p, tc.d)
	}
}

// allMetrics lists every metric of the package, with Minkowski on both sides
// of P = 1.
var allMetrics = []distance.Metric{
	distance.Euclidean{},
	distance.Manhattan{},
	distance.Cosine{},
	distance.Chebyshev{},
	distance.Minkowski{P: 0.5},
	distance.Minkowski{P: 1.5},
	distance.Minkowski{P: 3},
}

// metricLabel names a metric and its parameters for subtests.
func metricLabel(m distance.Metric) string {
	if mk, ok := m.(distance.Minkowski); ok {
		return fmt.Sprintf("%s_p%v", m.Name(), mk.P)
	}
	return m.Name()
}

func TestMetricAxioms(t *testing.T) {
	rnd := rand.New(rand.NewPCG(4, 4))
	for _, m := range allMetrics {
		tri, isTriangle := m.(distance.Triangle)
		holds := isTriangle && tri.Triangle()
		t.Run(metricLabel(m), func(t *testing.T) {
			for _, n := range []int{1, 2, 5, 50} {
				for range 200 {
					x := randomVector(rnd, n, 1)
					y := randomVector(rnd, n, 1)
					z := randomVector(rnd, n, 1)
					dxy, dyz, dxz := m.Distance(x, y), m.Distance(y, z), m.Distance(x, z)
					assert.Equal(t, dxy, m.Distance(y, x), "symmetry")
					assert.GreaterOrEqual(t, dxy, 0.0, "non-negative")
					assert.InDelta(t, 0, m.Distance(x, x), 1e-15, "identity")
					if holds {
						assert.LessOrEqual(t, dxz, dxy+dyz+1e-12*(dxy+dyz), "triangle inequality")
					}
				}
			}
		})
	}
}

func TestTriangle(t *testing.T) {
	tests := []struct {
		m    distance.Metric
		want bool
	}{
		{distance.Euclidean{}, true},
		{distance.Manhattan{}, true},
		{distance.Chebyshev{}, true},
		{distance.Minkowski{P: 1}, true},
		{distance.Minkowski{P: 2.5}, true},
		{distance.Minkowski{P: 0.999}, false},
		{distance.Minkowski{P: 0.5}, false},
	}
	for _, tc := range tests {
		tri, ok := tc.m.(distance.Triangle)
		require.True(t, ok, metricLabel(tc.m))
		assert.Equal(t, tc.want, tri.Triangle(), metricLabel(tc.m))
	}
	// Cosine does not satisfy the inequality and does not claim to.
	_, ok := distance.Metric(distance.Cosine{}).(distance.Triangle)
	assert.False(t, ok)
}

func TestMinkowskiBelowOneBreaksTriangle(t *testing.T) {
	// For P = 1/2, x = (0,0), y = (1,0), z = (1,1):
	// d(x,y) = d(y,z) = 1 but d(x,z) = (1^½ + 1^½)² = 4 > 1 + 1 (by hand).
	m := distance.Minkowski{P: 0.5}
	x, y, z := []float64{0, 0}, []float64{1, 0}, []float64{1, 1}
	assert.False(t, m.Triangle())
	assert.Equal(t, 1.0, m.Distance(x, y))
	assert.Equal(t, 1.0, m.Distance(y, z))
	assert.Equal(t, 4.0, m.Distance(x, z))
	assert.Greater(t, m.Distance(x, z), m.Distance(x, y)+m.Distance(y, z))
}

func TestCosine(t *testing.T) {
	c := distance.Cosine{}
	zero := []float64{0, 0, 0}
	x := []float64{3, -1, 2}
	tests := []struct {
		name string
		x, y []float64
		want float64
	}{
		{"parallel", x, []float64{6, -2, 4}, 0},
		{"same", x, x, 0},
		{"opposite", x, []float64{-1.5, 0.5, -1}, 2},
		{"orthogonal", []float64{1, 2, 0}, []float64{-2, 1, 5}, 1},
		{"zero and zero", zero, zero, 1},
		{"zero and row", zero, x, 1},
		{"row and zero", x, zero, 1},
		{"empty", nil, nil, 1},
		{"tiny parallel", []float64{3e-200, 4e-200}, []float64{6e-180, 8e-180}, 0},
		{"huge opposite", []float64{1e300, 1e300}, []float64{-1e300, -1e300}, 2},
		{"subnormal and huge", []float64{5e-324, 0}, []float64{1.7e308, 0}, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			assert.InDelta(t, tc.want, c.Distance(tc.x, tc.y), 1e-15)
			assert.InDelta(t, tc.want, c.Loss(tc.x, tc.y), 1e-15)
		})
	}

	require.ErrorIs(t, c.CheckRow(zero), distance.ErrZeroVector)
	require.ErrorIs(t, c.CheckRow(nil), distance.ErrZeroVector)
	require.NoError(t, c.CheckRow(x))
	require.NoError(t, c.CheckRow([]float64{0, 5e-324}))
	_, err := distance.Between(c, zero, x)
	require.ErrorIs(t, err, distance.ErrZeroVector)
	_, err = distance.Between(c, x, zero)
	require.ErrorIs(t, err, distance.ErrZeroVector)
	require.ErrorIs(t, distance.CheckRow(c, zero), distance.ErrZeroVector)
}

func TestCosineRange(t *testing.T) {
	// Random finite rows of every magnitude, including pairs that are nearly
	// parallel or opposite, never leave [0, 2].
	rnd := rand.New(rand.NewPCG(5, 5))
	c := distance.Cosine{}
	for range 20000 {
		n := 1 + rnd.IntN(6)
		x := randomVector(rnd, n, math.Pow(10, float64(rnd.IntN(581)-290)))
		y := slices.Clone(x)
		floats.Scale(-math.Pow(10, float64(rnd.IntN(21)-10)), y)
		if rnd.IntN(2) == 0 {
			floats.Scale(-1, y)
		}
		for i := range y {
			y[i] *= 1 + 1e-9*rnd.NormFloat64()
		}
		for _, d := range []float64{c.Distance(x, y), c.Distance(x, randomVector(rnd, n, 1))} {
			require.False(t, math.IsNaN(d), "x=%v y=%v", x, y)
			require.GreaterOrEqual(t, d, 0.0)
			require.LessOrEqual(t, d, 2.0)
		}
	}
}

func TestObjective(t *testing.T) {
	rnd := rand.New(rand.NewPCG(6, 6))
	tests := []struct {
		m    distance.Metric
		rule distance.CenterRule
		loss func(x, c []float64) float64 // independent reference
	}{
		{distance.Euclidean{}, distance.MeanRule, func(x, c []float64) float64 {
			d := floats.Distance(x, c, 2) // reference: gonum floats.Distance
			return d * d
		}},
		{distance.Manhattan{}, distance.MedianRule, func(x, c []float64) float64 {
			return floats.Distance(x, c, 1) // reference: gonum floats.Distance
		}},
		{distance.Cosine{}, distance.UnitMeanRule, cosineReference},
	}
	for _, tc := range tests {
		t.Run(tc.m.Name(), func(t *testing.T) {
			o, ok := tc.m.(distance.Objective)
			require.True(t, ok)
			assert.Equal(t, tc.rule, o.Rule())
			for _, n := range lengths {
				x := randomVector(rnd, n, 1)
				c := randomVector(rnd, n, 1)
				assertClose(t, tc.loss(x, c), o.Loss(x, c), 1e-12)
			}
		})
	}
	for _, m := range []distance.Metric{distance.Chebyshev{}, distance.Minkowski{P: 3}} {
		_, ok := m.(distance.Objective)
		assert.False(t, ok, "%s has no center rule", m.Name())
	}
}

func TestCenterRuleString(t *testing.T) {
	// The names documented on the rules.
	assert.Equal(t, "mean", distance.MeanRule.String())
	assert.Equal(t, "median", distance.MedianRule.String())
	assert.Equal(t, "unit-mean", distance.UnitMeanRule.String())
	assert.Equal(t, "CenterRule(0)", distance.CenterRule(0).String())
	assert.Equal(t, "CenterRule(9)", distance.CenterRule(9).String())
}

func TestByName(t *testing.T) {
	for _, m := range allMetrics {
		t.Run(metricLabel(m), func(t *testing.T) {
			var p []float64
			if mk, ok := m.(distance.Minkowski); ok {
				p = []float64{mk.P}
			}
			got, err := distance.ByName(m.Name(), p...)
			require.NoError(t, err)
			assert.Equal(t, m, got)
			assert.Equal(t, m.Name(), got.Name())
		})
	}
	names := map[string]bool{}
	for _, m := range allMetrics {
		names[m.Name()] = true
	}
	assert.Len(t, names, 5, "names are distinct")

	for _, name := range []string{"", "Euclidean", "cityblock", "l2", "cosine "} {
		_, err := distance.ByName(name)
		assert.ErrorIs(t, err, distance.ErrUnknown, "%q", name)
	}
	for _, p := range [][]float64{nil, {}, {1, 2}, {0}, {-1}, {math.NaN()}, {math.Inf(1)}} {
		_, err := distance.ByName("minkowski", p...)
		assert.ErrorIs(t, err, distance.ErrParameter, "p=%v", p)
	}
}

func TestMinkowskiParameter(t *testing.T) {
	x, y := []float64{1, 2}, []float64{3, 5}
	for _, p := range []float64{0, -0.5, -2, math.NaN(), math.Inf(1), math.Inf(-1)} {
		t.Run(fmt.Sprint(p), func(t *testing.T) {
			m := distance.Minkowski{P: p}
			assert.ErrorIs(t, m.Validate(), distance.ErrParameter)
			assert.ErrorIs(t, distance.Check(m), distance.ErrParameter)
			assert.ErrorIs(t, distance.Check(&m), distance.ErrParameter)
			assert.ErrorIs(t, distance.CheckRow(m, x), distance.ErrParameter)
			_, err := distance.Between(m, x, y)
			assert.ErrorIs(t, err, distance.ErrParameter)
			assert.True(t, math.IsNaN(m.Distance(x, y)), "documented: NaN for invalid P")
			assert.False(t, m.Triangle())
		})
	}
	for _, p := range []float64{1e-3, 0.5, 1, 2, 50} {
		m := distance.Minkowski{P: p}
		assert.NoError(t, m.Validate())
		assert.NoError(t, distance.Check(m))
		assert.NoError(t, distance.Check(&m))
	}
}

func TestCheckNil(t *testing.T) {
	assert.ErrorIs(t, distance.Check(nil), distance.ErrUnknown)
	assert.ErrorIs(t, distance.Check((*distance.Minkowski)(nil)), distance.ErrUnknown)
	_, err := distance.Between(nil, []float64{1}, []float64{2})
	assert.ErrorIs(t, err, distance.ErrUnknown)
	for _, m := range allMetrics {
		assert.NoError(t, distance.Check(m), metricLabel(m))
	}
}

func TestBetweenErrors(t *testing.T) {
	ok := []float64{1, 2, 3}
	tests := []struct {
		name string
		x, y []float64
		want error
	}{
		{"short y", ok, []float64{1, 2}, distance.ErrLength},
		{"short x", []float64{1}, ok, distance.ErrLength},
		{"nil y", ok, nil, distance.ErrLength},
		{"NaN in x", []float64{1, math.NaN(), 3}, ok, distance.ErrNotFinite},
		{"+Inf in y", ok, []float64{1, 2, math.Inf(1)}, distance.ErrNotFinite},
		{"-Inf in x", []float64{math.Inf(-1), 2, 3}, ok, distance.ErrNotFinite},
	}
	for _, m := range allMetrics {
		for _, tc := range tests {
			t.Run(metricLabel(m)+"/"+tc.name, func(t *testing.T) {
				x0, y0 := slices.Clone(tc.x), slices.Clone(tc.y)
				d, err := distance.Between(m, tc.x, tc.y)
				require.ErrorIs(t, err, tc.want)
				assert.Zero(t, d)
				assert.True(t, sameBits(x0, tc.x), "x modified")
				assert.True(t, sameBits(y0, tc.y), "y modified")
			})
		}
	}
}

// sameBits reports whether a and b hold bit-identical values (NaN included).
func sameBits(a, b []float64) bool {
	return slices.EqualFunc(a, b, func(u, v float64) bool { return math.Float64bits(u) == math.Float64bits(v) })
}

func TestBetweenEmpty(t *testing.T) {
	// Two empty rows are zero apart under every Lp distance.
	for _, m := range allMetrics {
		if m.Name() == "cosine" {
			continue
		}
		d, err := distance.Between(m, nil, []float64{})
		require.NoError(t, err, metricLabel(m))
		assert.Zero(t, d, metricLabel(m))
	}
}

func TestDistancePanicsOnLength(t *testing.T) {
	// Documented misuse: the unchecked forms panic on a length mismatch.
	x, y := []float64{1, 2, 3}, []float64{1, 2}
	for _, m := range append(slices.Clone(allMetrics), distance.Minkowski{P: 0}) {
		require.Panics(t, func() { m.Distance(x, y) }, metricLabel(m))
		require.Panics(t, func() { m.Distance(y, x) }, metricLabel(m))
		if o, ok := m.(distance.Objective); ok {
			require.Panics(t, func() { o.Loss(x, y) }, metricLabel(m))
		}
	}
	require.Panics(t, func() { distance.SqEuclidean(x, y) })
}

var sink float64

func TestDistanceAllocs(t *testing.T) {
	rnd := rand.New(rand.NewPCG(7, 7))
	x := randomVector(rnd, 64, 1)
	y := randomVector(rnd, 64, 1)
	tiny := slices.Clone(x)
	floats.Scale(1e-200, tiny)
	for _, m := range allMetrics {
		allocs := testing.AllocsPerRun(100, func() {
			sink = m.Distance(x, y)
			sink += m.Distance(tiny, y)
		})
		assert.Zero(t, allocs, metricLabel(m))
	}
	allocs := testing.AllocsPerRun(100, func() { sink = distance.SqEuclidean(x, y) })
	assert.Zero(t, allocs, "SqEuclidean")
}
