package kmeans

import (
	"math"

	"github.com/centroidlab/centroid/internal/nearest"
)

// Yinyang is a simplified form of the exact k-means method of Y. Ding,
// Y. Zhao, X. Shen, M. Musuvathi and T. Mytkowicz, "Yinyang K-means: a
// drop-in replacement of the classic K-means with consistent speedup",
// International Conference on Machine Learning (ICML), 2015. The centers
// are split once, at the first pass, into t groups (Groups, default about
// k/10) by a few Lloyd iterations on the initial centers; each row keeps an
// upper bound on the distance to its center and one lower bound per group.
// A row is skipped when all group bounds exceed its upper bound (global
// filter); otherwise only the groups whose bound does not (group filter)
// are searched, and inside them a center is skipped when the group's old
// bound minus the center's own move exceeds the best distance so far
// (local filter). The simplification: groups are never regrouped and the
// filters use only the bounds above.
//
// It gives exactly Lloyd's assignments, cost and iterations from the same
// seed (bounds are rounded outwards; see the solver notes in
// space_solvers.go). It needs a metric with the triangle inequality:
// Euclidean or Manhattan; with Cosine, Start returns an error wrapping
// ErrMetric.
//
// The first pass scans the centers in order, skipping those at least twice
// as far from the best center so far as the row is (Elkan's first pass).
//
// Extra memory per running restart: n·(t+1) float32 bounds (4·n·(t+1)
// bytes) and k² float64 center–center bounds. Step.Distances counts
// row–center losses; the k center moves of each pass and the k(k−1)/2
// center–center distances of the first pass are not counted.
type Yinyang struct {
	// Groups is the number of center groups t; zero means max(1, k/10).
	// It is capped at k.
	Groups int
}

var _ Method = Yinyang{}

// groupIterations is the number of Lloyd iterations that group the initial
// centers (the paper uses five).
const groupIterations = 5

// Start returns the per-restart bounds, or an error wrapping ErrMetric if
// the metric has no triangle inequality.
func (y Yinyang) Start(sp *Space, k int) (Pass, error) {
	t := y.Groups
	if t <= 0 {
		t = max(1, k/10)
	}
	t = min(t, k)
	return startBound(sp, k, "Yinyang", func(b *bounds) Pass {
		return &yinyangPass{bounds: b, t: t, upper: make([]float32, sp.N), lower: make([]float32, sp.N*t), groupMove: make([]float64, t)}
	})
}

type yinyangPass struct {
	*bounds
	t         int
	grp       *grouping
	upper     []float32
	lower     []float32 // n×t
	groupMove []float64 // largest move of each group's centers
	pool      scratchPool[scratch]
}

func (p *yinyangPass) Assign(st *Step) {
	if st.Previous == nil {
		p.grp = groupCenters(st.Centers, p.k, p.d, p.t)
		p.t = p.grp.t
		p.firstPass(st, p.grp, p.upper, p.lower, &p.pool)
		return
	}
	t := p.t
	p.moves(st.Centers, st.Previous)
	for g := range t {
		p.groupMove[g] = 0
		for _, j := range p.grp.members(g) {
			p.groupMove[g] = math.Max(p.groupMove[g], p.move[j])
		}
	}
	p.eachBlock(st, &p.pool, func(ks *scratch, part *Partial, lo, hi int) (moved, evals int) {
		ks.old = growFloats(ks.old, t)
		ks.groupV = growFloats(ks.groupV, t)
		ks.growGroups(t)
		for i := lo; i < hi; i++ {
			a, fa, known, e := p.row(st, i, ks)
			mv, e2 := p.settle(st, part, i, a, fa, known)
			moved, evals = moved+mv, evals+e+e2
		}
		return moved, evals
	})
}

// row updates the bounds of row i and returns its center, the center's
// loss if it was computed (known), and the number of losses computed.
func (p *yinyangPass) row(st *Step, i int, ks *scratch) (a int, fa float64, known bool, evals int) {
	t := p.t
	G := p.lower[i*t : (i+1)*t]
	a = st.Assign[i]
	u := p.up(float64(p.upper[i]) + p.move[a])
	global := inf
	for g, v := range G {
		ks.old[g] = float64(v)
		ks.groupV[g] = p.down(float64(v) - p.groupMove[g])
		global = math.Min(global, ks.groupV[g])
	}
	defer func() {
		for g, v := range ks.groupV {
			G[g] = lo32(v)
		}
		p.upper[i] = hi32(u)
	}()
	if p.beats(global, u) {
		return a, 0, false, 0
	}
	fa, known = p.rowLoss(i, st.Centers, a), true
	evals++
	u = p.up(p.dist(fa))
	if p.beats(global, u) {
		return a, fa, known, evals
	}
	best, fb := a, fa
	for g := range t {
		ks.i1[g] = -1
		if p.beats(ks.groupV[g], u) {
			continue
		}
		m1, m2, i1 := inf, inf, -1
		for _, j := range p.grp.members(g) {
			if j == a {
				continue
			}
			lj := p.down(ks.old[g] - p.move[j])
			if !p.beats(lj, u) {
				fj := p.rowLoss(i, st.Centers, j)
				evals++
				dj := p.dist(fj)
				lj = p.down(dj)
				if less(fj, j, fb, best) {
					best, fb, u = j, fj, p.up(dj)
				}
			}
			switch {
			case lj < m1:
				m1, m2, i1 = lj, m1, j
			case lj < m2:
				m2 = lj
			}
		}
		ks.m1[g], ks.m2[g], ks.i1[g] = m1, m2, i1
		if i1 < 0 {
			ks.i1[g] = -2 // scanned, no member other than a: m1 = +Inf
		}
	}
	for g := range t {
		switch ks.i1[g] {
		case -1: // not scanned: the decremented bound stands
		case best:
			ks.groupV[g] = ks.m2[g]
		default:
			ks.groupV[g] = ks.m1[g]
		}
	}
	if best != a {
		g := p.grp.group[a]
		ks.groupV[g] = math.Min(ks.groupV[g], p.down(p.dist(fa)))
	}
	p.store(i, G, ks.groupV, u)
	return best, fb, true, evals
}

// store writes row i's new bounds: the group bounds into G, u as its upper
// bound.
func (p *yinyangPass) store(i int, G []float32, groupV []float64, u float64) {
	for g, v := range groupV {
		G[g] = lo32(v)
	}
	p.upper[i] = hi32(u)
}

// groupCenters splits the k centers (k×d) into at most t groups by
// groupIterations Lloyd iterations on the centers themselves, starting from
// the centers at indices ⌊g·k/t⌋; groups left empty are dropped. The split
// only affects speed, never results, and depends on nothing but the
// centers.
func groupCenters(centers []float64, k, d, t int) *grouping {
	gc := make([]float64, t*d)
	for g := range t {
		j := g * k / t
		copy(gc[g*d:(g+1)*d], centers[j*d:(j+1)*d])
	}
	of := make([]int, k)
	sums := make([]float64, t*d)
	counts := make([]int, t)
	for it := 0; it <= groupIterations; it++ {
		for j := range k {
			of[j] = nearest.Direct(t, func(g int) float64 {
				var s float64
				for c := range d {
					v := centers[j*d+c] - gc[g*d+c]
					s += v * v
				}
				return s
			})
		}
		if it == groupIterations {
			break
		}
		clear(sums)
		clear(counts)
		for j, g := range of {
			counts[g]++
			for c := range d {
				sums[g*d+c] += centers[j*d+c]
			}
		}
		for g, n := range counts {
			if n > 0 {
				for c := range d {
					gc[g*d+c] = sums[g*d+c] / float64(n)
				}
			}
		}
	}
	grp := &grouping{group: make([]int, k), start: []int{0}}
	renumber := make([]int, t)
	for g := range t {
		renumber[g] = -1
		for j, h := range of {
			if h == g {
				if renumber[g] < 0 {
					renumber[g] = grp.t
					grp.t++
				}
				grp.order = append(grp.order, j)
				grp.group[j] = renumber[g]
			}
		}
		if renumber[g] >= 0 {
			grp.start = append(grp.start, len(grp.order))
		}
	}
	return grp
}
