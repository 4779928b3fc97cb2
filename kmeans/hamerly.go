package kmeans

import (
	"math"
)

// Hamerly is the exact k-means method of G. Hamerly, "Making k-means even
// faster", SIAM International Conference on Data Mining (SDM), 2010. Each
// row keeps an upper bound on the distance to its center and one lower
// bound on the distance to every other center; a row whose lower bound (or
// half the distance from its center to the nearest other center) exceeds
// its upper bound keeps its center without computing any distance, and
// otherwise its distances to all k centers are computed.
//
// It gives exactly Lloyd's assignments, cost and iterations from the same
// seed (bounds are rounded outwards; see the package's solver notes in
// space_solvers.go). It needs a metric with the triangle inequality:
// Euclidean or Manhattan; with Cosine, Start returns an error wrapping
// ErrMetric.
//
// The first pass scans the centers in order, skipping those at least twice
// as far from the best center so far as the row is (Elkan's first pass).
//
// Extra memory per running restart: 2n float32 bounds (8 bytes per row) and
// k² float64 center–center bounds. Step.Distances counts row–center
// losses; the k center moves and k(k−1)/2 center–center distances of each
// pass are not counted.
type Hamerly struct{}

var _ Method = Hamerly{}

// Start returns the per-restart bounds, or an error wrapping ErrMetric if
// the metric has no triangle inequality.
func (Hamerly) Start(sp *Space, k int) (Pass, error) {
	return startBound(sp, k, "Hamerly", func(b *bounds) Pass {
		return &hamerlyPass{bounds: b, upper: make([]float32, sp.N), lower: make([]float32, sp.N)}
	})
}

type hamerlyPass struct {
	*bounds
	upper, lower []float32
	pool         scratchPool[scratch]
}

func (p *hamerlyPass) Assign(st *Step) {
	if st.Previous == nil {
		p.firstPass(st, oneGroup(p.k), p.upper, p.lower, &p.pool)
		return
	}
	k := p.k
	largest, arg, second := p.moves(st.Centers, st.Previous)
	p.halves(st.Centers)
	p.eachBlock(st, &p.pool, func(ks *scratch, part *Partial, lo, hi int) (moved, evals int) {
		ks.f = growFloats(ks.f, k)
		for i := lo; i < hi; i++ {
			a := st.Assign[i]
			u := p.up(float64(p.upper[i]) + p.move[a])
			other := largest
			if a == arg {
				other = second
			}
			l := p.down(float64(p.lower[i]) - other)
			z := math.Max(l, p.nearestHalf[a])
			fa, known := 0.0, false
			if !p.beats(z, u) {
				fa, known = p.rowLoss(i, st.Centers, a), true
				evals++
				u = p.up(p.dist(fa))
				if !p.beats(z, u) {
					a, fa, l = p.scanAll(i, a, fa, st.Centers, ks.f)
					evals += k - 1
					u = p.up(p.dist(fa))
				}
			}
			p.upper[i], p.lower[i] = hi32(u), lo32(l)
			mv, e := p.settle(st, part, i, a, fa, known)
			moved, evals = moved+mv, evals+e
		}
		return moved, evals
	})
}

// scanAll computes row i's loss to every center but a (whose loss fa is
// known) and returns the nearest center under Lloyd's rule, its loss and a
// lower bound on the distance to every other center.
func (p *hamerlyPass) scanAll(i, a int, fa float64, centers, f []float64) (best int, fb, lower float64) {
	best, fb = a, fa
	for j := range p.k {
		if j == a {
			f[j] = fa
			continue
		}
		f[j] = p.rowLoss(i, centers, j)
		if less(f[j], j, fb, best) {
			best, fb = j, f[j]
		}
	}
	m := math.Inf(1)
	for j, v := range f {
		if j != best {
			m = math.Min(m, v)
		}
	}
	return best, fb, p.down(p.dist(m))
}
