package validate

import "errors"

// ErrRow means a row index is outside the rows of the reference labelling
// (ClusterJaccard).
var ErrRow = errors.New("validate: row index out of range")
