package validate

import "errors"

// ErrNoKnee means Knee found no knee: the curve is too straight for the
// chosen sensitivity, or constant. It is an outcome, not bad input.
var ErrNoKnee = errors.New("validate: no knee found")
