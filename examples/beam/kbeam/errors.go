package kbeam

import "errors"

// Errors returned by this package. Bad input also returns the errors of
// packages kmeans (ErrK, ErrMetric, ErrSettings, ...), seeding and
// kmeans/stream (a *stream.RowError, stream.ErrColumn, stream.ErrEmpty),
// so callers can test with errors.Is.
var (
	// ErrInput means the rows handed to a transform do not fit it: a block
	// whose values are not a whole number of rows, weights of the wrong
	// length, or the same block seen twice.
	ErrInput = errors.New("kbeam: bad input")
	// ErrCodec means an encoded value could not be decoded: truncated,
	// of another version, or inconsistent.
	ErrCodec = errors.New("kbeam: cannot decode")
	// ErrPipeline means the runner reported a failed pipeline. The runner's
	// message, which names the failing transform and the cause (such as a
	// bad row), is part of the error's text; causes raised on workers do
	// not survive the trip as values.
	ErrPipeline = errors.New("kbeam: pipeline failed")
)
