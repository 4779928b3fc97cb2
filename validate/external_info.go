package validate

import (
	"fmt"
	"math"
	"slices"
)

// Norm selects how mutual information is normalised by NMIWith and AMIWith.
// The formulas are those of Vinh, Epps & Bailey 2010 ("Information theoretic
// measures for clusterings comparison", JMLR 11:2837–2854, Table 2), with
// I = I(U, V) the mutual information of the two labellings, H(U), H(V) their
// entropies and H(U, V) their joint entropy, all in nats. The zero value is
// Arithmetic.
type Norm int

const (
	// Arithmetic divides by the arithmetic mean: I / ((H(U) + H(V)) / 2).
	Arithmetic Norm = iota
	// Geometric divides by the geometric mean: I / √(H(U)·H(V)).
	Geometric
	// Max divides by the larger entropy: I / max(H(U), H(V)).
	Max
	// Min divides by the smaller entropy: I / min(H(U), H(V)).
	Min
	// Joint divides by the joint entropy: I / H(U, V). It has no adjusted
	// form (H(U, V) depends on more than the cluster sizes), so AMIWith
	// rejects it.
	Joint
)

// String returns the name of the normalisation.
func (m Norm) String() string {
	switch m {
	case Arithmetic:
		return "arithmetic"
	case Geometric:
		return "geometric"
	case Max:
		return "max"
	case Min:
		return "min"
	case Joint:
		return "joint"
	}
	return fmt.Sprintf("Norm(%d)", int(m))
}

// bound returns the normaliser of m for the statistics s.
func (m Norm) bound(s infoStats) float64 {
	switch m {
	case Geometric:
		return math.Sqrt(s.hu * s.hv)
	case Max:
		return max(s.hu, s.hv)
	case Min:
		return min(s.hu, s.hv)
	case Joint:
		return s.huv
	}
	return (s.hu + s.hv) / 2
}

func (m Norm) check() error {
	if m < Arithmetic || m > Joint {
		return fmt.Errorf("%w: unknown normalisation %v", ErrParameter, m)
	}
	return nil
}

// infoStats holds the information-theoretic statistics of a table, in nats:
// the entropies of the rows (U) and columns (V), their joint entropy, the
// mutual information and the two conditional entropies.
type infoStats struct {
	hu, hv, huv, mi float64
	huGivenV        float64 // H(U|V)
	hvGivenU        float64 // H(V|U)
}

// info computes infoStats with sums of the form Σ n·(log x − log y) / N,
// which give exactly 0 for terms that vanish (n = x = y).
func (t *Table) info() infoStats {
	var s infoStats
	n := float64(t.n)
	logN := math.Log(n)
	for _, a := range t.rowSums {
		s.hu += float64(a) * (logN - math.Log(float64(a)))
	}
	for _, b := range t.colSums {
		s.hv += float64(b) * (logN - math.Log(float64(b)))
	}
	for _, c := range t.cells {
		x := float64(c.Count)
		lx := math.Log(x)
		la := math.Log(float64(t.rowSums[c.Row]))
		lb := math.Log(float64(t.colSums[c.Col]))
		s.huv += x * (logN - lx)
		s.huGivenV += x * (lb - lx)
		s.hvGivenU += x * (la - lx)
		// log(N·nᵢⱼ / (aᵢ·bⱼ)) split so that a cell holding its whole row
		// and column contributes exactly its row's entropy term.
		s.mi += x * ((logN - la) + (lx - lb))
	}
	s.hu /= n
	s.hv /= n
	s.huv /= n
	s.huGivenV /= n
	s.hvGivenU /= n
	s.mi = min(max(s.mi/n, 0), s.hu, s.hv)
	return s
}

// NMI returns the normalised mutual information of two labellings with the
// arithmetic-mean normalisation, I(U, V) / ((H(U) + H(V)) / 2); see NMIWith.
// It is symmetric in its arguments.
func NMI(truth, found []int) (float64, error) {
	return NMIWith(truth, found, Arithmetic)
}

// NMIWith returns the mutual information of two labellings normalised as
// norm says (see Norm), with entropies in nats:
//
//	H(U)    = −Σᵢ (aᵢ/N) log(aᵢ/N)
//	H(U, V) = −Σᵢⱼ (nᵢⱼ/N) log(nᵢⱼ/N)
//	I(U, V) = Σᵢⱼ (nᵢⱼ/N) log(N·nᵢⱼ / (aᵢ·bⱼ))
//
// The result lies in [0, 1] (rounding is clamped) and is exactly 1 for
// identical partitions, including the degenerate case where both labellings
// put every row in one cluster (then I = H = 0). If the normaliser is 0 but
// the partitions differ, then I = 0 as well and the index is 0.
//
// Labels follow the conventions of Contingency; errors wrap ErrEmpty,
// ErrLength, ErrLabel, or ErrParameter for an unknown norm.
func NMIWith(truth, found []int, norm Norm) (float64, error) {
	if err := norm.check(); err != nil {
		return 0, err
	}
	t, err := contingency("truth", "found", truth, found)
	if err != nil {
		return 0, err
	}
	if t.identical() {
		return 1, nil
	}
	s := t.info()
	d := norm.bound(s)
	if d <= 0 {
		return 0, nil
	}
	return min(s.mi/d, 1), nil
}

// amiTolerance is the relative gap between the normaliser and the expected
// mutual information below which AMI is taken as 0: both are sums of up to
// N rounded terms, and a smaller gap is rounding, not information.
const amiTolerance = 1e-9

// AMI returns the adjusted mutual information of two labellings with the
// arithmetic-mean normalisation (Vinh, Epps & Bailey 2010, "Information
// theoretic measures for clusterings comparison", JMLR 11:2837–2854):
//
//	AMI = (I − E[I]) / ((H(U) + H(V))/2 − E[I])
//
// See AMIWith for the expectation, its cost and the conventions. It is
// symmetric in its arguments.
func AMI(truth, found []int) (float64, error) {
	return AMIWith(truth, found, Arithmetic)
}

// AMIWith returns the adjusted mutual information with the normaliser
// chosen by norm (Arithmetic, Geometric, Max or Min; Joint has no adjusted
// form and returns ErrParameter):
//
//	AMI = (I − E[I]) / (bound − E[I])
//
// where bound is the normaliser of NMIWith and E[I] is the expected mutual
// information when the cluster sizes of both labellings are kept and rows
// are matched at random (the hypergeometric model of Vinh et al. 2010):
//
//	E[I] = Σᵢⱼ Σₙ (n/N) log(N·n / (aᵢ·bⱼ)) ·
//	       aᵢ! bⱼ! (N−aᵢ)! (N−bⱼ)! / (N! n! (aᵢ−n)! (bⱼ−n)! (N−aᵢ−bⱼ+n)!)
//
// with n from max(1, aᵢ+bⱼ−N) to min(aᵢ, bⱼ). The sum is exact up to
// rounding: the factorial ratio (a hypergeometric probability) is not taken
// as exp of math.Lgamma differences, whose terms near N·log N lose about
// N·log N ulps (a relative error of 3e-11 was seen at N = 20000), but
// built by its ratio recurrence outward from the mode and normalised over
// its support (relative error about 1e-16 in the same case). Because a term
// depends only on the sizes (aᵢ, bⱼ), pairs of clusters with equal sizes
// are summed once; the cost is O(N) for a table of logarithms plus
// O(R'·C'·min(aᵢ, bⱼ)) for R' and C' distinct cluster sizes, at worst
// O(R·C·N).
//
// AMI is 0 in expectation for random labellings with fixed cluster sizes,
// can be negative, and is exactly 1 for identical partitions (including the
// degenerate cases where both labellings put all rows in one cluster or
// every row in its own cluster, where bound = E[I]). If bound exceeds E[I]
// by less than a relative 1e-9 but the partitions differ (for example one
// labelling is a single cluster), I cannot exceed chance and AMI is 0.
//
// Labels follow the conventions of Contingency; errors wrap ErrEmpty,
// ErrLength, ErrLabel or ErrParameter.
func AMIWith(truth, found []int, norm Norm) (float64, error) {
	if err := norm.check(); err != nil {
		return 0, err
	}
	if norm == Joint {
		return 0, fmt.Errorf("%w: AMI has no %v normalisation", ErrParameter, norm)
	}
	t, err := contingency("truth", "found", truth, found)
	if err != nil {
		return 0, err
	}
	if t.identical() {
		return 1, nil
	}
	s := t.info()
	e := t.expectedMI()
	d := norm.bound(s)
	if d-e <= amiTolerance*d {
		return 0, nil
	}
	return min((s.mi-e)/(d-e), 1), nil
}

// sizeCount is a cluster size and how many clusters have it.
type sizeCount struct{ size, count int }

// sizeCounts returns the distinct values of sums in ascending order with
// their multiplicities.
func sizeCounts(sums []int) []sizeCount {
	sorted := slices.Sorted(slices.Values(sums))
	var out []sizeCount
	for _, s := range sorted {
		if len(out) > 0 && out[len(out)-1].size == s {
			out[len(out)-1].count++
			continue
		}
		out = append(out, sizeCount{size: s, count: 1})
	}
	return out
}

// expectedMI returns E[I] under the hypergeometric model (see AMIWith).
func (t *Table) expectedMI() float64 {
	n := t.n
	logs := make([]float64, n+1) // logs[k] = log k
	for k := 1; k <= n; k++ {
		logs[k] = math.Log(float64(k))
	}
	rows, cols := sizeCounts(t.rowSums), sizeCounts(t.colSums)
	var e float64
	for _, r := range rows {
		for _, c := range cols {
			e += float64(r.count) * float64(c.count) * overlapTerm(n, r.size, c.size, logs)
		}
	}
	return e / float64(n)
}

// overlapTerm returns Σₖ P(k)·k·log(N·k/(a·b)) for the hypergeometric
// overlap k of a cluster of a rows and one of b rows among n. The pmf is
// built by its ratio recurrence
//
//	P(k+1)/P(k) = (a−k)(b−k) / ((k+1)(n−a−b+k+1))
//
// outward from the mode (weight 1 there, so nothing overflows) and divided
// by the sum of the weights over the whole support max(0, a+b−n)..min(a, b).
// Every weight carries a few ulps of rounding per step from the mode.
func overlapTerm(n, a, b int, logs []float64) float64 {
	lo, hi := max(0, a+b-n), min(a, b)
	m := int(math.Floor(float64(a+1) * float64(b+1) / float64(n+2)))
	m = min(max(m, lo), hi)
	var sumW, sumT float64
	add := func(k int, w float64) {
		sumW += w
		if k > 0 {
			// log(N·k/(a·b)) grouped so that a = N, k = b gives exactly 0.
			sumT += w * float64(k) * ((logs[n] - logs[a]) + (logs[k] - logs[b]))
		}
	}
	w := 1.0
	for k := m; k <= hi && w > 0; k++ {
		add(k, w)
		w *= float64(a-k) * float64(b-k) / (float64(k+1) * float64(n-a-b+k+1))
	}
	w = 1.0
	for k := m; k > lo && w > 0; k-- {
		w *= float64(k) * float64(n-a-b+k) / (float64(a-k+1) * float64(b-k+1))
		add(k-1, w)
	}
	return sumT / sumW
}

// VMeasure returns the V-measure (β = 1) of a found labelling against a
// truth labelling (Rosenberg & Hirschberg 2007, "V-Measure: a conditional
// entropy-based external cluster evaluation measure", EMNLP-CoNLL), the
// harmonic mean of homogeneity and completeness; see VMeasureParts. With
// β = 1 it is symmetric in its arguments and equals NMI with the arithmetic
// normalisation.
func VMeasure(truth, found []int) (float64, error) {
	_, _, v, err := VMeasureParts(truth, found)
	return v, err
}

// VMeasureParts returns homogeneity, completeness and the V-measure (β = 1)
// of a found labelling K against truth classes C (Rosenberg & Hirschberg
// 2007), with entropies in nats:
//
//	homogeneity  h = 1 − H(C|K) / H(C)   (1 if H(C) = 0)
//	completeness c = 1 − H(K|C) / H(K)   (1 if H(K) = 0)
//	v = 2·h·c / (h + c)                  (0 if h + c = 0)
//	H(C|K) = −Σᵢⱼ (nᵢⱼ/N) log(nᵢⱼ / bⱼ),  H(K|C) = −Σᵢⱼ (nᵢⱼ/N) log(nᵢⱼ / aᵢ)
//
// with i over classes and j over clusters. Homogeneity is 1 when every
// cluster holds a single class, completeness when every class lies in a
// single cluster; swapping the arguments swaps them. All three lie in
// [0, 1] (rounding is clamped) and are 1 for identical partitions.
//
// Labels follow the conventions of Contingency; errors wrap ErrEmpty,
// ErrLength or ErrLabel.
func VMeasureParts(truth, found []int) (homogeneity, completeness, v float64, err error) {
	t, err := contingency("truth", "found", truth, found)
	if err != nil {
		return 0, 0, 0, err
	}
	s := t.info()
	homogeneity, completeness = 1, 1
	if s.hu > 0 {
		homogeneity = min(max(1-s.huGivenV/s.hu, 0), 1)
	}
	if s.hv > 0 {
		completeness = min(max(1-s.hvGivenU/s.hv, 0), 1)
	}
	if homogeneity+completeness > 0 {
		v = min(2*homogeneity*completeness/(homogeneity+completeness), 1)
	}
	return homogeneity, completeness, v, nil
}
