package distance

import (
	"fmt"
	"math"
	"reflect"
)

const panicLength = "distance: slice lengths differ"

// Metric measures the dissimilarity of two rows of equal length.
//
// Distance must be symmetric, non-negative and zero for identical rows. It
// panics if len(x) != len(y).
type Metric interface {
	Distance(x, y []float64) float64
	// Name is the metric's stable identifier, used in encoded models.
	Name() string
}

// CenterRule names how k-means moves a center to its members.
type CenterRule int

const (
	// MeanRule moves a center to the weighted mean of its members.
	MeanRule CenterRule = iota + 1
	// MedianRule moves a center to the coordinate-wise weighted median of
	// its members.
	MedianRule
	// UnitMeanRule moves a center to the weighted mean of its members scaled
	// to unit length, then renormalises it to unit length.
	UnitMeanRule
)

// String returns the rule's name.
func (r CenterRule) String() string {
	switch r {
	case MeanRule:
		return "mean"
	case MedianRule:
		return "median"
	case UnitMeanRule:
		return "unit-mean"
	}
	return fmt.Sprintf("CenterRule(%d)", int(r))
}

// Objective is implemented by metrics k-means can optimise. Loss is the
// contribution of a row x assigned to center c to a clustering's cost, and
// Rule is the center update that does not increase the sum of Loss over a
// cluster's members.
type Objective interface {
	Metric
	Loss(x, c []float64) float64
	Rule() CenterRule
}

// Triangle is implemented by metrics that satisfy the triangle inequality
// d(x, z) ≤ d(x, y) + d(y, z). Solvers that prune with distance bounds
// (Elkan, Hamerly, Yinyang) require it.
type Triangle interface {
	Metric
	// Triangle reports whether the inequality holds for this value of the
	// metric (Minkowski only satisfies it for P ≥ 1).
	Triangle() bool
}

// RowChecker is implemented by metrics that reject some finite rows, such as
// Cosine rejecting the zero vector. CheckRow returns nil for a usable row.
type RowChecker interface {
	CheckRow(x []float64) error
}

// SqEuclidean returns the squared Euclidean distance Σ(x_i−y_i)². It panics if
// len(x) != len(y).
func SqEuclidean(x, y []float64) float64 {
	if len(x) != len(y) {
		panic(panicLength)
	}
	var s0, s1 float64
	i := 0
	for ; i+1 < len(x); i += 2 {
		d0 := x[i] - y[i]
		d1 := x[i+1] - y[i+1]
		s0 += d0 * d0
		s1 += d1 * d1
	}
	if i < len(x) {
		d := x[i] - y[i]
		s0 += d * d
	}
	return s0 + s1
}

// Euclidean is the straight-line distance ‖x−y‖₂. Its k-means objective is
// the within-cluster sum of squares and its center rule the weighted mean.
type Euclidean struct{}

// Distance returns ‖x−y‖₂. It panics if len(x) != len(y).
func (Euclidean) Distance(x, y []float64) float64 { return math.Sqrt(SqEuclidean(x, y)) }

// Loss returns the squared distance ‖x−c‖₂².
func (Euclidean) Loss(x, c []float64) float64 { return SqEuclidean(x, c) }

// Rule returns MeanRule.
func (Euclidean) Rule() CenterRule { return MeanRule }

// Triangle returns true.
func (Euclidean) Triangle() bool { return true }

// Name returns "euclidean".
func (Euclidean) Name() string { return "euclidean" }

// Homogeneous returns true: d(a·x, a·y) = a·d(x, y) for a > 0.
func (Euclidean) Homogeneous() bool { return true }

// Arithmetic returns SquaredDifferences.
func (Euclidean) Arithmetic() Arithmetic { return SquaredDifferences }

// Manhattan is the city-block distance Σ|x_i−y_i|. Its k-means objective is
// the sum of distances and its center rule the coordinate-wise weighted
// median (k-medians).
type Manhattan struct{}

// Distance returns Σ|x_i−y_i|. It panics if len(x) != len(y).
func (Manhattan) Distance(x, y []float64) float64 {
	if len(x) != len(y) {
		panic(panicLength)
	}
	var s float64
	for i, v := range x {
		s += math.Abs(v - y[i])
	}
	return s
}

// Loss returns the Manhattan distance.
func (m Manhattan) Loss(x, c []float64) float64 { return m.Distance(x, c) }

// Rule returns MedianRule.
func (Manhattan) Rule() CenterRule { return MedianRule }

// Triangle returns true.
func (Manhattan) Triangle() bool { return true }

// Name returns "manhattan".
func (Manhattan) Name() string { return "manhattan" }

// Homogeneous returns true: d(a·x, a·y) = a·d(x, y) for a > 0.
func (Manhattan) Homogeneous() bool { return true }

// Arithmetic returns AbsoluteDifferences.
func (Manhattan) Arithmetic() Arithmetic { return AbsoluteDifferences }

// Cosine is the cosine dissimilarity 1 − x·y/(‖x‖‖y‖), in [0, 2]. Its center
// rule renormalises the mean of the members' unit vectors to unit length
// (spherical k-means; I. S. Dhillon and D. S. Modha, "Concept decompositions
// for large sparse text data using clustering", Machine Learning 42, 2001).
//
// The zero vector has no direction: CheckRow and Between reject it with
// ErrZeroVector, and the unchecked Distance returns 1 (no similarity) when
// either vector is zero rather than NaN. Cosine does not satisfy the triangle
// inequality.
type Cosine struct{}

// Distance returns 1 − cos(x, y), or 1 if either vector is zero. Rows whose
// squared norms would overflow or underflow are rescaled first, so the result
// is in [0, 2] for all finite rows. It panics if len(x) != len(y).
func (Cosine) Distance(x, y []float64) float64 {
	if len(x) != len(y) {
		panic(panicLength)
	}
	var dot, nx, ny float64
	for i, v := range x {
		dot += v * y[i]
		nx += v * v
		ny += y[i] * y[i]
	}
	if !(nx >= cosineMinSq && nx <= cosineMaxSq && ny >= cosineMinSq && ny <= cosineMaxSq) {
		// Zero, tiny or huge norms: the squares may have underflowed or
		// overflowed, so recompute on rows scaled by their largest element.
		return cosineScaled(x, y)
	}
	return clampCosine(1 - dot/(math.Sqrt(nx)*math.Sqrt(ny)))
}

// Squared norms inside [cosineMinSq, cosineMaxSq] are computed without
// overflow and without losing precision to underflow; outside it Cosine
// rescales the rows first.
const (
	cosineMinSq = 0x1p-900
	cosineMaxSq = 0x1p900
)

// cosineScaled is Cosine.Distance on x/max|x_i| and y/max|y_i|, which have the
// same direction as x and y and norms in [1, √len(x)].
func cosineScaled(x, y []float64) float64 {
	var mx, my float64
	for i, v := range x {
		mx = math.Max(mx, math.Abs(v))
		my = math.Max(my, math.Abs(y[i]))
	}
	if mx == 0 || my == 0 {
		return 1
	}
	var dot, nx, ny float64
	for i, v := range x {
		a, b := v/mx, y[i]/my
		dot += a * b
		nx += a * a
		ny += b * b
	}
	return clampCosine(1 - dot/(math.Sqrt(nx)*math.Sqrt(ny)))
}

// clampCosine clamps a cosine dissimilarity to [0, 2] against rounding.
func clampCosine(d float64) float64 {
	switch {
	case d < 0:
		return 0
	case d > 2:
		return 2
	}
	return d
}

// Loss returns the cosine dissimilarity.
func (m Cosine) Loss(x, c []float64) float64 { return m.Distance(x, c) }

// Rule returns UnitMeanRule.
func (Cosine) Rule() CenterRule { return UnitMeanRule }

// CheckRow returns an error wrapping ErrZeroVector for the zero vector.
func (Cosine) CheckRow(x []float64) error {
	for _, v := range x {
		if v != 0 {
			return nil
		}
	}
	return fmt.Errorf("%w under cosine", ErrZeroVector)
}

// Name returns "cosine".
func (Cosine) Name() string { return "cosine" }

// Homogeneous returns true: d(a·x, a·y) = 1·d(x, y) for a > 0.
func (Cosine) Homogeneous() bool { return true }

// Arithmetic returns CosineDissimilarity.
func (Cosine) Arithmetic() Arithmetic { return CosineDissimilarity }

// Chebyshev is the largest coordinate difference max|x_i−y_i|. It has no
// k-means center rule; use it to measure, not to cluster.
type Chebyshev struct{}

// Distance returns max|x_i−y_i|. It panics if len(x) != len(y).
func (Chebyshev) Distance(x, y []float64) float64 {
	if len(x) != len(y) {
		panic(panicLength)
	}
	var m float64
	for i, v := range x {
		if d := math.Abs(v - y[i]); d > m {
			m = d
		}
	}
	return m
}

// Triangle returns true.
func (Chebyshev) Triangle() bool { return true }

// Name returns "chebyshev".
func (Chebyshev) Name() string { return "chebyshev" }

// Homogeneous returns true: d(a·x, a·y) = a·d(x, y) for a > 0.
func (Chebyshev) Homogeneous() bool { return true }

// Minkowski is the distance (Σ|x_i−y_i|^P)^(1/P). P must be positive; it is a
// true metric (triangle inequality) only for P ≥ 1. P = 1 equals Manhattan,
// P = 2 Euclidean. It has no k-means center rule.
type Minkowski struct {
	// P is the order of the norm. The zero value is invalid; Validate
	// reports it.
	P float64
}

// Validate returns an error wrapping ErrParameter unless P is finite and
// positive.
func (m Minkowski) Validate() error {
	if !(m.P > 0) || math.IsInf(m.P, 1) {
		return fmt.Errorf("%w: Minkowski P = %v, want finite P > 0", ErrParameter, m.P)
	}
	return nil
}

// Distance returns (Σ|x_i−y_i|^P)^(1/P), computed as m·(Σ(|x_i−y_i|/m)^P)^(1/P)
// with m = max|x_i−y_i| so that large P neither overflows nor underflows. It
// panics if len(x) != len(y); with an invalid P it returns NaN (use Validate
// or Between to get an error).
func (m Minkowski) Distance(x, y []float64) float64 {
	if len(x) != len(y) {
		panic(panicLength)
	}
	if m.Validate() != nil {
		return math.NaN()
	}
	switch m.P {
	case 1:
		return Manhattan{}.Distance(x, y)
	case 2:
		return Euclidean{}.Distance(x, y)
	}
	// Scale by the largest difference so that |x_i−y_i|^P neither overflows
	// nor underflows for large P.
	var top float64
	for i, v := range x {
		if d := math.Abs(v - y[i]); d > top || math.IsNaN(d) {
			top = d
		}
	}
	if top == 0 || math.IsInf(top, 1) || math.IsNaN(top) {
		return top
	}
	var s float64
	for i, v := range x {
		s += math.Pow(math.Abs(v-y[i])/top, m.P)
	}
	return top * math.Pow(s, 1/m.P)
}

// Triangle reports whether P is valid (see Validate) and P ≥ 1.
func (m Minkowski) Triangle() bool { return m.P >= 1 && m.Validate() == nil }

// Name returns "minkowski".
func (Minkowski) Name() string { return "minkowski" }

// Homogeneous returns true: d(a·x, a·y) = a·d(x, y) for a > 0.
func (Minkowski) Homogeneous() bool { return true }

// Between is the checked form of m.Distance(x, y): it returns an error
// wrapping ErrLength, ErrNotFinite, ErrParameter or ErrZeroVector instead of
// panicking or returning a meaningless value.
func Between(m Metric, x, y []float64) (float64, error) {
	if m == nil {
		return 0, fmt.Errorf("%w: nil metric", ErrUnknown)
	}
	if len(x) != len(y) {
		return 0, fmt.Errorf("%w: %d and %d", ErrLength, len(x), len(y))
	}
	if err := CheckRow(m, x); err != nil {
		return 0, err
	}
	if err := CheckRow(m, y); err != nil {
		return 0, err
	}
	return m.Distance(x, y), nil
}

// Check returns an error wrapping ErrParameter if m's parameters are invalid
// or ErrUnknown if m is nil.
//
// A metric with parameters reports them by implementing Validator; a nil
// pointer held in m is reported as ErrUnknown rather than dereferenced.
func Check(m Metric) error {
	if m == nil {
		return fmt.Errorf("%w: nil metric", ErrUnknown)
	}
	if v := reflect.ValueOf(m); v.Kind() == reflect.Pointer && v.IsNil() {
		return fmt.Errorf("%w: nil %T", ErrUnknown, m)
	}
	if v, ok := m.(Validator); ok {
		return v.Validate()
	}
	return nil
}

// Validator is implemented by metrics with parameters that can be out of
// range (Minkowski). Validate returns an error wrapping ErrParameter for
// invalid parameters.
type Validator interface {
	Validate() error
}

// CheckRow returns an error if x holds NaN or ±Inf (ErrNotFinite), if m's
// parameters are invalid, or if m rejects x (see RowChecker).
func CheckRow(m Metric, x []float64) error {
	if err := Check(m); err != nil {
		return err
	}
	for i, v := range x {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("%w: element %d is %v", ErrNotFinite, i, v)
		}
	}
	if rc, ok := m.(RowChecker); ok {
		return rc.CheckRow(x)
	}
	return nil
}

// ByName returns the metric with the given Name. Minkowski needs its order:
// use ByName("minkowski", p). Unknown names return an error wrapping
// ErrUnknown.
func ByName(name string, p ...float64) (Metric, error) {
	switch name {
	case "euclidean":
		return Euclidean{}, nil
	case "manhattan":
		return Manhattan{}, nil
	case "cosine":
		return Cosine{}, nil
	case "chebyshev":
		return Chebyshev{}, nil
	case "minkowski":
		if len(p) != 1 {
			return nil, fmt.Errorf("%w: minkowski needs its order P", ErrParameter)
		}
		m := Minkowski{P: p[0]}
		if err := m.Validate(); err != nil {
			return nil, err
		}
		return m, nil
	}
	return nil, fmt.Errorf("%w: %q", ErrUnknown, name)
}

var (
	_ Objective   = Euclidean{}
	_ Objective   = Manhattan{}
	_ Objective   = Cosine{}
	_ Triangle    = Euclidean{}
	_ Triangle    = Manhattan{}
	_ Triangle    = Chebyshev{}
	_ Triangle    = Minkowski{}
	_ RowChecker  = Cosine{}
	_ Validator   = Minkowski{}
	_ Builtin     = Euclidean{}
	_ Builtin     = Manhattan{}
	_ Builtin     = Cosine{}
	_ Homogeneous = Euclidean{}
	_ Homogeneous = Manhattan{}
	_ Homogeneous = Cosine{}
	_ Homogeneous = Chebyshev{}
	_ Homogeneous = Minkowski{}
)
