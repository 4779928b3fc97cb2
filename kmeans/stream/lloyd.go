package stream

import (
	"cmp"
	"math"
	"slices"

	"github.com/centroidlab/centroid/internal/blocks"
	"github.com/centroidlab/centroid/kmeans"
)

// fingerprint is a 128-bit running hash of a sequence of assignments, so
// that a pass can tell whether any row changed cluster without keeping one
// label per row: two different sequences share a fingerprint with
// probability about 2⁻¹²⁸.
type fingerprint [2]uint64

func (f *fingerprint) add(a int) {
	f[0] = mix64(f[0] ^ uint64(a))
	f[1] = mix64(f[1]+0x632be59bd9b4e019) ^ uint64(a)*0x9e3779b97f4a7c15
}

// lloyd runs exact Lloyd passes from centers (k×d, clustering space),
// exactly as kmeans.Cluster's driver does with kmeans.Lloyd: a pass
// assigns every row and accumulates per fixed block (internal/blocks, the
// split of the known number of rows), the blocks merge in block order, the
// status is checked (a pass that moved no row, the tolerance, maxPasses,
// ctx) and only then are the centers updated, empty clusters repaired. It
// returns the centers the last pass used; the last pass is the scoring
// pass, whose statistics feed the Result and the training summary.
func (j *job) lloyd(centers []float64, maxPasses int) ([]float64, error) {
	if j.rd.n < 0 {
		if err := j.count(); err != nil {
			return nil, err
		}
	}
	k, d := j.k, j.d
	split := blocks.Of(int(j.rd.n))
	parts := make([]kmeans.Partial, split.Count())
	for b := range parts {
		parts[b] = *kmeans.NewPartial(k, d)
	}
	merged := kmeans.NewPartial(k, d)
	next := make([]float64, k*d)
	samples := newDistSample(k, max(64, j.set.SampleRows/k), mix64(j.set.Seed^0x71756e74))
	var prev, cur fingerprint
	var prevCost float64
	status := kmeans.NotTerminated
	j.cost = math.NaN()
	for it := 1; ; it++ {
		j.asg.set(centers, k)
		for b := range parts {
			parts[b].Reset()
		}
		samples.reset()
		cur = fingerprint{}
		hook := j.begin(StageLloyd)
		b := 0
		err := j.rd.pass(j.ctx, func(x []float64, m int, at int64) error {
			z, err := j.prepare(x, m, at)
			if err != nil {
				return err
			}
			j.search(z, m)
			for t := range m {
				i := int(at) + t
				for i >= split[b+1] {
					b++
				}
				a, l := j.near[t], j.loss[t]
				j.add(&parts[b], a, z[t*d:(t+1)*d], t, l)
				cur.add(a)
				samples.add(a, int64(i), j.distance(l))
			}
			hook(at+int64(m), false)
			return nil
		})
		if err != nil {
			return nil, err
		}
		merged.Reset()
		for b := range parts {
			merged.Merge(&parts[b])
		}
		cost := merged.TotalCost()
		j.cost = cost
		hook(j.rd.n, true)
		j.res.Iterations = it
		switch {
		case it > 1 && cur == prev:
			status = kmeans.Converged
		case j.set.Tolerance > 0 && it > 1 && prevCost-cost <= j.set.Tolerance*cost:
			status = kmeans.CostTolerance
		case it >= maxPasses:
			status = kmeans.IterationLimit
		}
		if status != kmeans.NotTerminated {
			break
		}
		prev, prevCost = cur, cost
		empty, err := merged.Centers(next, j.metric.Rule())
		if err != nil {
			return nil, err
		}
		if len(empty) > 0 {
			if err := j.repair(next, centers, empty); err != nil {
				return nil, err
			}
		}
		copy(centers, next)
	}
	j.res.Status = status
	j.res.Cost = merged.TotalCost()
	j.res.Exact = true
	j.res.Rows = j.rd.n
	j.res.Sizes = slices.Clone(merged.Count)
	j.training = summarise(merged, samples, j.rd.n)
	return centers, nil
}

// add adds row t of the block (z, its scaled values) to p as cluster a
// with the given loss, with the arithmetic of kmeans.Space.Add for unit
// weights: Sum += s·x with s = 1, or s = 1/‖x‖ under Cosine.
func (j *job) add(p *kmeans.Partial, a int, z []float64, t int, loss float64) {
	s := 1.0
	if j.cosine {
		s = 1 * j.inv[t]
	}
	sum := p.Sum[a*j.d : (a+1)*j.d]
	for c, v := range z {
		sum[c] += s * v
	}
	p.Weight[a]++
	p.Count[a]++
	p.Cost[a] += 1 * loss
}

// count reads the source once to learn its number of rows, which fixes
// the block split.
func (j *job) count() error {
	hook := j.begin(StageCount)
	err := j.rd.pass(j.ctx, func(_ []float64, m int, at int64) error {
		hook(at+int64(m), false)
		return nil
	})
	if err == nil {
		hook(j.rd.n, true)
	}
	return err
}

// repair gives each empty cluster a new center exactly as kmeans.Cluster
// does: the rows contributing most to the cost (w·loss to their center in
// the pass just made, ties to the lowest row), in decreasing order,
// skipping rows equal to one already taken. Those rows are found in one
// more pass that repeats the assignment (same centers, same answers) and
// keeps the len(empty) best distinct rows.
func (j *job) repair(next, centers []float64, empty []int) error {
	d := j.d
	top := newTopRows(len(empty), d)
	hook := j.begin(StageRepair)
	err := j.rd.pass(j.ctx, func(x []float64, m int, at int64) error {
		z, err := j.prepare(x, m, at)
		if err != nil {
			return err
		}
		j.search(z, m)
		for t := range m {
			if c := 1 * j.loss[t]; c > 0 {
				top.offer(at+int64(t), c, z[t*d:(t+1)*d], j.unit(t))
			}
		}
		hook(at+int64(m), false)
		return nil
	})
	if err != nil {
		return err
	}
	hook(j.rd.n, true)
	best := top.sorted()
	for r, e := range empty {
		row := next[e*d : (e+1)*d]
		if r >= len(best) {
			copy(row, centers[e*d:(e+1)*d]) // unreachable while K ≤ distinct rows
			continue
		}
		copy(row, best[r].x)
		if j.cosine {
			for c := range row {
				row[c] *= best[r].inv
			}
		}
		j.res.EmptyRepairs++
	}
	return nil
}

// unit returns 1/‖z_t‖ under Cosine, else 1.
func (j *job) unit(t int) float64 {
	if j.cosine {
		return j.inv[t]
	}
	return 1
}

// topRows keeps the m rows of largest contribution with distinct values:
// for each value the largest contribution (lowest row on ties).
type topRows struct {
	m, d int
	e    []topRow
}

type topRow struct {
	i   int64
	c   float64
	x   []float64
	inv float64
}

func newTopRows(m, d int) *topRows { return &topRows{m: m, d: d} }

// better orders entries by contribution, then row.
func better(a, b topRow) int {
	if c := cmp.Compare(b.c, a.c); c != 0 {
		return c
	}
	return cmp.Compare(a.i, b.i)
}

func (t *topRows) offer(i int64, c float64, x []float64, inv float64) {
	cand := topRow{i: i, c: c}
	if len(t.e) == t.m && better(cand, t.e[len(t.e)-1]) >= 0 {
		return
	}
	for q := range t.e {
		if slices.Equal(t.e[q].x, x) {
			if better(cand, t.e[q]) < 0 {
				t.e[q].i, t.e[q].c, t.e[q].inv = i, c, inv
				slices.SortFunc(t.e, better)
			}
			return
		}
	}
	cand.x, cand.inv = slices.Clone(x), inv
	t.e = append(t.e, cand)
	slices.SortFunc(t.e, better)
	if len(t.e) > t.m {
		t.e = t.e[:t.m]
	}
}

func (t *topRows) sorted() []topRow { return t.e }

// quantileLevels are the levels of kmeans.Quantiles, in percent.
var quantileLevels = [...]float64{50, 90, 99}

// summarise builds the training summary from the last pass: sizes,
// weights and costs exactly, the distance quantiles from the per-cluster
// samples (exact when a cluster has no more members than its sample holds)
// with the rule of kmeans.Quantiles, the maxima exactly.
func summarise(p *kmeans.Partial, s *distSample, rows int64) *kmeans.Training {
	t := &kmeans.Training{Rows: int(rows), Clusters: make([]kmeans.ClusterSummary, p.K)}
	for j := range p.K {
		c := &t.Clusters[j]
		c.Size, c.Weight, c.Cost = int(p.Count[j]), p.Weight[j], p.Cost[j]
		h := s.h[j]
		if len(h) == 0 {
			continue
		}
		dist := make([]float64, len(h))
		for q, e := range h {
			dist[q] = e.value
		}
		slices.Sort(dist)
		total := float64(len(dist))
		var q [len(quantileLevels)]float64
		level, cum := 0, 0.0
		for _, v := range dist {
			cum++
			for level < len(q) && cum >= total*quantileLevels[level]/100 {
				q[level] = v
				level++
			}
		}
		for ; level < len(q); level++ {
			q[level] = dist[len(dist)-1]
		}
		c.Distances = kmeans.Quantiles{P50: q[0], P90: q[1], P99: q[2], Max: s.max[j]}
	}
	return t
}
