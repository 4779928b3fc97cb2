// Package scale puts the columns of raw data rows on a common scale, so that
// no column dominates a distance merely because of its units.
//
// A configured value (ZScore{}, &MinMax{}, ...) holds options only. Its Learn
// method reads the rows of a data matrix, optionally weighted, and returns a
// new, learned Scaler; Apply then maps one raw row to the scaled space and
// Invert maps a scaled row back to raw units.
//
//	scaler      kind          learned per column                        row mapping                Invert
//	ZScore      "zscore"      weighted mean and weighted population     (x − mean) / std           yes
//	                          standard deviation (divided by Σw)
//	MinMax      "minmax"      minimum and maximum over the rows of      (x − min) / (max − min)    yes
//	                          positive weight
//	MedianIQR   "median-iqr"  weighted median and interquartile range   (x − median) / (Q3 − Q1)   yes
//	                          (weighted empirical quantiles)
//	UnitLength  "unitlength"  only the number of columns                x / ‖x‖₂ (whole row)       no
//
// The three column-wise scalers are affine: each column j maps by
// y = (x − shift[j]) / div[j]. They implement Affine, which hands out the
// learned shift and div so that a caller can fuse the scaling into its own
// loop without calling Apply.
//
// # Constant columns
//
// A column whose spread statistic is zero (a constant column for all
// scalers; for MedianIQR also any column whose first and third quartiles
// are the same value) gets the divisor 1 instead, so it is only shifted: a
// constant column maps to exactly 0 and never to NaN or ±Inf. For ZScore
// and MinMax a column is constant when its minimum and maximum over the
// rows of positive weight are equal; its shift is then that value exactly.
//
// # Invariants
//
// Learn accepts any mat.Matrix and reads a mat.RawMatrixer such as *mat.Dense
// in place, honouring its stride, without copying. It never modifies the
// data, the weights or its receiver. Weights are nil (all ones) or one
// non-negative finite number per row with a positive finite sum; rows of
// weight zero are ignored by the statistics (but must still be finite).
// Bad input returns an error wrapping ErrEmpty, ErrNotFinite or ErrWeights;
// statistics that overflow float64 (for example a range wider than
// math.MaxFloat64) return an error wrapping ErrNotFinite.
//
// Apply is a low-level helper for hot loops: it allocates nothing, does not
// check the values of x (NaN in x gives NaN in dst) and panics on programmer
// misuse (an unlearned scaler or slices of the wrong length). Invert reports
// misuse as errors instead.
//
// # Concurrency
//
// A learned scaler is immutable: all its methods except UnmarshalJSON only
// read it, so it is safe for concurrent use by multiple goroutines. The
// parameters handed out by Affine are copies. UnmarshalJSON replaces the
// receiver's state and must not run concurrently with other use of the same
// value; it never writes into slices that earlier copies of the value share.
//
// # Encoding
//
// Every scaler type implements json.Marshaler and json.Unmarshaler, and
// Encode and Decode work on the Scaler interface. The document is
// self-describing and versioned:
//
//	{"kind":"minmax","version":1,"dim":2,"offset":[150,12],"divisor":[200,6]}
//	{"kind":"unitlength","version":1,"dim":2}
//
// offset and divisor are the affine shift and div; floats are written in
// the shortest form that parses back to the same bits, so a round trip is
// bit-identical. Decode dispatches on kind and validates everything (known
// kind, supported version, dim ≥ 1, arrays of length dim, finite non-null
// values, divisors > 0, no unknown fields, no trailing data); any failure
// wraps ErrDecode. Encoding an unlearned scaler returns an error wrapping
// ErrNotLearned. A nil Scaler, or a nil pointer to one of this package's
// types, encodes as JSON null, and Decode of null returns (nil, nil), so an
// optional scaler can be stored as is. UnmarshalJSON of null leaves the
// receiver unchanged, as encoding/json expects.
//
// MedianIQR was called Robust in earlier releases, and its documents had
// the kind "robust". Decode and MedianIQR.UnmarshalJSON still read that
// kind (to a *MedianIQR); Encode always writes "median-iqr". The deprecated
// alias Robust names the same type.
package scale
