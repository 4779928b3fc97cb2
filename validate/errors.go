package validate

import "errors"

// Errors returned by the indices. Wrapped errors can be tested with errors.Is.
var (
	// ErrEmpty means the data or a labelling has no rows.
	ErrEmpty = errors.New("validate: empty input")
	// ErrLength means the data and the assignments (or two labellings) have
	// different lengths, or two center sets have different dimensions.
	ErrLength = errors.New("validate: lengths do not match")
	// ErrNotFinite means the data holds NaN or ±Inf.
	ErrNotFinite = errors.New("validate: value is NaN or infinite")
	// ErrLabel means an assignment or label is negative.
	ErrLabel = errors.New("validate: negative label")
	// ErrClusters means the index is undefined for this number of clusters
	// (for example fewer than two, or as many clusters as rows).
	ErrClusters = errors.New("validate: index undefined for this number of clusters")
	// ErrParameter means an option is out of range.
	ErrParameter = errors.New("validate: invalid parameter")
	// ErrRow means a row index is outside the rows of the reference
	// labelling (ClusterJaccard).
	ErrRow = errors.New("validate: row index out of range")
	// ErrNoKnee means Knee found no knee: the curve does not run flat for
	// KneeOptions.FlatSteps after any bend, or it is constant. It is an
	// outcome, not bad input.
	ErrNoKnee = errors.New("validate: no knee found")
)
