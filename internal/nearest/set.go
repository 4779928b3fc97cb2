package nearest

import "math"

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
// time, as a served model answers it. Its losses are computed with exactly
// the operations, in exactly the order, of the distance package's function
// for the loss, so that the nearest center and its loss are bit for bit
// those of a direct scan (and of training, which uses the same functions).
// A Set is read-only and safe for concurrent use.
//
// The search is a plain scan of every center, four centers at a time: each
// center's sum keeps its own accumulators in the metric function's order,
// and the four sums interleave, so that the processor overlaps them. The
// benchmarks of kmeans (BenchmarkServeVariants) compare it with the pruned
// searches it replaced: projection order, center–center skips and early
// abandon lost on overlapping clusters and gained little on separated
// ones.
type Set struct {
	k, d int
	loss Loss
	c    []float64
}

// NewSet returns the Set of the k×d centers c (row-major, not copied: c
// must not be modified while the Set is in use). It panics if k < 1, d < 1,
// len(c) < k·d or loss is unknown.
func NewSet(c []float64, k, d int, loss Loss) *Set {
	if k < 1 || d < 1 || len(c) < k*d || (loss != SquaredEuclidean && loss != Manhattan) {
		panic("nearest: NewSet needs k ≥ 1, d ≥ 1, len(c) ≥ k·d and a known loss")
	}
	return &Set{k: k, d: d, loss: loss, c: c[:k*d]}
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
