// Package check holds the input checks that every public package applies
// to matrices, weights and values: nil or empty matrices, weights of the
// wrong length, negative, non-finite or summing to zero, and NaN or ±Inf
// values. Each check wraps the sentinel error its caller passes, so a
// package keeps its own errors (kmeans.ErrData, scale.ErrWeights, …) and its
// callers can test them with errors.Is, while the rules and the messages
// live in one place.
package check
