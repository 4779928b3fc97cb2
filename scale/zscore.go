package scale

import (
	"encoding/json"
	"math"

	"gonum.org/v1/gonum/mat"
)

const kindZScore = "zscore"

// ZScore standardises each column to weighted mean 0 and weighted
// population standard deviation 1: y = (x − mean) / std with
//
//	mean = Σ wᵢ xᵢ / W,   std = sqrt(Σ wᵢ (xᵢ − mean)² / W),   W = Σ wᵢ
//
// over the rows of positive weight. The divisor is the total weight W, not
// W − 1 (the population form, as gonum's stat.PopMeanStdDev); the variance
// is computed with the corrected two-pass algorithm of Chan, Golub and
// LeVeque (1983), "Algorithms for computing the sample variance: analysis
// and recommendations", The American Statistician 37(3).
//
// A column whose minimum equals its maximum (constant) has shift equal to
// that value and divisor 1, and so maps to exactly 0; a column whose
// computed standard deviation is 0 also gets divisor 1. Affine returns
// (mean, std) with these substitutions.
//
// The zero value has no options and is ready to Learn; both ZScore{} and
// &ZScore{} are Scalers. Learn returns a *ZScore.
type ZScore struct {
	affine
}

// Learn returns a *ZScore learned from the rows of data weighted by weights
// (nil = all ones). It returns an error wrapping ErrEmpty, ErrNotFinite or
// ErrWeights for bad input, and ErrNotFinite if a mean or standard deviation
// overflows float64. The receiver's learned state, if any, is ignored and
// left unchanged.
func (ZScore) Learn(data mat.Matrix, weights []float64) (Scaler, error) {
	in, err := newInput(data, weights)
	if err != nil {
		return nil, err
	}
	lo, hi := in.colRange()
	mean := make([]float64, in.cols)
	for x, w := range in.kept() {
		for j, v := range x {
			mean[j] += w * v
		}
	}
	for j := range mean {
		mean[j] /= in.total
	}
	// Corrected two-pass: ss − comp²/W removes the rounding error of mean.
	ss := make([]float64, in.cols)
	comp := make([]float64, in.cols)
	for x, w := range in.kept() {
		for j, v := range x {
			d := v - mean[j]
			ss[j] += w * d * d
			comp[j] += w * d
		}
	}
	std := ss // overwritten in place: std[j] only reads ss[j]
	for j := range std {
		if lo[j] == hi[j] {
			mean[j], std[j] = lo[j], 1
			continue
		}
		std[j] = math.Sqrt(max(0, (ss[j]-comp[j]*comp[j]/in.total)/in.total))
		if std[j] == 0 {
			std[j] = 1
		}
	}
	a, err := learned(mean, std)
	if err != nil {
		return nil, err
	}
	return &ZScore{affine: a}, nil
}

// Kind returns "zscore".
func (ZScore) Kind() string { return kindZScore }

// MarshalJSON encodes the learned scaler as described in the package
// documentation. It returns an error wrapping ErrNotLearned before Learn.
func (z ZScore) MarshalJSON() ([]byte, error) { return z.marshal(kindZScore) }

// UnmarshalJSON replaces z with the scaler encoded in b, which must be a
// valid "zscore" document; errors wrap ErrDecode. JSON null leaves z
// unchanged.
func (z *ZScore) UnmarshalJSON(b []byte) error {
	s, err := decodeKind(b, kindZScore)
	if s != nil {
		*z = *s.(*ZScore)
	}
	return err
}

var (
	_ Scaler           = ZScore{}
	_ Scaler           = (*ZScore)(nil)
	_ Affine           = (*ZScore)(nil)
	_ json.Marshaler   = (*ZScore)(nil)
	_ json.Unmarshaler = (*ZScore)(nil)
)
