package nearest

import (
	"math"

	"github.com/centroidlab/centroid/internal/asm/f64"
)

// MaxValues is the largest number of center values k·d that serving is
// built for: a Set of that size holds 128 MiB of centers, and one search
// costs about 3·MaxValues floating-point operations (milliseconds). Code
// that accepts models from outside (a model document, a model made from
// given centers) should refuse larger ones.
const MaxValues = 1 << 24

// Loss names the loss a Set searches with.
type Loss int

const (
	// SquaredEuclidean is distance.SqEuclidean, the loss of Euclidean.
	SquaredEuclidean Loss = iota + 1
	// Manhattan is distance.Manhattan's Distance, its own loss.
	Manhattan
)

// Set is k centers of dimension d prepared for the search of one row at a
// time, as a served model answers it. Its answers are bit for bit those of
// a direct scan with the distance package's function for the loss (and so
// of training, which uses the same functions): the nearest center, the
// lowest index on ties, its loss and the runner-up's loss. A Set is
// read-only and safe for concurrent use; its searches allocate nothing.
//
// Under SquaredEuclidean, where an assembly kernel exists (f64.Kernel is
// not "go"), the search runs f64.Best2Row on the centers shifted by their
// mean and accepts its answer when the best value beats the runner-up by
// more than twice the rounding slack of Centers (for the runner-up's loss,
// a second call that excludes the best center); the losses it returns are
// then computed directly. Otherwise, and for the rare rows whose answer
// is not certain, it scans: every center measured with the metric
// function's own operations, four centers interleaved so that the
// processor overlaps them.
//
// The pruned searches that the scan replaced (projection order,
// center–center skips and early abandon) lost to it on overlapping
// clusters and gained on separated ones only; kmeans'
// BenchmarkServeVariants keeps the comparison.
type Set struct {
	k, d int
	loss Loss
	c    []float64
	// The kernel path (SquaredEuclidean, an assembly kernel, d ≤ maxKernelDim):
	// centers shifted by their mean and packed for f64.Best2Row, their
	// squared norms (padded lanes +Inf) and largest norm.
	packed, norm2, shift []float64
	maxNorm2             float64
	round                Rounding
}

// maxKernelDim is the largest dimension the kernel path serves.
const maxKernelDim = 1 << 16

// NewSet returns the Set of the k×d centers c (row-major, not copied: c
// must not be modified while the Set is in use). It panics if k < 1, d < 1,
// len(c) < k·d or loss is unknown.
func NewSet(c []float64, k, d int, loss Loss) *Set {
	if k < 1 || d < 1 || len(c) < k*d || (loss != SquaredEuclidean && loss != Manhattan) {
		panic("nearest: NewSet needs k ≥ 1, d ≥ 1, len(c) ≥ k·d and a known loss")
	}
	s := &Set{k: k, d: d, loss: loss, c: c[:k*d]}
	if loss == SquaredEuclidean && f64.Kernel() != "go" && d <= maxKernelDim {
		var p Centers
		p.Pack(c, k, d)
		s.packed = f64.Pack(make([]float64, f64.PackedLen(k, d)), p.c, k, d, 0)
		s.norm2 = make([]float64, f64.PackedLen(k, 1))
		for j := range s.norm2 {
			s.norm2[j] = math.Inf(1)
		}
		copy(s.norm2, p.norm2)
		s.shift, s.maxNorm2, s.round = p.shift, p.maxNorm2, p.round
	}
	return s
}

// Nearest returns the center with the smallest loss to z, the lowest index
// on ties, and that loss (+Inf and center 0 if every loss overflows). It
// panics if len(z) != d.
func (s *Set) Nearest(z []float64) (int, float64) {
	j, l, _ := s.search(z, false)
	return j, l
}

// Nearest2 is Nearest with the loss of the runner-up as well: the second
// smallest loss over all centers (equal to the smallest on a tie, +Inf if
// k = 1).
func (s *Set) Nearest2(z []float64) (j int, loss, second float64) {
	return s.search(z, true)
}

func (s *Set) search(z []float64, wantSecond bool) (int, float64, float64) {
	if len(z) != s.d {
		panic("nearest: row length differs from the Set's dimension")
	}
	if s.packed != nil {
		if j, l, l2, ok := s.kernel(z, wantSecond); ok {
			return j, l, l2
		}
	}
	return s.scan(z)
}

// kernel searches with f64.Best2Row on the shifted row and reports
// whether its answer is certain: the best value (and, if wantSecond, the
// best among the other centers) beats the next by more than twice the
// rounding slack, so that the direct losses order the same way (see
// Centers). The losses returned are then computed directly, with the
// distance package's arithmetic. When the answer is not certain the
// caller scans.
func (s *Set) kernel(z []float64, wantSecond bool) (int, float64, float64, bool) {
	j, v1, v2, r2 := f64.Best2Row(z, s.shift, s.packed, s.norm2, s.k, -1)
	slack2 := 2 * s.round.Slack(r2, s.maxNorm2)
	if !(v2-v1 > slack2) {
		return 0, 0, 0, false
	}
	d := s.d
	loss, second := sq1(z, s.c[j*d:(j+1)*d]), math.Inf(1)
	if wantSecond && s.k > 1 {
		q, w1, w2, _ := f64.Best2Row(z, s.shift, s.packed, s.norm2, s.k, j)
		if !(w2-w1 > slack2) {
			return 0, 0, 0, false
		}
		second = sq1(z, s.c[q*d:(q+1)*d])
	}
	return j, loss, second, true
}

// scan measures every center.
func (s *Set) scan(z []float64) (int, float64, float64) {
	best, bl, sl := 0, math.Inf(1), math.Inf(1)
	record := func(j int, l float64) {
		if l < sl {
			if l < bl {
				best, bl, sl = j, l, bl
			} else {
				sl = l
			}
		}
	}
	d, c := s.d, s.c
	j := 0
	if s.loss == SquaredEuclidean {
		for ; j+4 <= s.k; j += 4 {
			l0, l1, l2, l3 := sq4(z, c[j*d:(j+1)*d], c[(j+1)*d:(j+2)*d], c[(j+2)*d:(j+3)*d], c[(j+3)*d:(j+4)*d])
			record(j, l0)
			record(j+1, l1)
			record(j+2, l2)
			record(j+3, l3)
		}
		for ; j < s.k; j++ {
			record(j, sq1(z, c[j*d:(j+1)*d]))
		}
	} else {
		for ; j+4 <= s.k; j += 4 {
			l0, l1, l2, l3 := abs4(z, c[j*d:(j+1)*d], c[(j+1)*d:(j+2)*d], c[(j+2)*d:(j+3)*d], c[(j+3)*d:(j+4)*d])
			record(j, l0)
			record(j+1, l1)
			record(j+2, l2)
			record(j+3, l3)
		}
		for ; j < s.k; j++ {
			record(j, abs1(z, c[j*d:(j+1)*d]))
		}
	}
	return best, bl, sl
}

// sq1 is distance.SqEuclidean(z, a): two accumulators over even and odd
// coordinates, added at the end.
func sq1(z, a []float64) float64 {
	a = a[:len(z)]
	var s0, s1 float64
	i := 0
	for ; i+1 < len(z); i += 2 {
		d0 := z[i] - a[i]
		d1 := z[i+1] - a[i+1]
		s0 += d0 * d0
		s1 += d1 * d1
	}
	if i < len(z) {
		d := z[i] - a[i]
		s0 += d * d
	}
	return s0 + s1
}

// sq4 is sq1 of z against four centers, interleaved.
func sq4(z, a, b, c, e []float64) (float64, float64, float64, float64) {
	a, b, c, e = a[:len(z)], b[:len(z)], c[:len(z)], e[:len(z)]
	var a0, a1, b0, b1, c0, c1, e0, e1 float64
	i := 0
	for ; i+1 < len(z); i += 2 {
		z0, z1 := z[i], z[i+1]
		t0, t1 := z0-a[i], z1-a[i+1]
		a0 += t0 * t0
		a1 += t1 * t1
		t0, t1 = z0-b[i], z1-b[i+1]
		b0 += t0 * t0
		b1 += t1 * t1
		t0, t1 = z0-c[i], z1-c[i+1]
		c0 += t0 * t0
		c1 += t1 * t1
		t0, t1 = z0-e[i], z1-e[i+1]
		e0 += t0 * t0
		e1 += t1 * t1
	}
	if i < len(z) {
		z0 := z[i]
		t := z0 - a[i]
		a0 += t * t
		t = z0 - b[i]
		b0 += t * t
		t = z0 - c[i]
		c0 += t * t
		t = z0 - e[i]
		e0 += t * t
	}
	return a0 + a1, b0 + b1, c0 + c1, e0 + e1
}

// abs1 is distance.Manhattan{}.Distance(z, a): one accumulator in index
// order.
func abs1(z, a []float64) float64 {
	a = a[:len(z)]
	var s float64
	for i, v := range z {
		s += math.Abs(v - a[i])
	}
	return s
}

// abs4 is abs1 of z against four centers, interleaved.
func abs4(z, a, b, c, e []float64) (float64, float64, float64, float64) {
	a, b, c, e = a[:len(z)], b[:len(z)], c[:len(z)], e[:len(z)]
	var sa, sb, sc, se float64
	for i, v := range z {
		sa += math.Abs(v - a[i])
		sb += math.Abs(v - b[i])
		sc += math.Abs(v - c[i])
		se += math.Abs(v - e[i])
	}
	return sa, sb, sc, se
}
