package distance

import "errors"

// Errors returned by the checked functions of this package. Wrapped errors
// can be tested with errors.Is.
var (
	// ErrLength means two vectors do not have the same length.
	ErrLength = errors.New("distance: vectors have different lengths")
	// ErrNotFinite means a vector holds NaN or ±Inf.
	ErrNotFinite = errors.New("distance: value is NaN or infinite")
	// ErrZeroVector means a zero vector was given to a metric that needs a
	// direction (Cosine).
	ErrZeroVector = errors.New("distance: zero vector has no direction")
	// ErrUnknown means a metric name is not known to this package.
	ErrUnknown = errors.New("distance: unknown metric")
	// ErrParameter means a metric parameter is out of range.
	ErrParameter = errors.New("distance: invalid metric parameter")
)
