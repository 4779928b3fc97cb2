package seeding

import (
	"fmt"
	"math"
	"math/rand/v2"
	"unsafe"

	"github.com/centroidlab/centroid/internal/check"
	"github.com/centroidlab/centroid/internal/nearest"

	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
)

// input is a validated call to Seed. It reads data through its backing
// slice and stride and never writes to it.
type input struct {
	x       []float64 // data's backing slice, row i at x[i*stride:] (nil for float32 data)
	x32     []float32 // float32 data's backing slice (nil for float64 data)
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
	if overlap(dst.RawMatrix().Data, raw.Data) {
		return nil, fmt.Errorf("%w: dst shares memory with data", ErrShape)
	}
	return checkRest(&input{x: raw.Data, stride: raw.Stride, n: raw.Rows, d: raw.Cols}, dst, weights, m, rnd)
}

// checkInput32 is checkInput for float32 data (see Float32Seeder).
func checkInput32(dst *mat.Dense, data blas32.General, weights []float64, m distance.Metric, rnd *rand.Rand) (*input, error) {
	if dst == nil {
		return nil, fmt.Errorf("%w: nil dst", ErrShape)
	}
	if data.Rows <= 0 || data.Cols <= 0 {
		return nil, fmt.Errorf("%w: data is empty", ErrShape)
	}
	if data.Stride < data.Cols || len(data.Data) < (data.Rows-1)*data.Stride+data.Cols {
		return nil, fmt.Errorf("%w: float32 data of %d values, stride %d, for %d×%d", ErrShape, len(data.Data), data.Stride, data.Rows, data.Cols)
	}
	return checkRest(&input{x32: data.Data, stride: data.Stride, n: data.Rows, d: data.Cols}, dst, weights, m, rnd)
}

// checkRest completes the checks of checkInput and checkInput32 for in
// (data set, shape not yet compared with dst).
func checkRest(in *input, dst *mat.Dense, weights []float64, m distance.Metric, rnd *rand.Rand) (*input, error) {
	out := dst.RawMatrix()
	k := out.Rows
	if k < 1 {
		return nil, fmt.Errorf("%w: k = %d (dst has no rows), want k ≥ 1", ErrK, k)
	}
	if out.Cols != in.d {
		return nil, fmt.Errorf("%w: dst has %d columns, data has %d", ErrShape, out.Cols, in.d)
	}
	if weights != nil && len(weights) != in.n {
		return nil, fmt.Errorf("%w: %d weights for %d rows", ErrShape, len(weights), in.n)
	}
	if rnd == nil {
		return nil, fmt.Errorf("%w: nil random source", ErrParameter)
	}
	if m == nil {
		m = distance.Euclidean{}
	}
	in.k, in.w, in.m, in.dst = k, weights, m, dst
	positive, err := in.checkWeights()
	if err != nil {
		return nil, err
	}
	if positive < k {
		return nil, fmt.Errorf("%w: k = %d but only %d rows have positive weight", ErrK, k, positive)
	}
	buf := make([]float64, in.d)
	for i := range in.n {
		if err := distance.CheckRow(m, in.rowTo(buf, i)); err != nil {
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

// row returns data row i of float64 data (a view).
func (in *input) row(i int) []float64 {
	o := i * in.stride
	return in.x[o : o+in.d : o+in.d]
}

// rowTo returns data row i in float64: a view of float64 data (buf
// unused), or float32 data widened (exactly) into buf[:d].
func (in *input) rowTo(buf []float64, i int) []float64 {
	if in.x32 == nil {
		return in.row(i)
	}
	o := i * in.stride
	return nearest.Widen(buf, in.x32[o:o+in.d])
}

// rowKept returns data row i in float64 in a slice that stays valid: a
// view of float64 data, or a new widened copy of float32 data.
func (in *input) rowKept(i int) []float64 {
	if in.x32 == nil {
		return in.row(i)
	}
	return in.rowTo(make([]float64, in.d), i)
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
	buf := make([]float64, in.d)
	for j, i := range idx {
		in.dst.SetRow(j, in.rowTo(buf, i))
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
