package kmeans

// Elkan is the exact k-means method of C. Elkan, "Using the triangle
// inequality to accelerate k-means", International Conference on Machine
// Learning (ICML), 2003. Each row keeps an upper bound on the distance to
// its center and a lower bound on the distance to each of the k centers; a
// center is skipped when its lower bound, or half its distance to the
// row's current center, exceeds the row's upper bound. The first pass
// already skips centers by the center–center distances.
//
// It gives exactly Lloyd's assignments, cost and iterations from the same
// seed (bounds are rounded outwards; see the solver notes in
// space_solvers.go). It needs a metric with the triangle inequality:
// Euclidean or Manhattan; with Cosine, Start returns an error wrapping
// ErrMetric.
//
// Extra memory per running restart: n·k float32 lower bounds plus n upper
// bounds (4·n·(k+1) bytes: 1 GiB for n = 10⁶, k = 256), and k² float64 of
// center–center distances. Step.Distances counts row–center losses; the k
// center moves and k(k−1)/2 center–center distances of each pass are not
// counted.
type Elkan struct{}

var _ Method = Elkan{}

// Start returns the per-restart bounds, or an error wrapping ErrMetric if
// the metric has no triangle inequality.
func (Elkan) Start(sp *Space, k int) (Pass, error) {
	return startBound(sp, k, "Elkan", func(b *bounds) Pass {
		return &elkanPass{bounds: b, upper: make([]float32, sp.N), lower: make([]float32, sp.N*k)}
	})
}

type elkanPass struct {
	*bounds
	upper []float32
	lower []float32 // n×k
}

func (p *elkanPass) Assign(st *Step) {
	k := p.k
	first := st.Previous == nil
	if !first {
		p.moves(st.Centers, st.Previous)
	}
	p.halves(st.Centers)
	p.eachBlock(st, nil, func(_ *scratch, part *Partial, lo, hi int) (moved, evals int) {
		for i := lo; i < hi; i++ {
			L := p.lower[i*k : (i+1)*k]
			a, u := 0, inf
			if !first {
				a = st.Assign[i]
				u = p.up(float64(p.upper[i]) + p.move[a])
				for j, m := range p.move {
					L[j] = lo32(p.down(float64(L[j]) - m))
				}
			}
			fa, known := 0.0, false
			if first || !p.beats(p.nearestHalf[a], u) {
				for j := range k {
					if j == a || p.beats(float64(L[j]), u) {
						continue
					}
					h := p.half[a*k+j]
					if p.beats(h, u) {
						// δ_j ≥ 2h − δ_a ≥ 2h − u.
						if v := lo32(p.down(2*h - u)); v > L[j] {
							L[j] = v
						}
						continue
					}
					if !known {
						fa, known = p.rowLoss(i, st.Centers, a), true
						evals++
						da := p.dist(fa)
						u, L[a] = p.up(da), lo32(p.down(da))
						if p.beats(float64(L[j]), u) || p.beats(h, u) {
							continue
						}
					}
					fj := p.rowLoss(i, st.Centers, j)
					evals++
					dj := p.dist(fj)
					L[j] = lo32(p.down(dj))
					if less(fj, j, fa, a) {
						a, fa, u = j, fj, p.up(dj)
					}
				}
			}
			p.upper[i] = hi32(u)
			mv, e := p.settle(st, part, i, a, fa, known)
			moved, evals = moved+mv, evals+e
		}
		return moved, evals
	})
}
