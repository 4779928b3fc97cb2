package seeding

import "errors"

// Errors returned by seeders. Wrapped errors can be tested with errors.Is.
var (
	// ErrK means k is below 1 or above the number of distinct rows with
	// positive weight.
	ErrK = errors.New("seeding: invalid k")
	// ErrShape means dst, data or weights have inconsistent shapes.
	ErrShape = errors.New("seeding: inconsistent shapes")
	// ErrWeights means weights are negative, not finite or all zero.
	ErrWeights = errors.New("seeding: invalid weights")
	// ErrParameter means a seeder option or argument is invalid, such as a
	// negative PlusPlus.Candidates or a nil random source.
	ErrParameter = errors.New("seeding: invalid parameter")
)
