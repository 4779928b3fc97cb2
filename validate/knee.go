package validate

import (
	"fmt"
	"math"
)

// Shape says which way a curve bends, so that Knee knows what kind of bend
// to look for. The zero value is ConvexDecreasing, the shape of a k-means
// cost curve (cost against k).
type Shape int

const (
	// ConvexDecreasing curves fall steeply, then flatten (cost against k).
	// The knee (often called the elbow) is where they flatten.
	ConvexDecreasing Shape = iota
	// ConcaveIncreasing curves rise steeply, then flatten (throughput
	// against load, explained variance against k).
	ConcaveIncreasing
	// ConvexIncreasing curves rise slowly, then steeply.
	ConvexIncreasing
	// ConcaveDecreasing curves fall slowly, then steeply.
	ConcaveDecreasing
)

// String returns the shape's name.
func (s Shape) String() string {
	switch s {
	case ConvexDecreasing:
		return "convex decreasing"
	case ConcaveIncreasing:
		return "concave increasing"
	case ConvexIncreasing:
		return "convex increasing"
	case ConcaveDecreasing:
		return "concave decreasing"
	}
	return fmt.Sprintf("Shape(%d)", int(s))
}

// KneeOptions tunes Knee. A nil *KneeOptions and the zero value mean the
// defaults.
type KneeOptions struct {
	// Shape is the curve's shape. The zero value is ConvexDecreasing.
	Shape Shape
	// Sensitivity is Kneedle's S: how far, in units of the mean spacing of
	// the normalised x values, the difference curve must fall below a
	// local maximum before that maximum is declared a knee. Larger values
	// are more conservative. Zero means 1, the value the Kneedle paper
	// recommends for offline data; negative values are invalid.
	Sensitivity float64
}

// Knee returns the index into x and y of the knee of the curve y(x), found
// with Kneedle (V. Satopää, J. Albrecht, D. Irwin and B. Raghavan, "Finding a
// 'Kneedle' in a haystack: detecting knee points in system behavior", ICDCS
// Workshops 2011). For a k-means cost curve (x = k, y = cost, the default
// ConvexDecreasing shape) the knee is the "elbow" k.
//
// The steps are those of the paper without its smoothing step (smooth y
// first if it is noisy):
//
//  1. Normalise x and y to [0, 1] by their minimum and maximum.
//  2. Form the difference curve: the signed distance of the curve from the
//     straight line through the normalised end points, positive on the side
//     the curve bends to (ConcaveIncreasing: y−x; ConvexIncreasing: x−y;
//     ConvexDecreasing: 1−x−y; ConcaveDecreasing: x+y−1).
//  3. Find its local maxima (a point higher than its left neighbour and not
//     lower than its right one).
//  4. Give each local maximum the threshold T = value − S/(n−1), where
//     1/(n−1) is the mean spacing of the normalised x values.
//  5. Declare a knee at the first local maximum after which the difference
//     curve drops below its threshold before the next local maximum.
//
// Knee returns the first knee so found. It returns an error wrapping
// ErrNoKnee when there is none (the curve is too straight for the
// sensitivity, or y is constant); ErrLength if len(x) != len(y);
// ErrParameter if there are fewer than 3 points, x is not strictly
// increasing or the options are invalid; and ErrNotFinite for NaN or ±Inf.
func Knee(x, y []float64, opts *KneeOptions) (int, error) {
	var o KneeOptions
	if opts != nil {
		o = *opts
	}
	if o.Shape < ConvexDecreasing || o.Shape > ConcaveDecreasing {
		return 0, fmt.Errorf("%w: unknown curve shape %v", ErrParameter, o.Shape)
	}
	if o.Sensitivity < 0 || math.IsNaN(o.Sensitivity) || math.IsInf(o.Sensitivity, 0) {
		return 0, fmt.Errorf("%w: sensitivity %v, want a finite value ≥ 0", ErrParameter, o.Sensitivity)
	}
	if o.Sensitivity == 0 {
		o.Sensitivity = 1
	}
	if len(x) != len(y) {
		return 0, fmt.Errorf("%w: %d x values and %d y values", ErrLength, len(x), len(y))
	}
	n := len(x)
	if n < 3 {
		return 0, fmt.Errorf("%w: Kneedle needs at least 3 points, have %d", ErrParameter, n)
	}
	for i := range n {
		if math.IsNaN(x[i]) || math.IsInf(x[i], 0) || math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			return 0, fmt.Errorf("%w: point %d is (%v, %v)", ErrNotFinite, i, x[i], y[i])
		}
		if i > 0 && !(x[i] > x[i-1]) {
			return 0, fmt.Errorf("%w: x is not strictly increasing at index %d (%v after %v)", ErrParameter, i, x[i], x[i-1])
		}
	}
	ylo, yhi := y[0], y[0]
	for _, v := range y {
		ylo, yhi = min(ylo, v), max(yhi, v)
	}
	if ylo == yhi {
		return 0, fmt.Errorf("%w: y is constant", ErrNoKnee)
	}
	xspan, yspan := x[n-1]-x[0], yhi-ylo
	if math.IsInf(xspan, 0) || math.IsInf(yspan, 0) {
		return 0, fmt.Errorf("%w: the range of x or y overflows", ErrNotFinite)
	}
	diff := make([]float64, n)
	for i := range n {
		xn, yn := (x[i]-x[0])/xspan, (y[i]-ylo)/yspan
		switch o.Shape {
		case ConcaveIncreasing:
			diff[i] = yn - xn
		case ConvexIncreasing:
			diff[i] = xn - yn
		case ConvexDecreasing:
			diff[i] = 1 - xn - yn
		case ConcaveDecreasing:
			diff[i] = xn + yn - 1
		}
	}
	isMax := func(i int) bool { return i > 0 && i < n-1 && diff[i] > diff[i-1] && diff[i] >= diff[i+1] }
	drop := o.Sensitivity / float64(n-1)
	for p := 1; p < n-1; p++ {
		if !isMax(p) {
			continue
		}
		t := diff[p] - drop
		for j := p + 1; j < n && !isMax(j); j++ {
			if diff[j] < t {
				return p, nil
			}
		}
	}
	return 0, fmt.Errorf("%w: no local maximum of the difference curve is followed by a drop of %v", ErrNoKnee, drop)
}
