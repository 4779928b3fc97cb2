package kmeans

import (
	"errors"
	"fmt"
)

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
	// ErrSchema means feature names are invalid (wrong count, empty,
	// repeated, or holding characters a name may not hold) or a row given
	// by name does not match a model's schema.
	ErrSchema = errors.New("kmeans: schema mismatch")
	// ErrIterationLimit is Status.Err for IterationLimit: a restart ran
	// Settings.MaxIterations passes without reaching a fixed point.
	ErrIterationLimit = errors.New("kmeans: iteration limit reached before convergence")
	// ErrPanic means code the caller supplied (a Seeder, Metric, Scaler,
	// Method or progress callback) panicked; the error names it and holds
	// the panic value.
	ErrPanic = errors.New("kmeans: caller-supplied code panicked")
	// ErrNotTerminated is Status.Err for a run that has not stopped.
	ErrNotTerminated = errors.New("kmeans: run not terminated")
)

// Errors of the model document, each also matched by errors.Is(err,
// ErrModel).
var (
	// ErrChecksum means a version 2 document's checksum is missing,
	// malformed or does not match its content.
	ErrChecksum = fmt.Errorf("%w: checksum mismatch", ErrModel)
	// ErrTooLarge means a document exceeds the DecodeLimits (bytes or k·d).
	ErrTooLarge = fmt.Errorf("%w: document too large", ErrModel)
	// ErrVersion means a document has a version this build does not read.
	ErrVersion = fmt.Errorf("%w: unsupported version", ErrModel)
)
