package validate

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func seq(lo, hi int) []float64 {
	var x []float64
	for v := lo; v <= hi; v++ {
		x = append(x, float64(v))
	}
	return x
}

func TestKneeByHand(t *testing.T) {
	x := seq(1, 10)
	inv := make([]float64, len(x))
	negInv := make([]float64, len(x))
	for i, v := range x {
		inv[i] = 1 / v
		negInv[i] = -1 / v
	}
	// y = 1/x, x = 1..10: normalised x_n = (x−1)/9, y_n = (1/x − 0.1)/0.9, and
	// the convex-decreasing difference 1 − x_n − y_n is
	//   x=2: 1 − 0.111 − 0.444 = 0.444, x=3: 1 − 0.222 − 0.259 = 0.519,
	//   x=4: 1 − 0.333 − 0.167 = 0.500, x=5: 1 − 0.444 − 0.111 = 0.444,
	//   x=6: 1 − 0.556 − 0.074 = 0.370.
	// The local maximum at x = 3 has threshold 0.519 − 1/9 = 0.408, first
	// undercut at x = 6, so the knee is x = 3 (index 2).
	//
	// Piecewise linear: y = 100, 70, 40, 10 for x = 1..4, then falling by 1
	// per step to 4 at x = 10. y_n = (y−4)/96; differences
	//   x=3: 1 − 0.222 − 0.375 = 0.403, x=4: 1 − 0.333 − 0.0625 = 0.604,
	//   x=5: 1 − 0.444 − 0.052 = 0.503, x=6: 1 − 0.556 − 0.042 = 0.403.
	// Local maximum at x = 4, threshold 0.604 − 0.111 = 0.493, undercut at
	// x = 6: knee at x = 4 (index 3).
	//
	// y = −1/x is concave increasing with y_n = 1 − (1/x − 0.1)/0.9, so its
	// difference y_n − x_n equals the one of 1/x above: index 2.
	//
	// Two local maxima (concave increasing, x = 0..10, x_n = x/10, drop
	// S/10): y is chosen so that y_n − x_n =
	//   0, 0.05, 0.01, 0.3, 0.35, 0.3, 0.2, 0.1, 0.05, 0.02, 0.
	// With S = 1 the maximum at index 1 (threshold −0.05) is not undercut
	// before the next maximum at index 4 (threshold 0.25, undercut by 0.2 at
	// index 6): knee 4. With S = 0.3 the threshold at index 1 is 0.02 and
	// 0.01 undercuts it at once: knee 1.
	twoMax := []float64{0, 0.15, 0.21, 0.6, 0.75, 0.8, 0.8, 0.8, 0.85, 0.92, 1}
	tests := []struct {
		name string
		x, y []float64
		opts *KneeOptions
		want int
	}{
		{"1/x", x, inv, nil, 2},
		{"piecewise", x, []float64{100, 70, 40, 10, 9, 8, 7, 6, 5, 4}, &KneeOptions{}, 3},
		{"-1/x", x, negInv, &KneeOptions{Shape: ConcaveIncreasing}, 2},
		{"two maxima S=1", seq(0, 10), twoMax, &KneeOptions{Shape: ConcaveIncreasing}, 4},
		{"two maxima S=0.3", seq(0, 10), twoMax, &KneeOptions{Shape: ConcaveIncreasing, Sensitivity: 0.3}, 1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := Knee(tc.x, tc.y, tc.opts)
			require.NoError(t, err)
			assert.Equal(t, tc.want, got)
		})
	}
}

// chordArgmax returns the index of the point farthest from the straight
// line through the first and last points, in coordinates normalised to the
// unit square: the Kneedle knee of a curve whose difference curve has a
// single local maximum.
func chordArgmax(x, y []float64) int {
	ylo, yhi := slices.Min(y), slices.Max(y)
	nx := func(i int) float64 { return (x[i] - x[0]) / (x[len(x)-1] - x[0]) }
	ny := func(i int) float64 { return (y[i] - ylo) / (yhi - ylo) }
	last := len(x) - 1
	ax, ay := nx(last)-nx(0), ny(last)-ny(0)
	best, bestD := 0, -1.0
	for i := range x {
		bx, by := nx(i)-nx(0), ny(i)-ny(0)
		d := math.Abs(ax*by-ay*bx) / math.Hypot(ax, ay)
		if d > bestD {
			best, bestD = i, d
		}
	}
	return best
}

// TestKneeSmoothCurves checks Knee on strictly convex or concave curves,
// sampled at random x, against the farthest point from the chord.
func TestKneeSmoothCurves(t *testing.T) {
	rnd := rand.New(rand.NewPCG(2, 3))
	curves := []struct {
		shape Shape
		f     func(float64) float64
	}{
		{ConvexDecreasing, func(v float64) float64 { return math.Exp(-3 * v) }},
		{ConvexDecreasing, func(v float64) float64 { return 1 / (0.2 + v) }},
		{ConcaveIncreasing, func(v float64) float64 { return math.Log(0.05 + v) }},
		{ConvexIncreasing, func(v float64) float64 { return math.Exp(4 * v) }},
		{ConcaveDecreasing, func(v float64) float64 { return -v * v * v }},
	}
	for _, c := range curves {
		for trial := range 20 {
			n := 5 + rnd.IntN(40)
			x := make([]float64, n)
			for i := range x {
				x[i] = rnd.Float64() * 2
			}
			slices.Sort(x)
			x = slices.Compact(x)
			y := make([]float64, len(x))
			for i, v := range x {
				y[i] = c.f(v)
			}
			got, err := Knee(x, y, &KneeOptions{Shape: c.shape, Sensitivity: 1e-9})
			require.NoError(t, err, "%v trial %d", c.shape, trial)
			assert.Equal(t, chordArgmax(x, y), got, "%v trial %d", c.shape, trial)
		}
	}
}

func TestKneeNone(t *testing.T) {
	x := seq(1, 10)
	inv := make([]float64, len(x))
	for i, v := range x {
		inv[i] = 1 / v
	}
	// Threshold 0.519 − 10/9 < 0 is never undercut.
	_, err := Knee(x, inv, &KneeOptions{Sensitivity: 10})
	assert.ErrorIs(t, err, ErrNoKnee)
	_, err = Knee(x, x, nil) // a straight line has no knee
	assert.ErrorIs(t, err, ErrNoKnee)
	_, err = Knee(x, make([]float64, len(x)), nil) // constant
	assert.ErrorIs(t, err, ErrNoKnee)
	// The wrong shape: 1/x read as concave has a difference ≤ 0 with no
	// interior maximum.
	_, err = Knee(x, inv, &KneeOptions{Shape: ConcaveIncreasing})
	assert.ErrorIs(t, err, ErrNoKnee)
}

func TestKneeBadInput(t *testing.T) {
	three := []float64{1, 2, 3}
	tests := []struct {
		name string
		x, y []float64
		opts *KneeOptions
		want error
	}{
		{"lengths", three, []float64{1, 2}, nil, ErrLength},
		{"two points", []float64{1, 2}, []float64{2, 1}, nil, ErrParameter},
		{"empty", nil, nil, nil, ErrParameter},
		{"x repeats", []float64{1, 2, 2}, three, nil, ErrParameter},
		{"x decreases", []float64{3, 2, 1}, three, nil, ErrParameter},
		{"NaN x", []float64{1, math.NaN(), 3}, three, nil, ErrNotFinite},
		{"Inf y", three, []float64{1, math.Inf(1), 3}, nil, ErrNotFinite},
		{"x range overflows", []float64{-math.MaxFloat64, 0, math.MaxFloat64}, three, nil, ErrNotFinite},
		{"negative S", three, three, &KneeOptions{Sensitivity: -1}, ErrParameter},
		{"NaN S", three, three, &KneeOptions{Sensitivity: math.NaN()}, ErrParameter},
		{"unknown shape", three, three, &KneeOptions{Shape: 9}, ErrParameter},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var err error
			require.NotPanics(t, func() { _, err = Knee(tc.x, tc.y, tc.opts) })
			assert.ErrorIs(t, err, tc.want)
		})
	}
}
