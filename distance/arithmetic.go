package distance

import "fmt"

// Arithmetic names the exact arithmetic of a metric's Loss and Distance,
// for the fast paths of solvers and serving: a blocked dot-product kernel
// for squared differences, bounds with the triangle inequality, distances
// abandoned once they exceed the best so far. A fast path must give the
// bits its metric's methods give, so it runs only when the metric promises
// one of these forms (see Builtin).
type Arithmetic int

const (
	// Custom makes no promise: solvers call the metric's methods.
	Custom Arithmetic = iota
	// SquaredDifferences: Loss(x, c) is SqEuclidean(x, c), bit for bit,
	// and Distance its square root (Euclidean).
	SquaredDifferences
	// AbsoluteDifferences: Loss and Distance are Σ|x_i − c_i| summed in
	// index order, as Manhattan.Distance computes it.
	AbsoluteDifferences
	// CosineDissimilarity: Loss and Distance are Cosine.Distance.
	CosineDissimilarity
)

// String returns the arithmetic's name.
func (a Arithmetic) String() string {
	switch a {
	case Custom:
		return "custom"
	case SquaredDifferences:
		return "squared differences"
	case AbsoluteDifferences:
		return "absolute differences"
	case CosineDissimilarity:
		return "cosine dissimilarity"
	}
	return fmt.Sprintf("Arithmetic(%d)", int(a))
}

// Builtin is implemented by metrics whose Loss and Distance follow one of
// the built-in arithmetics exactly. Euclidean, Manhattan and Cosine
// implement it, and so does any type that embeds one of them, so a wrapper
// (a metric with extra methods, say) keeps the fast paths. A type that
// embeds a built-in metric but changes its Loss or Distance must override
// Arithmetic to return Custom.
type Builtin interface {
	Metric
	Arithmetic() Arithmetic
}

// ArithmeticOf returns m's Arithmetic if it implements Builtin, else Custom.
func ArithmeticOf(m Metric) Arithmetic {
	if b, ok := m.(Builtin); ok {
		return b.Arithmetic()
	}
	return Custom
}

// Homogeneous is implemented by metrics for which scaling both rows by the
// same a > 0 scales the distance by a power of a: d(a·x, a·y) = aᵖ·d(x, y)
// for a fixed p ≥ 0. Ratios of such distances (the silhouette) do not
// change when the data is rescaled, so callers may rescale rows to avoid
// overflow and underflow. Every metric of this package implements it.
type Homogeneous interface {
	Metric
	Homogeneous() bool
}
