package serve

import "errors"

// Errors returned by this package. Rows and models it refuses are reported
// with the sentinels of package kmeans (kmeans.ErrSchema,
// kmeans.ErrNotFinite, kmeans.ErrModel, ...); FieldError names the field.
var (
	// ErrLimits means a field of Limits is negative.
	ErrLimits = errors.New("serve: invalid limits")
)
