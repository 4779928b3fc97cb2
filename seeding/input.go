package seeding

import (
	"fmt"
	"math"
	"math/rand/v2"
	"unsafe"

	"github.com/centroidlab/centroid/internal/check"

	"github.com/centroidlab/centroid/distance"
	"gonum.org/v1/gonum/mat"
)

// input is a validated call to Seed. It reads data through its backing
// slice and stride and never writes to it.
type input struct {
	x       []float64 // data's backing slice, row i at x[i*stride:]
	stride  int
	n, d, k int
	w       []float64 // nil means all ones
	m       distance.Metric
	dst     *mat.Dense
}

// checkInput validates the arguments of Seed and returns them in a form the
// seeders can use without copying data.
func checkInput(dst, data *mat.Dense, weights []float64, m distance.Metric, rnd *rand.Rand) (*input, error) {
	if dst == nil {
		return nil, fmt.Errorf("%w: nil dst", ErrShape)
	}
	if data == nil {
		return nil, fmt.Errorf("%w: nil data", ErrShape)
	}
	raw := data.RawMatrix()
	if raw.Rows == 0 || raw.Cols == 0 {
		return nil, fmt.Errorf("%w: data is empty", ErrShape)
	}
	out := dst.RawMatrix()
	k := out.Rows
	if k < 1 {
		return nil, fmt.Errorf("%w: k = %d (dst has no rows), want k ≥ 1", ErrK, k)
	}
	if out.Cols != raw.Cols {
		return nil, fmt.Errorf("%w: dst has %d columns, data has %d", ErrShape, out.Cols, raw.Cols)
	}
	if weights != nil && len(weights) != raw.Rows {
		return nil, fmt.Errorf("%w: %d weights for %d rows", ErrShape, len(weights), raw.Rows)
	}
	if overlap(out.Data, raw.Data) {
		return nil, fmt.Errorf("%w: dst shares memory with data", ErrShape)
	}
	if rnd == nil {
		return nil, fmt.Errorf("%w: nil random source", ErrParameter)
	}
	if m == nil {
		m = distance.Euclidean{}
	}
	in := &input{x: raw.Data, stride: raw.Stride, n: raw.Rows, d: raw.Cols, k: k, w: weights, m: m, dst: dst}
	positive, err := in.checkWeights()
	if err != nil {
		return nil, err
	}
	if positive < k {
		return nil, fmt.Errorf("%w: k = %d but only %d rows have positive weight", ErrK, k, positive)
	}
	for i := range in.n {
		if err := distance.CheckRow(m, in.row(i)); err != nil {
			return nil, fmt.Errorf("seeding: data row %d: %w", i, err)
		}
	}
	return in, nil
}

// checkWeights returns the number of rows with positive weight, or an error
// wrapping ErrWeights.
func (in *input) checkWeights() (int, error) {
	if _, err := check.Weights(in.w, in.n, ErrWeights); err != nil {
		return 0, err
	}
	if in.w == nil {
		return in.n, nil
	}
	positive := 0
	for _, v := range in.w {
		if v > 0 {
			positive++
		}
	}
	return positive, nil
}

// overlap reports whether the memory spans of a and b intersect.
func overlap(a, b []float64) bool {
	if len(a) == 0 || len(b) == 0 {
		return false
	}
	const size = unsafe.Sizeof(float64(0))
	pa := uintptr(unsafe.Pointer(unsafe.SliceData(a)))
	pb := uintptr(unsafe.Pointer(unsafe.SliceData(b)))
	return pa < pb+uintptr(len(b))*size && pb < pa+uintptr(len(a))*size
}

// row returns data row i.
func (in *input) row(i int) []float64 {
	o := i * in.stride
	return in.x[o : o+in.d : o+in.d]
}

// weight returns the weight of row i.
func (in *input) weight(i int) float64 {
	if in.w == nil {
		return 1
	}
	return in.w[i]
}

// cumWeights fills cum with the running sum of the weights.
func (in *input) cumWeights(cum []float64) {
	var s float64
	for i := range cum {
		s += in.weight(i)
		cum[i] = s
	}
}

// writeRows copies the data rows idx into the rows of dst.
func (in *input) writeRows(idx []int) {
	for j, i := range idx {
		in.dst.SetRow(j, in.row(i))
	}
}

// pick draws an index i with probability (cum[i]−cum[i−1])/cum[n−1], where
// cum is a non-decreasing running sum with a positive, finite last element.
// An index whose term is zero is never returned.
func pick(cum []float64, rnd *rand.Rand) int {
	total := cum[len(cum)-1]
	u := rnd.Float64() * total
	if u >= total {
		u = math.Nextafter(total, 0)
	}
	// Smallest i with cum[i] > u; then cum[i−1] ≤ u < cum[i].
	lo, hi := 0, len(cum)-1
	for lo < hi {
		mid := int(uint(lo+hi) >> 1)
		if cum[mid] > u {
			hi = mid
		} else {
			lo = mid + 1
		}
	}
	return lo
}

// lossFunc returns the per-row loss k-means++ samples by: the metric's Loss
// when it is an Objective, else its squared Distance.
func lossFunc(m distance.Metric) func(x, c []float64) float64 {
	if distance.ArithmeticOf(m) == distance.SquaredDifferences {
		return distance.SqEuclidean
	}
	if o, ok := m.(distance.Objective); ok {
		return o.Loss
	}
	return func(x, c []float64) float64 {
		v := m.Distance(x, c)
		return v * v
	}
}
