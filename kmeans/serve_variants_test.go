package kmeans

import (
	"context"
	"math"
	"testing"

	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/distance"
)

// The pruned serving search that Model.Nearest ran before the plain scan
// of nearest.Set, kept here only for BenchmarkServeVariants (and checked
// against the scan by TestServeVariantsExact): projection order,
// center–center skips and early abandon, each of which can be switched
// off.

type variant struct {
	projection, skip, abandon bool
}

// searchIndex speeds up the exact nearest-center search under Euclidean and
// Manhattan, both of which satisfy the triangle inequality:
//
//   - Centers are visited in order of their projection on one direction u
//     (the principal axis of the centers), starting next to the row's own
//     projection q, so a near center is usually met first. Since
//     |q − c·u| ≤ ‖x − c‖₂ ≤ ‖x − c‖₁ for a unit u, the visit stops once
//     the projection gap exceeds the distance to beat.
//   - A center j is skipped when ‖c_best − c_j‖ > D_best + D_beat, where
//     D_beat is the distance to beat (the best, or the runner-up when the
//     margin is wanted): then ‖x − c_j‖ > D_beat by the triangle
//     inequality.
//   - A distance being summed is abandoned once its partial sum exceeds the
//     loss to beat; partial sums of non-negative terms never decrease under
//     rounding, so the full sum would exceed it too.
//
// Every bound carries a relative margin (boundSlack) far above the rounding
// error of the quantities involved, so a center is only skipped when its
// computed loss would be strictly larger than the loss to beat: the result
// is bit-identical to a full scan, ties included.
type searchIndex struct {
	dir   []float64 // direction u, unit length
	proj  []float64 // center projections c_j·u, ascending
	err   []float64 // rounding bound of each proj entry
	order []int     // center index of proj[i]
	cc    []float64 // k×k distances between centers; nil if not kept
	tol   float64   // relative rounding bound of a projection
}

const (
	// boundSlack is the relative margin of every skip test.
	boundSlack = 1e-9
	// minBound is the smallest distance to beat for which the skip tests
	// run; below it rounding near underflow is not worth reasoning about.
	minBound = 0x1p-400
	// maxIndexK is the largest k for which center-to-center distances are
	// kept (k² values).
	maxIndexK = 256
	// minIndexK is the smallest k for which the index pays off.
	minIndexK = 4
)

// newSearchIndex builds the index of k centers of dimension d, or returns
// nil if it would not help or cannot be trusted (non-finite projections).
func newSearchIndex(centers []float64, k, d int, kind metricKind) *searchIndex {
	if k < minIndexK {
		return nil
	}
	ix := &searchIndex{dir: principalAxis(centers, k, d), tol: 4 * float64(d+4) * 0x1p-53}
	type entry struct {
		p, e float64
		j    int
	}
	entries := make([]entry, k)
	for j := range k {
		p, a := ix.project(centers[j*d : (j+1)*d])
		if math.IsNaN(p) || math.IsInf(p, 0) || math.IsInf(a, 0) {
			return nil
		}
		entries[j] = entry{p, ix.tol*a + 0x1p-1000*float64(d+1), j}
	}
	// Insertion sort keeps equal projections in index order (k is small).
	for i := 1; i < k; i++ {
		for j := i; j > 0 && entries[j].p < entries[j-1].p; j-- {
			entries[j], entries[j-1] = entries[j-1], entries[j]
		}
	}
	for _, e := range entries {
		ix.proj = append(ix.proj, e.p)
		ix.err = append(ix.err, e.e)
		ix.order = append(ix.order, e.j)
	}
	if k <= maxIndexK {
		ix.cc = make([]float64, k*k)
		for i := range k {
			for j := range i {
				var v float64
				if kind == euclidean {
					v = math.Sqrt(distance.SqEuclidean(centers[i*d:(i+1)*d], centers[j*d:(j+1)*d]))
				} else {
					v = distance.Manhattan{}.Distance(centers[i*d:(i+1)*d], centers[j*d:(j+1)*d])
				}
				if math.IsInf(v, 0) || math.IsNaN(v) {
					ix.cc = nil
					return ix
				}
				ix.cc[i*k+j], ix.cc[j*k+i] = v, v
			}
		}
	}
	return ix
}

// project returns z·u and Σ|z_i·u_i|.
func (ix *searchIndex) project(z []float64) (p, abs float64) {
	u := ix.dir[:len(z)]
	var p0, p1, a0, a1 float64
	i := 0
	for ; i+1 < len(z); i += 2 {
		t0, t1 := z[i]*u[i], z[i+1]*u[i+1]
		p0 += t0
		p1 += t1
		a0 += math.Abs(t0)
		a1 += math.Abs(t1)
	}
	if i < len(z) {
		t := z[i] * u[i]
		p0 += t
		a0 += math.Abs(t)
	}
	return p0 + p1, a0 + a1
}

// principalAxis returns a unit vector along the direction of largest spread
// of the centers (power iteration from a fixed start, so it is
// deterministic), or the first axis if the centers do not spread.
func principalAxis(centers []float64, k, d int) []float64 {
	mean := make([]float64, d)
	for j := range k {
		for i, v := range centers[j*d : (j+1)*d] {
			mean[i] += v / float64(k)
		}
	}
	v := make([]float64, d)
	for i := range v {
		v[i] = 1 + float64(i)/float64(d)
	}
	t := make([]float64, k)
	for range 40 {
		for j := range k {
			var s float64
			for i, c := range centers[j*d : (j+1)*d] {
				s += (c - mean[i]) * v[i]
			}
			t[j] = s
		}
		clear(v)
		for j := range k {
			for i, c := range centers[j*d : (j+1)*d] {
				v[i] += (c - mean[i]) * t[j]
			}
		}
		var norm float64
		for _, x := range v {
			norm = math.Hypot(norm, x)
		}
		if !(norm > 0) || math.IsInf(norm, 0) {
			clear(v)
			v[0] = 1
			return v
		}
		for i := range v {
			v[i] /= norm
		}
	}
	return v
}

// sqEuclideanBelow returns distance.SqEuclidean(z, c), computed with the
// same operations in the same order, or +Inf as soon as a partial sum
// exceeds lim.
func sqEuclideanBelow(z, c []float64, lim float64) float64 {
	c = c[:len(z)]
	var s0, s1 float64
	i := 0
	for ; i+3 < len(z); i += 4 {
		d0 := z[i] - c[i]
		d1 := z[i+1] - c[i+1]
		s0 += d0 * d0
		s1 += d1 * d1
		d0 = z[i+2] - c[i+2]
		d1 = z[i+3] - c[i+3]
		s0 += d0 * d0
		s1 += d1 * d1
		if s0+s1 > lim {
			return math.Inf(1)
		}
	}
	for ; i+1 < len(z); i += 2 {
		d0 := z[i] - c[i]
		d1 := z[i+1] - c[i+1]
		s0 += d0 * d0
		s1 += d1 * d1
	}
	if i < len(z) {
		d := z[i] - c[i]
		s0 += d * d
	}
	return s0 + s1
}

// manhattanBelow returns distance.Manhattan{}.Distance(z, c), computed with
// the same operations in the same order, or +Inf as soon as a partial sum
// exceeds lim.
func manhattanBelow(z, c []float64, lim float64) float64 {
	c = c[:len(z)]
	var s float64
	for i, v := range z {
		s += math.Abs(v - c[i])
		if i&3 == 3 && s > lim {
			return math.Inf(1)
		}
	}
	return s
}

// searchVariant returns the nearest center of z under Euclidean or
// Manhattan by the layers v switches on, its loss and, if second, the
// runner-up's loss (+Inf when there is none; when !second the third value
// is meaningless).
func (m *Model) searchVariant(ix *searchIndex, v variant, z []float64, second bool) (int, float64, float64) {
	k, d := m.k, m.d
	euclid := m.kind == euclidean
	best, bestLoss, secondLoss := -1, math.Inf(1), math.Inf(1)
	lim := math.Inf(1) // loss to beat
	// consider measures center j and updates the state.
	consider := func(j int) {
		var l float64
		if euclid {
			l = sqEuclideanBelow(z, m.centers[j*d:(j+1)*d], lim)
		} else {
			l = manhattanBelow(z, m.centers[j*d:(j+1)*d], lim)
		}
		switch {
		case l < bestLoss || (l == bestLoss && j < best):
			best, bestLoss, secondLoss = j, l, bestLoss
		case l < secondLoss:
			secondLoss = l
		default:
			return
		}
		if !v.abandon {
			return
		}
		if second {
			lim = secondLoss
		} else {
			lim = bestLoss
		}
	}
	beat, skip := math.Inf(1), math.Inf(1) // distance to beat; skip threshold on cc
	var row []float64                      // cc row of the current best
	refresh := func() {
		beat, skip = math.Inf(1), math.Inf(1)
		l := bestLoss
		if second {
			l = secondLoss
		}
		if dl := m.lossToDistance(l); dl >= minBound && !math.IsInf(dl, 1) {
			beat = dl * (1 + boundSlack)
			if v.skip && ix.cc != nil {
				skip = (m.lossToDistance(bestLoss) + dl) * (1 + boundSlack)
				row = ix.cc[best*k : (best+1)*k]
			}
		}
	}
	if ix == nil || !v.projection {
		for j := range k {
			if row != nil && row[j] > skip {
				continue
			}
			prevBest, prevBL, prevSL := best, bestLoss, secondLoss
			consider(j)
			if v.skip && ix != nil && (best != prevBest || bestLoss != prevBL || secondLoss != prevSL) {
				refresh()
			}
		}
		return best, bestLoss, secondLoss
	}
	q, qa := ix.project(z)
	qerr := ix.tol*qa + 0x1p-1000*float64(d+1)
	// First projection ≥ q: counted for small k (no mispredicted
	// branches), by bisection otherwise.
	lo := 0
	if k <= 64 {
		for _, p := range ix.proj {
			lo += b2i(p < q)
		}
	} else {
		hi := k
		for lo < hi {
			mid := int(uint(lo+hi) >> 1)
			if ix.proj[mid] < q {
				lo = mid + 1
			} else {
				hi = mid
			}
		}
	}
	left, right := lo-1, lo
	for left >= 0 || right < k {
		var pos int
		var gap float64
		if right >= k || (left >= 0 && q-ix.proj[left] <= ix.proj[right]-q) {
			pos, gap = left, q-ix.proj[left]
			left--
		} else {
			pos, gap = right, ix.proj[right]-q
			right++
		}
		if gap-qerr-ix.err[pos] > beat {
			break // this and every later center is farther than beat
		}
		j := ix.order[pos]
		if row != nil && row[j] > skip {
			continue
		}
		prevBest, prevBL, prevSL := best, bestLoss, secondLoss
		consider(j)
		if best != prevBest || bestLoss != prevBL || secondLoss != prevSL {
			refresh()
		}
	}
	return best, bestLoss, secondLoss
}

// b2i returns 1 for true and 0 for false.
func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}

// TestServeVariantsExact: every pruned variant returns exactly the plain
// scan's answer (Model.Assign) on the benchmark's kinds of data.
func TestServeVariantsExact(t *testing.T) {
	for _, sd := range []float64{1, 20} {
		for _, metric := range []distance.Objective{distance.Euclidean{}, distance.Manhattan{}} {
			x := spreadBlobs(600, 5, 12, sd, 4)
			res, err := Cluster(context.Background(), Problem{Data: x, K: 12, Metric: metric}, &Settings{Restarts: 1, Seed: 1}, nil)
			require.NoError(t, err)
			m := res.Model
			ix := newSearchIndex(m.centers, m.k, m.d, m.kind)
			for i := range 600 {
				z := x.RawRowView(i)
				a, err := m.Assign(z)
				require.NoError(t, err)
				require.Equal(t, res.Assignments[i], a.Cluster)
				for _, v := range serveVariants {
					j, l, l2 := m.searchVariant(ix, v.v, z, true)
					require.Equal(t, a.Cluster, j, "%s row %d", v.name, i)
					require.Equal(t, a.Distance, m.lossToDistance(l), "%s row %d", v.name, i)
					require.Equal(t, a.Margin, m.lossToDistance(l2)-a.Distance, "%s row %d", v.name, i)
				}
			}
		}
	}
}
