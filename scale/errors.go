package scale

import "errors"

// Errors returned by scalers and by Encode and Decode. Wrapped errors can
// be tested with errors.Is.
var (
	// ErrEmpty means the data is nil or has no rows or no columns.
	ErrEmpty = errors.New("scale: empty data")
	// ErrNotFinite means the data or a row holds NaN or ±Inf, or a learned
	// statistic overflows float64.
	ErrNotFinite = errors.New("scale: value is NaN or infinite")
	// ErrWeights means the weights have the wrong length, are negative or
	// not finite, or sum to zero or overflow.
	ErrWeights = errors.New("scale: invalid weights")
	// ErrNotInvertible means the scaler cannot map scaled rows back to raw
	// units (UnitLength forgets each row's norm).
	ErrNotInvertible = errors.New("scale: scaler is not invertible")
	// ErrLength means a row does not have the learned number of columns.
	ErrLength = errors.New("scale: row length does not match the learned dimension")
	// ErrDecode means an encoded scaler is malformed, of an unknown kind or
	// inconsistent.
	ErrDecode = errors.New("scale: invalid encoded scaler")
	// ErrNotLearned means the scaler has not been learned from data.
	ErrNotLearned = errors.New("scale: scaler has not learned from data")
	// ErrUnsupported means Encode was given a Scaler whose type is not one
	// of this package's.
	ErrUnsupported = errors.New("scale: scaler type cannot be encoded")
)
