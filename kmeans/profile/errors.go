package profile

import "errors"

// Errors returned by Explain. Every error it returns wraps one of them, so
// callers can test with errors.Is.
var (
	// ErrData means the data is nil or empty, holds NaN or ±Inf, or its
	// statistics overflow float64.
	ErrData = errors.New("profile: invalid data")
	// ErrAssignments means there is not one cluster per row, or a cluster
	// is negative or not below Options.K.
	ErrAssignments = errors.New("profile: invalid assignments")
	// ErrWeights means the weights have the wrong length, are negative or
	// not finite, or sum to zero or overflow.
	ErrWeights = errors.New("profile: invalid weights")
	// ErrOptions means an Options field is out of range: names or units of
	// the wrong count or holding control characters, an empty name, a
	// negative K or one above the number of rows, or a negative or
	// non-finite MinShift.
	ErrOptions = errors.New("profile: invalid options")
)
