package nearest

import "math"

// Float is the element type of rows: float32 or float64.
type Float interface{ ~float32 | ~float64 }

// SqDist returns distance.SqEuclidean(x, c) for a row x of either
// width, bit for bit: every float32 is converted exactly to float64 and
// the same two running sums (even and odd coordinates) are added at the
// end, so a float32 row gives the bits of its float64 conversion. It
// panics if len(c) < len(x).
func SqDist[T Float](x []T, c []float64) float64 {
	c = c[:len(x)]
	var s0, s1 float64
	i := 0
	for ; i+1 < len(x); i += 2 {
		d0 := float64(x[i]) - c[i]
		d1 := float64(x[i+1]) - c[i+1]
		s0 += d0 * d0
		s1 += d1 * d1
	}
	if i < len(x) {
		d := float64(x[i]) - c[i]
		s0 += d * d
	}
	return s0 + s1
}

// AbsDist returns distance.Manhattan{}.Distance(x, c) for a row x of
// either width, bit for bit (one running sum in index order of the exact
// float64 conversions). It panics if len(c) < len(x).
func AbsDist[T Float](x []T, c []float64) float64 {
	c = c[:len(x)]
	var s float64
	for i, v := range x {
		s += math.Abs(float64(v) - c[i])
	}
	return s
}

// Widen writes the float64 conversion of x (exact for float32) into
// dst[:len(x)] and returns it. It panics if len(dst) < len(x).
func Widen[T Float](dst []float64, x []T) []float64 {
	dst = dst[:len(x)]
	for i, v := range x {
		dst[i] = float64(v)
	}
	return dst
}
