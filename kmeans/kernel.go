package kmeans

import "github.com/centroidlab/centroid/internal/nearest"

// kernelTile returns how many rows a kernel pass loads at a time: about
// 64 KiB of shifted rows, a multiple of four between 16 and 256.
func kernelTile(d int) int { return min(256, max(16, (8192/d)&^3)) }

// scratch is one goroutine's working memory inside Space.Parallel.
type scratch struct {
	s      nearest.Searcher
	res    []int
	f      []float64 // k: losses of one row (Hamerly)
	groupV []float64 // per group: new lower bounds of one row (Yinyang)
	old    []float64 // per group: lower bounds before the pass (Yinyang)
	m1, m2 []float64 // per group: two smallest member lower bounds
	i1     []int     // per group: member with the smallest lower bound
}

// lloydKernel is Lloyd's pass for the Euclidean metric through the blocked
// kernel of internal/nearest: ‖c‖² − 2x·c on rows and centers shifted by the
// mean of the centers, argmin fused; a row whose two best values are within
// the kernel's rounding bound is recomputed with the direct loss against
// every center, so the assignments are exactly those of the direct
// computation (Lloyd's rule, lowest index on ties).
type lloydKernel struct {
	sp     *Space
	k      int
	packed nearest.Centers
	pool   scratchPool[scratch]
}

func (p *lloydKernel) Assign(st *Step) {
	sp, k, d := p.sp, p.k, p.sp.D
	p.packed.Pack(st.Centers, k, d, nil)
	tile := kernelTile(d)
	sp.Parallel(func(b int) {
		ks := p.pool.get()
		defer p.pool.put(ks)
		part := &st.Blocks[b]
		part.Reset()
		lo, hi := sp.Block(b)
		moved, evals := 0, int64(hi-lo)*int64(k)
		ks.res = growInts(ks.res, tile)
		for t0 := lo; t0 < hi; t0 += tile {
			t1 := min(hi, t0+tile)
			direct := func(i, j int) float64 { return sp.Loss(t0+i, st.Centers[j*d:(j+1)*d]) }
			evals += int64(ks.s.Assign(ks.res, sp.X[t0*d:t1*d], t1-t0, &p.packed, direct)) * int64(k)
			for i := t0; i < t1; i++ {
				a := ks.res[i-t0]
				if st.Assign[i] != a {
					moved++
					st.Assign[i] = a
				}
				var loss float64
				if st.NeedCost {
					loss = sp.Loss(i, st.Centers[a*d:(a+1)*d])
					evals++
				}
				sp.Add(part, i, a, loss)
			}
		}
		st.Moved.Add(int64(moved))
		st.Distances.Add(evals)
	})
}

// grouping partitions the k centers into t groups: group g holds the
// centers order[start[g]:start[g+1]]; group[j] is center j's group.
type grouping struct {
	t     int
	order []int
	start []int
	group []int
}

// oneGroup puts all k centers in one group.
func oneGroup(k int) *grouping {
	g := &grouping{t: 1, order: make([]int, k), start: []int{0, k}, group: make([]int, k)}
	for j := range g.order {
		g.order[j] = j
	}
	return g
}

// members returns the centers of group g.
func (g *grouping) members(q int) []int { return g.order[g.start[q]:g.start[q+1]] }

// firstPass assigns every row for the first time and sets its bounds:
// upper[i] ≥ δ(x_i, c_a) and lower[i·t+g] ≤ min{δ(x_i, c_j) : j in group g,
// j ≠ a} (+Inf for a group with no such j). It runs an Elkan-style scan: centers in index order, a
// center skipped when half its distance to the best center so far exceeds
// that center's distance (its lower bound is then 2h − u), so that on
// clustered data most distances are never computed.
func (b *bounds) firstPass(st *Step, grp *grouping, upper, lower []float32, pool *scratchPool[scratch]) {
	k, t := b.k, grp.t
	b.halves(st.Centers)
	b.eachBlock(st, pool, func(ks *scratch, part *Partial, lo, hi int) (moved, evals int) {
		ks.growGroups(t)
		for i := lo; i < hi; i++ {
			for g := range t {
				ks.m1[g], ks.m2[g], ks.i1[g] = inf, inf, -1
			}
			record := func(j int, l float64) {
				g := grp.group[j]
				switch {
				case l < ks.m1[g]:
					ks.m1[g], ks.m2[g], ks.i1[g] = l, ks.m1[g], j
				case l < ks.m2[g]:
					ks.m2[g] = l
				}
			}
			a, fa := 0, b.rowLoss(i, st.Centers, 0)
			evals++
			da := b.dist(fa)
			u := b.up(da)
			record(0, b.down(da))
			for j := 1; j < k; j++ {
				if h := b.half[a*k+j]; b.beats(h, u) {
					record(j, b.down(2*h-u)) // δ_j ≥ 2h − δ_a ≥ 2h − u
					continue
				}
				fj := b.rowLoss(i, st.Centers, j)
				evals++
				dj := b.dist(fj)
				record(j, b.down(dj))
				if less(fj, j, fa, a) {
					a, fa, u = j, fj, b.up(dj)
				}
			}
			L := lower[i*t : (i+1)*t]
			for g := range t {
				v := ks.m1[g]
				if ks.i1[g] == a {
					v = ks.m2[g]
				}
				L[g] = lo32(v)
			}
			upper[i] = hi32(u)
			mv, _ := b.settle(st, part, i, a, fa, true)
			moved += mv
		}
		return moved, evals
	})
}

// growGroups sizes the per-group scratch for t groups.
func (ks *scratch) growGroups(t int) {
	ks.m1 = growFloats(ks.m1, t)
	ks.m2 = growFloats(ks.m2, t)
	ks.i1 = growInts(ks.i1, t)
}

func growInts(s []int, n int) []int {
	if cap(s) < n {
		return make([]int, n)
	}
	return s[:n]
}
