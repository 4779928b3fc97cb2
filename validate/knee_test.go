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
	for i, v := range x {
		inv[i] = 1 / v
	}
	// y = 1/x, x = 1..10: normalised x̂ = (x−1)/9, ŷ = (1/x − 0.1)/0.9, and
	// the bend 1 − x̂ − ŷ is
	//   x=2: 1 − 0.111 − 0.444 = 0.444, x=3: 1 − 0.222 − 0.259 = 0.519,
	//   x=4: 1 − 0.333 − 0.167 = 0.500, x=5: 1 − 0.444 − 0.111 = 0.444,
	//   x=6: 1 − 0.556 − 0.074 = 0.370.
	// The candidate at x = 3 must be undercut by 0.519 − 1/9 = 0.408: first
	// at x = 6, so the knee is x = 3 (index 2).
	//
	// Piecewise linear: y = 100, 70, 40, 10 for x = 1..4, then falling by 1
	// per step to 4 at x = 10. ŷ = (y−4)/96; bends
	//   x=3: 1 − 0.222 − 0.375 = 0.403, x=4: 1 − 0.333 − 0.0625 = 0.604,
	//   x=5: 1 − 0.444 − 0.052 = 0.503, x=6: 1 − 0.556 − 0.042 = 0.403.
	// Candidate at x = 4, threshold 0.604 − 0.111 = 0.493, undercut at
	// x = 6: knee at x = 4 (index 3).
	//
	// Two candidates (x = 0..10, x̂ = x/10, one step 0.1): y is chosen so
	// that the bend is
	//   0, 0.05, 0.01, 0.3, 0.35, 0.3, 0.2, 0.1, 0.05, 0.02, 0.
	// With FlatSteps 1 the candidate at index 1 (threshold 0.05 − 0.1) is
	// not undercut before the next candidate at index 4 (threshold 0.25,
	// undercut by 0.2 at index 6): knee 4. With FlatSteps 0.3 the threshold
	// at index 1 is 0.02 and 0.01 undercuts it at once: knee 1.
	twoBends := []float64{1, 0.85, 0.79, 0.4, 0.25, 0.2, 0.2, 0.2, 0.15, 0.08, 0}
	tests := []struct {
		name string
		x, y []float64
		opts *KneeOptions
		want int
	}{
		{"1/x", x, inv, nil, 2},
		{"piecewise", x, []float64{100, 70, 40, 10, 9, 8, 7, 6, 5, 4}, &KneeOptions{}, 3},
		{"two bends, 1 step", seq(0, 10), twoBends, &KneeOptions{FlatSteps: 1}, 4},
		{"two bends, 0.3 steps", seq(0, 10), twoBends, &KneeOptions{FlatSteps: 0.3}, 1},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got, err := Knee(tc.x, tc.y, tc.opts)
			require.NoError(t, err)
			assert.Equal(t, tc.want, got)
		})
	}
	bend, err := KneeCurve(seq(0, 10), twoBends)
	require.NoError(t, err)
	for i, want := range []float64{0, 0.05, 0.01, 0.3, 0.35, 0.3, 0.2, 0.1, 0.05, 0.02, 0} {
		assert.InDelta(t, want, bend[i], 1e-12, "bend %d", i)
	}
}

// TestKneeFlatSteps checks what FlatSteps promises in the curve's own
// terms: a curve that falls at a constant rate to a candidate and then runs
// perfectly flat for r steps to its end is accepted exactly when r exceeds
// FlatSteps.
func TestKneeFlatSteps(t *testing.T) {
	for _, fall := range []int{2, 3, 5} {
		for r := 1; r <= 6; r++ {
			for _, flat := range []float64{0.5, 1.5, 2.5, 3.5, 5.5} {
				x := seq(1, fall+r+1)
				y := make([]float64, len(x))
				for i := range y {
					y[i] = 10 * float64(max(0, fall-i)) // 10·fall … 10, 0, then flat at 0
				}
				got, err := Knee(x, y, &KneeOptions{FlatSteps: flat})
				if float64(r) > flat {
					require.NoError(t, err, "fall %d, flat run %d, FlatSteps %v", fall, r, flat)
					assert.Equal(t, fall, got, "the knee is where the curve goes flat")
					continue
				}
				assert.ErrorIs(t, err, ErrNoKnee, "fall %d, flat run %d, FlatSteps %v", fall, r, flat)
			}
		}
	}
}

// chordDistance returns the signed distance of every normalised point from
// the chord through the first and last normalised points, positive below
// it: the brute-force geometry behind KneeCurve.
func chordDistance(x, y []float64) []float64 {
	ylo, yhi := slices.Min(y), slices.Max(y)
	nx := func(i int) float64 { return (x[i] - x[0]) / (x[len(x)-1] - x[0]) }
	ny := func(i int) float64 { return (y[i] - ylo) / (yhi - ylo) }
	last := len(x) - 1
	ax, ay := nx(last)-nx(0), ny(last)-ny(0)
	out := make([]float64, len(x))
	for i := range x {
		bx, by := nx(i)-nx(0), ny(i)-ny(0)
		out[i] = -(ax*by - ay*bx) / math.Hypot(ax, ay)
	}
	return out
}

// TestKneeSmoothCurves checks KneeCurve against the geometric distance
// from the chord, and Knee on strictly convex falling curves sampled at
// random x against the point farthest below the chord.
func TestKneeSmoothCurves(t *testing.T) {
	rnd := rand.New(rand.NewPCG(2, 3))
	curves := []func(float64) float64{
		func(v float64) float64 { return math.Exp(-3 * v) },
		func(v float64) float64 { return 1 / (0.2 + v) },
		func(v float64) float64 { return (2.5 - v) * (2.5 - v) },
		func(v float64) float64 { return 1e6 * math.Pow(0.3+v, -0.7) },
	}
	for ci, f := range curves {
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
				y[i] = f(v)
			}
			bend, err := KneeCurve(x, y)
			require.NoError(t, err)
			dist := chordDistance(x, y)
			for i := range bend {
				assert.InDelta(t, math.Sqrt2*dist[i], bend[i], 1e-12, "curve %d trial %d point %d", ci, trial, i)
			}
			got, err := Knee(x, y, &KneeOptions{FlatSteps: 1e-9})
			require.NoError(t, err, "curve %d trial %d", ci, trial)
			best := 0
			for i := range dist {
				if dist[i] > dist[best] {
					best = i
				}
			}
			assert.Equal(t, best, got, "curve %d trial %d", ci, trial)
		}
	}
}

func TestKneeNone(t *testing.T) {
	x := seq(1, 10)
	inv := make([]float64, len(x))
	concave := make([]float64, len(x))
	line := make([]float64, len(x))
	for i, v := range x {
		inv[i] = 1 / v
		concave[i] = 1000 - v*v
		line[i] = 20 - 2*v
	}
	// The threshold 0.519 − 10/9 < 0 is never undercut.
	_, err := Knee(x, inv, &KneeOptions{FlatSteps: 10})
	assert.ErrorIs(t, err, ErrNoKnee)
	_, err = Knee(x, line, nil) // a straight line has no knee
	assert.ErrorIs(t, err, ErrNoKnee)
	_, err = Knee(x, make([]float64, len(x)), nil) // constant
	assert.ErrorIs(t, err, ErrNoKnee)
	// A curve that falls slowly, then steeply, lies above its chord.
	_, err = Knee(x, concave, nil)
	assert.ErrorIs(t, err, ErrNoKnee)
}

func TestKneeBadInput(t *testing.T) {
	three := []float64{1, 2, 3}
	down := []float64{3, 2, 1}
	tests := []struct {
		name string
		x, y []float64
		opts *KneeOptions
		want error
	}{
		{"lengths", three, []float64{2, 1}, nil, ErrLength},
		{"two points", []float64{1, 2}, []float64{2, 1}, nil, ErrParameter},
		{"empty", nil, nil, nil, ErrParameter},
		{"x repeats", []float64{1, 2, 2}, down, nil, ErrParameter},
		{"x decreases", []float64{3, 2, 1}, down, nil, ErrParameter},
		{"rising curve", three, three, nil, ErrParameter},
		{"one rise", []float64{1, 2, 3, 4}, []float64{9, 5, 6, 1}, nil, ErrParameter},
		{"NaN x", []float64{1, math.NaN(), 3}, down, nil, ErrNotFinite},
		{"Inf y", three, []float64{math.Inf(1), 2, 1}, nil, ErrNotFinite},
		{"x range overflows", []float64{-math.MaxFloat64, 0, math.MaxFloat64}, down, nil, ErrNotFinite},
		{"negative FlatSteps", three, down, &KneeOptions{FlatSteps: -1}, ErrParameter},
		{"NaN FlatSteps", three, down, &KneeOptions{FlatSteps: math.NaN()}, ErrParameter},
		{"infinite FlatSteps", three, down, &KneeOptions{FlatSteps: math.Inf(1)}, ErrParameter},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var err error
			require.NotPanics(t, func() { _, err = Knee(tc.x, tc.y, tc.opts) })
			assert.ErrorIs(t, err, tc.want)
			if tc.opts == nil {
				_, err = KneeCurve(tc.x, tc.y)
				assert.ErrorIs(t, err, tc.want, "KneeCurve")
			}
		})
	}
	x, y := []float64{1, 2, 3, 4}, []float64{8, 3, 2, 1}
	x0, y0 := slices.Clone(x), slices.Clone(y)
	_, err := Knee(x, y, nil)
	require.NoError(t, err)
	assert.Equal(t, x0, x, "x modified")
	assert.Equal(t, y0, y, "y modified")
}
