package validate

import (
	"fmt"
	"math"
)

// DefaultKneeFlatSteps is the value of KneeOptions.FlatSteps used when the
// field is zero.
const DefaultKneeFlatSteps = 1

// KneeOptions tunes Knee. A nil *KneeOptions and the zero value mean the
// defaults.
type KneeOptions struct {
	// FlatSteps is how long the curve must run flat after a candidate knee
	// before Knee accepts it, counted in steps of the curve (one step is
	// the mean spacing of the x values, 1 for a cost curve over k = 1, 2,
	// 3, …). Precisely: going right from the candidate, the curve must fall
	// short of the straight line through its end points by as much as
	// FlatSteps steps of a perfectly flat curve would, before the next
	// candidate. A curve that keeps falling at the chord's pace never
	// qualifies; one that goes flat at once qualifies after FlatSteps
	// steps. Larger values ask for a clearer flattening; values below 1 accept
	// a bend that flattens over less than one step. Zero means
	// DefaultKneeFlatSteps (1); negative, NaN and infinite values are
	// invalid. For evenly spaced x it is the sensitivity parameter of the
	// Kneedle paper.
	FlatSteps float64
}

// KneeCurve returns, for every point of a falling cost curve y(x), how far
// the curve lies below the straight line through its end points, both axes
// normalised to [0, 1] by their ranges: with x̂ = (x−x₀)/(x_last−x₀) and
// ŷ = (y−y_last)/(y₀−y_last),
//
//	bend[i] = 1 − x̂ᵢ − ŷᵢ
//
// which is the difference curve of Kneedle (Satopää et al. 2011, see Knee)
// and √2 times the distance of the normalised point from the chord. It is 0
// at both end points, positive where the curve has already fallen further
// than the chord (a bend that flattens), negative where it lags behind.
//
// x must be strictly increasing and y must not rise (y[i] ≤ y[i−1]; take
// the running minimum of a noisy cost curve first). It returns an error
// wrapping ErrLength if len(x) != len(y); ErrParameter if there are fewer
// than 3 points, x is not strictly increasing or y rises; ErrNotFinite for
// NaN or ±Inf, or ranges that overflow; and ErrNoKnee if y is constant.
// x and y are not modified.
func KneeCurve(x, y []float64) ([]float64, error) {
	if len(x) != len(y) {
		return nil, fmt.Errorf("%w: %d x values and %d y values", ErrLength, len(x), len(y))
	}
	n := len(x)
	if n < 3 {
		return nil, fmt.Errorf("%w: a knee needs at least 3 points, have %d", ErrParameter, n)
	}
	for i := range n {
		if math.IsNaN(x[i]) || math.IsInf(x[i], 0) || math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			return nil, fmt.Errorf("%w: point %d is (%v, %v)", ErrNotFinite, i, x[i], y[i])
		}
		if i == 0 {
			continue
		}
		if !(x[i] > x[i-1]) {
			return nil, fmt.Errorf("%w: x is not strictly increasing at index %d (%v after %v)", ErrParameter, i, x[i], x[i-1])
		}
		if y[i] > y[i-1] {
			return nil, fmt.Errorf("%w: y rises at index %d (%v after %v); Knee takes a falling cost curve", ErrParameter, i, y[i], y[i-1])
		}
	}
	ylo, yhi := y[n-1], y[0]
	if ylo == yhi {
		return nil, fmt.Errorf("%w: y is constant", ErrNoKnee)
	}
	xspan, yspan := x[n-1]-x[0], yhi-ylo
	if math.IsInf(xspan, 0) || math.IsInf(yspan, 0) {
		return nil, fmt.Errorf("%w: the range of x or y overflows", ErrNotFinite)
	}
	bend := make([]float64, n)
	for i := range n {
		bend[i] = 1 - (x[i]-x[0])/xspan - (y[i]-ylo)/yspan
	}
	bend[0], bend[n-1] = 0, 0 // exact, whatever the rounding
	return bend, nil
}

// Knee returns the index into x and y of the knee (the elbow) of a falling
// cost curve y(x), such as the within-cluster sum of squares against k,
// found with Kneedle (V. Satopää, J. Albrecht, D. Irwin and B. Raghavan,
// "Finding a 'Kneedle' in a haystack: detecting knee points in system
// behavior", ICDCS Workshops 2011). Knee handles only the curve a k-means
// cost has: falling in x and flattening; it rejects a curve that rises.
//
// The steps are those of the paper for such a curve, without its smoothing
// step:
//
//  1. Compute the bend of every point below the chord (KneeCurve).
//  2. Candidates are the interior points that lie below the chord (a
//     positive bend) and are local maxima of the bend: higher than the left
//     neighbour and not lower than the right one.
//  3. A candidate is accepted when, before the next candidate, the bend
//     drops by FlatSteps/(n−1) below its value (see KneeOptions.FlatSteps;
//     1/(n−1) is the mean spacing of the normalised x values).
//
// Knee returns the first accepted candidate. It returns an error wrapping
// ErrNoKnee when there is none (the curve is too straight for FlatSteps,
// bends the wrong way, or y is constant), the errors of KneeCurve for bad
// curves, and ErrParameter for invalid options.
func Knee(x, y []float64, opts *KneeOptions) (int, error) {
	var o KneeOptions
	if opts != nil {
		o = *opts
	}
	if o.FlatSteps < 0 || math.IsNaN(o.FlatSteps) || math.IsInf(o.FlatSteps, 0) {
		return 0, fmt.Errorf("%w: FlatSteps = %v, want a finite value ≥ 0", ErrParameter, o.FlatSteps)
	}
	if o.FlatSteps == 0 {
		o.FlatSteps = DefaultKneeFlatSteps
	}
	bend, err := KneeCurve(x, y)
	if err != nil {
		return 0, err
	}
	n := len(bend)
	candidate := func(i int) bool {
		return i > 0 && i < n-1 && bend[i] > 0 && bend[i] > bend[i-1] && bend[i] >= bend[i+1]
	}
	drop := o.FlatSteps / float64(n-1)
	for p := 1; p < n-1; p++ {
		if !candidate(p) {
			continue
		}
		t := bend[p] - drop
		for j := p + 1; j < n && !candidate(j); j++ {
			if bend[j] < t {
				return p, nil
			}
		}
	}
	return 0, fmt.Errorf("%w: no bend below the chord is followed by %v flat steps", ErrNoKnee, o.FlatSteps)
}
