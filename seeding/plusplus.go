package seeding

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/centroidlab/centroid/distance"
	"gonum.org/v1/gonum/mat"
)

// PlusPlus is k-means++ seeding (D. Arthur and S. Vassilvitskii, "k-means++:
// the advantages of careful seeding", SODA 2007). The first center is a row
// drawn with probability proportional to its weight. Each further center is
// a row drawn with probability proportional to w·D(x), where D(x) is the
// loss from x to its nearest chosen center: the metric's Loss when it
// implements distance.Objective (the squared distance for Euclidean, the
// distance itself for Manhattan and Cosine), else the squared Distance.
//
// In the greedy variant, each step draws Candidates rows this way and keeps
// the one that leaves the lowest total weighted loss Σ w·D(x) (ties go to
// the earlier draw). Candidates = 1 is classic k-means++.
//
// Duplicates: a row with D(x) = 0 has zero probability, so PlusPlus never
// returns two equal centers. Rows count as distinct when their loss is
// positive, so under Cosine two rows pointing the same way (x and 2x) count
// as one when their computed dissimilarity is exactly 0. If every positive-weight row is at loss 0 from the centers
// chosen so far before k are found, Seed returns an error wrapping ErrK. If
// the weighted losses overflow float64, it returns an error wrapping
// distance.ErrNotFinite.
//
// Cost: n·(1 + (k−1)·L) loss evaluations of d coordinates each, O(n·d·k·L)
// time with L the number of candidates, plus O(n) per step for the running
// sum. Memory: 2n float64 for classic (nearest loss per row and a running
// sum), 3n for the greedy variant; no n×k matrix. Seed allocates its
// scratch once per call.
type PlusPlus struct {
	// Candidates is the number of rows drawn at each step, of which the one
	// giving the lowest total weighted loss is kept. Zero means 2 + ⌊ln k⌋;
	// 1 is classic k-means++; negative values are invalid (ErrParameter).
	Candidates int
}

// candidates returns the number of draws per step for k centers.
func (p PlusPlus) candidates(k int) int {
	if p.Candidates > 0 {
		return p.Candidates
	}
	return 2 + int(math.Log(float64(k)))
}

// Seed implements Seeder.
func (p PlusPlus) Seed(dst *mat.Dense, data *mat.Dense, weights []float64, m distance.Metric, rnd *rand.Rand) error {
	if p.Candidates < 0 {
		return fmt.Errorf("%w: PlusPlus.Candidates = %d, want ≥ 0", ErrParameter, p.Candidates)
	}
	in, err := check(dst, data, weights, m, rnd)
	if err != nil {
		return err
	}
	s := sweep{input: in, loss: lossFunc(in.m)}
	L := p.candidates(in.k)

	cum := make([]float64, in.n)
	near := make([]float64, in.n)
	var best []float64
	if L > 1 {
		best = make([]float64, in.n)
	}
	cands := make([]int, L)
	chosen := make([]int, 1, in.k)

	in.cumWeights(cum)
	chosen[0] = pick(cum, rnd)
	s.update(near, nil, in.row(chosen[0]))
	for len(chosen) < in.k {
		total := s.cumLoss(cum, near)
		if total == 0 {
			return fmt.Errorf("%w: k = %d but data has only %d distinct rows with positive weight under %s", ErrK, in.k, len(chosen), in.m.Name())
		}
		if math.IsNaN(total) || math.IsInf(total, 0) {
			return fmt.Errorf("seeding: %w: the weighted losses overflow float64; rescale the data", distance.ErrNotFinite)
		}
		for c := range cands {
			cands[c] = pick(cum, rnd)
		}
		if L == 1 {
			s.update(near, near, in.row(cands[0]))
			chosen = append(chosen, cands[0])
			continue
		}
		// The running sum is spent: cum becomes the scratch for trials.
		bestIdx, bestPot := -1, 0.0
		for c, i := range cands {
			if repeated(cands[:c], i) {
				continue
			}
			pot := s.update(cum, near, in.row(i))
			if bestIdx < 0 || pot < bestPot {
				bestIdx, bestPot = i, pot
				cum, best = best, cum
			}
		}
		near, best = best, near
		chosen = append(chosen, bestIdx)
	}
	in.writeRows(chosen)
	return nil
}

// repeated reports whether i is in idx.
func repeated(idx []int, i int) bool {
	for _, j := range idx {
		if j == i {
			return true
		}
	}
	return false
}

// sweep evaluates one candidate center against all rows.
type sweep struct {
	*input
	loss func(x, c []float64) float64
}

// update sets dst[i] to the loss from row i to its nearest center once c is
// added, given near[i], the loss to the nearest current center (nil: no
// center yet), and returns the total weighted loss Σ w_i·dst[i]. dst and near
// may be the same slice. Rows of zero weight get 0.
func (s sweep) update(dst, near []float64, c []float64) float64 {
	var pot float64
	for i := range dst {
		w := s.weight(i)
		if w == 0 {
			dst[i] = 0
			continue
		}
		l := s.loss(s.row(i), c)
		if near != nil && near[i] < l {
			l = near[i]
		}
		dst[i] = l
		pot += w * l
	}
	return pot
}

// cumLoss fills cum with the running sum of w_i·near[i] and returns the
// total.
func (s sweep) cumLoss(cum, near []float64) float64 {
	var t float64
	if s.w == nil {
		for i, l := range near {
			t += l
			cum[i] = t
		}
		return t
	}
	for i, l := range near {
		t += s.w[i] * l
		cum[i] = t
	}
	return t
}
