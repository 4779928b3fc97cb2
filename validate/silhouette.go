package validate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"

	"github.com/centroidlab/centroid/internal/sample"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
)

// Silhouette returns the mean silhouette width over all rows (P. J.
// Rousseeuw, "Silhouettes: a graphical aid to the interpretation and
// validation of cluster analysis", J. Computational and Applied Mathematics
// 20, 1987). For row i in cluster A,
//
//	a(i) = mean distance from i to the other rows of A
//	b(i) = min over the other non-empty clusters C of the mean distance from i to the rows of C
//	s(i) = (b(i) − a(i)) / max(a(i), b(i))
//
// with s(i) = 0 when A is a singleton (Rousseeuw's convention) and when
// a(i) = b(i) = 0. Values lie in [−1, 1]; higher is better.
//
// Any metric can be used; nil means distance.Euclidean. The result is exact:
// all n(n−1) distances are evaluated (O(n²d) time) with O(n) extra memory
// (the n values and a length-K scratch per goroutine) rather than an n×n
// matrix. Rows are processed in parallel on runtime.GOMAXPROCS(0)
// goroutines; the result is bit-identical for any number of goroutines. For
// large n see SampledSilhouette.
//
// It returns an error wrapping ErrClusters when fewer than two clusters have
// rows or every row is its own cluster (K == n); ErrParameter (and the
// distance package's error) for an invalid metric; the distance package's
// error for a row the metric rejects (such as distance.ErrZeroVector under
// Cosine); ErrNotFinite if a custom metric's distances make a(i) or b(i)
// NaN, infinite or negative; and ErrEmpty, ErrLength, ErrNotFinite or
// ErrLabel for bad input.
func Silhouette(X mat.Matrix, assign []int, m distance.Metric) (float64, error) {
	s, err := newSilhouette(X, assign, m)
	if err != nil {
		return 0, err
	}
	vals, err := s.values(nil, nil, runtime.GOMAXPROCS(0))
	if err != nil {
		return 0, err
	}
	return meanOf(vals), nil
}

// SilhouetteValues returns the silhouette s(i) of every row, as defined for
// Silhouette. The result is stored in dst if its capacity is at least n
// (dst[:n] is returned) and in a new slice otherwise. Errors are those of
// Silhouette.
func SilhouetteValues(dst []float64, X mat.Matrix, assign []int, m distance.Metric) ([]float64, error) {
	s, err := newSilhouette(X, assign, m)
	if err != nil {
		return nil, err
	}
	return s.values(dst, nil, runtime.GOMAXPROCS(0))
}

// ClusterSilhouettes returns the mean silhouette s(i) of the rows of every
// cluster, as defined for Silhouette. The result has length max(assign)+1; a
// cluster with no rows gets 0 (never NaN), as does a singleton cluster.
// Errors are those of Silhouette plus ErrLabel for a label too large for a
// per-cluster slice (see the package documentation).
func ClusterSilhouettes(X mat.Matrix, assign []int, m distance.Metric) ([]float64, error) {
	s, err := newSilhouette(X, assign, m)
	if err != nil {
		return nil, err
	}
	if err := s.g.perClusterLimit(); err != nil {
		return nil, err
	}
	vals, err := s.values(nil, nil, runtime.GOMAXPROCS(0))
	if err != nil {
		return nil, err
	}
	sum := make([]float64, s.g.clusters())
	for i, x := range vals {
		sum[s.g.id[i]] += x
	}
	out := make([]float64, s.g.k)
	for c, l := range s.g.label {
		out[l] = sum[c] / float64(s.g.size[c])
	}
	return out, nil
}

// Estimate is a sampled estimate of a mean with its 95% confidence interval.
type Estimate struct {
	// Mean is the sample mean.
	Mean float64
	// StdErr is the estimated standard error of Mean.
	StdErr float64
	// Lo and Hi bound the 95% confidence interval Mean ∓ 1.96·StdErr,
	// clipped to the range of the estimated quantity.
	Lo, Hi float64
	// Samples is the number of rows the estimate is based on.
	Samples int
}

// z975 is the 0.975 quantile of the standard normal distribution.
const z975 = 1.959963984540054

// SampledSilhouette estimates the mean silhouette of Silhouette from a
// uniform random sample of rows drawn without replacement: it returns the
// mean of the sampled rows' exact silhouettes, each computed against all n
// rows, in O(samples·n·d) time instead of O(n²d).
//
// The sample is the first `samples` entries of a partial Fisher–Yates
// shuffle of 0..n−1: for t = 0, 1, …, samples−1 position t is swapped with
// position t + rnd.IntN(n−t). The same rnd state therefore gives the same
// sample, and the result does not depend on the number of goroutines.
//
// With r = samples, the interval is the normal (central limit) 95% interval
// Mean ∓ 1.96·StdErr with StdErr = sd·sqrt((1 − r/n)/r), where sd is the
// sample standard deviation of the r values (denominator r−1) and 1 − r/n the
// finite-population correction for sampling without replacement; Lo and Hi
// are clipped to [−1, 1]. The interval is approximate: it relies on the
// sample mean being close to normal, which for values bounded in [−1, 1]
// holds well for r in the hundreds. A distribution-free alternative is
// Hoeffding's inequality: every s(i) lies in an interval of width 2, so
// |Mean − true mean| ≤ sqrt(2·ln(2/δ)/r) with probability at least 1 − δ
// (2.72/√r for δ = 0.05), and this also holds without replacement (W.
// Hoeffding, "Probability inequalities for sums of bounded random
// variables", JASA 58, 1963, section 6). It is wider and is not what Lo and
// Hi report.
//
// If samples ≥ n the exact mean over all rows is returned with StdErr 0,
// Lo = Hi = Mean and Samples = n, and rnd is not used. It returns an error
// wrapping ErrParameter if samples < 2 or rnd is nil, and otherwise the
// errors of Silhouette.
func SampledSilhouette(X mat.Matrix, assign []int, m distance.Metric, samples int, rnd *rand.Rand) (Estimate, error) {
	if samples < 2 {
		return Estimate{}, fmt.Errorf("%w: sample size %d, want at least 2", ErrParameter, samples)
	}
	if rnd == nil {
		return Estimate{}, fmt.Errorf("%w: nil random source", ErrParameter)
	}
	s, err := newSilhouette(X, assign, m)
	if err != nil {
		return Estimate{}, err
	}
	n := s.v.n
	if samples >= n {
		vals, err := s.values(nil, nil, runtime.GOMAXPROCS(0))
		if err != nil {
			return Estimate{}, err
		}
		mean := meanOf(vals)
		return Estimate{Mean: mean, Lo: mean, Hi: mean, Samples: n}, nil
	}
	vals, err := s.values(nil, sample.Without(rnd, n, samples), runtime.GOMAXPROCS(0))
	if err != nil {
		return Estimate{}, err
	}
	mean := meanOf(vals)
	var ss float64
	for _, x := range vals {
		ss += (x - mean) * (x - mean)
	}
	r := float64(samples)
	sd := math.Sqrt(ss / (r - 1))
	se := sd * math.Sqrt((1-r/float64(n))/r)
	return Estimate{
		Mean:    mean,
		StdErr:  se,
		Lo:      max(-1, mean-z975*se),
		Hi:      min(1, mean+z975*se),
		Samples: samples,
	}, nil
}

// silhouette holds the checked inputs of one silhouette computation.
type silhouette struct {
	v *rowView
	g *grouping
	m distance.Metric
}

func newSilhouette(X mat.Matrix, assign []int, m distance.Metric) (*silhouette, error) {
	v, g, err := prepare(X, assign)
	if err != nil {
		return nil, err
	}
	if m == nil {
		m = distance.Euclidean{}
	}
	if err := distance.Check(m); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrParameter, err)
	}
	if _, ok := m.(distance.RowChecker); ok {
		for i := range v.n {
			if err := distance.CheckRow(m, v.row(i)); err != nil {
				return nil, fmt.Errorf("validate: row %d rejected by the %s metric: %w", i, m.Name(), err)
			}
		}
	}
	if h, ok := m.(distance.Homogeneous); ok && h.Homogeneous() {
		// Silhouettes do not change when the rows are rescaled: avoid
		// overflow and underflow.
		v, _ = v.rescaled()
	}
	if err := g.atLeastTwo("silhouette"); err != nil {
		return nil, err
	}
	if err := g.notAllSingletons("silhouette"); err != nil {
		return nil, err
	}
	return &silhouette{v: v, g: g, m: m}, nil
}

// values returns s(i) for the given rows (all rows if rows is nil) in dst,
// reallocated if its capacity is too small, using at most workers goroutines.
// Each value is computed by one goroutine in a fixed order, so the result
// does not depend on workers. A metric that returns NaN, ±Inf or a negative
// distance makes a value NaN, reported as ErrNotFinite.
func (s *silhouette) values(dst []float64, rows []int, workers int) ([]float64, error) {
	cnt := s.v.n
	if rows != nil {
		cnt = len(rows)
	}
	if cap(dst) < cnt {
		dst = make([]float64, cnt)
	}
	dst = dst[:cnt]
	scratch := make([][]float64, max(1, workers))
	runBlocks(cnt, workers, func(w, lo, hi int) {
		if scratch[w] == nil {
			scratch[w] = make([]float64, s.g.clusters())
		}
		for r := lo; r < hi; r++ {
			i := r
			if rows != nil {
				i = rows[r]
			}
			dst[r] = s.row(i, scratch[w])
		}
	})
	for r, x := range dst {
		if math.IsNaN(x) {
			i := r
			if rows != nil {
				i = rows[r]
			}
			return nil, fmt.Errorf("%w: the %s metric gave a silhouette of NaN for row %d (distances must be finite and non-negative)", ErrNotFinite, s.m.Name(), i)
		}
	}
	return dst, nil
}

// row returns s(i), using sums (length K) as scratch.
func (s *silhouette) row(i int, sums []float64) float64 {
	v, id, size := s.v, s.g.id, s.g.size
	own := id[i]
	if size[own] == 1 {
		return 0
	}
	clear(sums)
	xi := v.row(i)
	if distance.ArithmeticOf(s.m) == distance.SquaredDifferences {
		// Same value as Euclidean.Distance without the interface call.
		for j := range v.n {
			if j != i {
				sums[id[j]] += math.Sqrt(distance.SqEuclidean(xi, v.row(j)))
			}
		}
	} else {
		for j := range v.n {
			if j != i {
				sums[id[j]] += s.m.Distance(xi, v.row(j))
			}
		}
	}
	a := sums[own] / float64(size[own]-1)
	b := math.Inf(1)
	for c, t := range sums {
		if c != own {
			b = min(b, t/float64(size[c]))
		}
	}
	den := max(a, b)
	if !(a >= 0 && b >= 0) || math.IsInf(den, 1) {
		return math.NaN() // a broken metric; reported by values
	}
	if den == 0 {
		return 0
	}
	return (b - a) / den
}

// meanOf returns the mean of x summed in index order.
func meanOf(x []float64) float64 {
	var s float64
	for _, v := range x {
		s += v
	}
	return s / float64(len(x))
}
