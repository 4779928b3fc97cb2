package kmeans

import "errors"

// Errors returned by this package. Every error returned for bad input wraps
// one of them, so callers can test with errors.Is.
var (
	// ErrData means the data is nil, empty, or not finite.
	ErrData = errors.New("kmeans: invalid data")
	// ErrK means K is below 1, above the number of rows, or above the number
	// of distinct rows with positive weight.
	ErrK = errors.New("kmeans: invalid number of clusters")
	// ErrWeights means Weights has the wrong length, a negative or
	// non-finite entry, or sums to zero.
	ErrWeights = errors.New("kmeans: invalid weights")
	// ErrMetric means the metric cannot be used for k-means (it has no
	// center rule, invalid parameters, or it rejects a row, such as a zero
	// row under Cosine), or a Method needs a property the metric lacks
	// (the triangle inequality).
	ErrMetric = errors.New("kmeans: unsuitable metric")
	// ErrSettings means a Settings field is out of range.
	ErrSettings = errors.New("kmeans: invalid settings")
	// ErrDimension means a row passed to a Model has the wrong length.
	ErrDimension = errors.New("kmeans: dimension mismatch")
	// ErrNotFinite means a row passed to a Model holds NaN or ±Inf.
	ErrNotFinite = errors.New("kmeans: value is NaN or infinite")
	// ErrModel means a model document is malformed, of an unknown version,
	// or inconsistent, or a Model is unusable (zero value).
	ErrModel = errors.New("kmeans: invalid model")
	// ErrSeeding means the seeder failed or returned unusable centers.
	ErrSeeding = errors.New("kmeans: seeding failed")
)
