package validate

import (
	"math"
	"math/big"
)

// pairCounts holds the pair counts of a contingency table: of the N(N-1)/2
// unordered pairs of rows, both are together in a and in b, inA are together
// in a, inB are together in b, and all counts every pair.
type pairCounts struct {
	both, inA, inB, all int64
}

// choose2 returns n(n-1)/2 as an int64 (exact for n < 3·10⁹).
func choose2(n int) int64 {
	m := int64(n)
	return m * (m - 1) / 2
}

func (t *Table) pairs() pairCounts {
	p := pairCounts{all: choose2(t.n)}
	for _, c := range t.cells {
		p.both += choose2(c.Count)
	}
	for _, s := range t.rowSums {
		p.inA += choose2(s)
	}
	for _, s := range t.colSums {
		p.inB += choose2(s)
	}
	return p
}

// AdjustedRand returns the adjusted Rand index of two labellings (Hubert &
// Arabie 1985, "Comparing partitions", J. Classification 2:193–218):
//
//	ARI = (Index − Expected) / (Max − Expected)
//	Index    = Σᵢⱼ C(nᵢⱼ, 2)           pairs together in a and in b
//	Expected = Σᵢ C(aᵢ, 2) Σⱼ C(bⱼ, 2) / C(N, 2)
//	Max      = (Σᵢ C(aᵢ, 2) + Σⱼ C(bⱼ, 2)) / 2
//
// where nᵢⱼ are the contingency counts and aᵢ, bⱼ its row and column sums.
// The index is 1 for identical partitions, 0 in expectation when b is a
// random permutation of a labelling with the same cluster sizes, and can be
// negative. It is symmetric in a and b.
//
// The pair counts are exact int64 values and the ratio is formed with exact
// big-integer arithmetic, so the result is the correctly rounded value of
// the rational index. Max equals Expected only when both labellings put all
// rows in one cluster, both put every row in its own cluster, or N = 1; the
// partitions are then identical and the index is 1 by convention.
//
// Labels follow the conventions of Contingency; errors wrap ErrEmpty,
// ErrLength or ErrLabel.
func AdjustedRand(a, b []int) (float64, error) {
	t, err := contingency("a", "b", a, b)
	if err != nil {
		return 0, err
	}
	p := t.pairs()
	// Multiplying numerator and denominator by C(N,2):
	// ARI = 2(Index·C(N,2) − SA·SB) / (C(N,2)(SA+SB) − 2·SA·SB).
	sa, sb, all := big.NewInt(p.inA), big.NewInt(p.inB), big.NewInt(p.all)
	prod := new(big.Int).Mul(sa, sb)
	num := new(big.Int).Mul(big.NewInt(p.both), all)
	num.Sub(num, prod).Lsh(num, 1)
	den := new(big.Int).Add(sa, sb)
	den.Mul(den, all).Sub(den, prod.Lsh(prod, 1))
	if den.Sign() == 0 {
		return 1, nil
	}
	ari, _ := new(big.Rat).SetFrac(num, den).Float64()
	return ari, nil
}

// FowlkesMallows returns the Fowlkes–Mallows index of two labellings
// (Fowlkes & Mallows 1983, "A method for comparing two hierarchical
// clusterings", JASA 78:553–569), the geometric mean of pair precision and
// recall:
//
//	FM = TP / √((TP+FP)(TP+FN))
//
// where TP counts pairs of rows together in both labellings, TP+FN pairs
// together in truth and TP+FP pairs together in found. It lies in [0, 1], is
// 1 for identical partitions and is symmetric in its arguments. When a
// labelling puts every row in its own cluster it has no pairs and the ratio
// is 0/0: the index is then 1 if the other labelling does so too (identical
// partitions) and 0 otherwise.
//
// Labels follow the conventions of Contingency; errors wrap ErrEmpty,
// ErrLength or ErrLabel.
func FowlkesMallows(truth, found []int) (float64, error) {
	t, err := contingency("truth", "found", truth, found)
	if err != nil {
		return 0, err
	}
	if t.identical() {
		return 1, nil
	}
	p := t.pairs()
	if p.inA == 0 || p.inB == 0 {
		return 0, nil
	}
	return min(1, float64(p.both)/math.Sqrt(float64(p.inA)*float64(p.inB))), nil
}

// Purity returns the share of rows that belong to the majority truth class
// of their found cluster:
//
//	Purity = (1/N) Σⱼ maxᵢ nᵢⱼ
//
// with i over truth classes and j over found clusters. It lies in (0, 1] and
// is 1 when every found cluster holds a single class; it is not symmetric
// and rewards many small clusters (every row in its own cluster scores 1).
//
// Labels follow the conventions of Contingency; errors wrap ErrEmpty,
// ErrLength or ErrLabel.
func Purity(truth, found []int) (float64, error) {
	t, err := contingency("truth", "found", truth, found)
	if err != nil {
		return 0, err
	}
	best := make([]int, len(t.colLabels))
	for _, c := range t.cells {
		best[c.Col] = max(best[c.Col], c.Count)
	}
	sum := 0
	for _, m := range best {
		sum += m
	}
	return float64(sum) / float64(t.n), nil
}
