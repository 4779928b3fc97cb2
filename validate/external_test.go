package validate

import (
	"fmt"
	"math"
	"math/big"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/reference"
)

// labelIndex is one external index seen as a function of two labellings.
type labelIndex struct {
	name      string
	fn        func(a, b []int) (float64, error)
	symmetric bool
}

var allNorms = []Norm{Arithmetic, Geometric, Max, Min, Joint}

// labelIndices lists every index of this file's API that takes two
// labellings, including the parts of VMeasureParts and every Norm.
func labelIndices() []labelIndex {
	out := []labelIndex{
		{"AdjustedRand", AdjustedRand, true},
		{"NMI", NMI, true},
		{"AMI", AMI, true},
		{"VMeasure", VMeasure, true},
		{"FowlkesMallows", FowlkesMallows, true},
		{"Purity", Purity, false},
		{"Homogeneity", func(a, b []int) (float64, error) { h, _, _, err := VMeasureParts(a, b); return h, err }, false},
		{"Completeness", func(a, b []int) (float64, error) { _, c, _, err := VMeasureParts(a, b); return c, err }, false},
		{"MeanClusterJaccard", func(a, b []int) (float64, error) {
			_, best, err := ClusterJaccard(a, b, nil)
			var s float64
			for _, v := range best {
				s += v
			}
			return s / float64(max(len(best), 1)), err
		}, false},
	}
	for _, m := range allNorms {
		out = append(out, labelIndex{"NMIWith/" + m.String(), func(a, b []int) (float64, error) { return NMIWith(a, b, m) }, true})
		if m != Joint {
			out = append(out, labelIndex{"AMIWith/" + m.String(), func(a, b []int) (float64, error) { return AMIWith(a, b, m) }, true})
		}
	}
	return out
}

// randomLabels draws n labels uniformly from k distinct non-negative values
// that are spread out (not 0..k-1).
func randomLabels(rng *rand.Rand, n, k int) []int {
	values := make([]int, k)
	for i := range values {
		values[i] = 3*i + rng.IntN(3)
	}
	out := make([]int, n)
	for i := range out {
		out[i] = values[rng.IntN(k)]
	}
	return out
}

// randomPair draws two labellings of the same random length in [minN, maxN],
// each with a random number of clusters in [minK, maxK].
func randomPair(rng *rand.Rand, minN, maxN, minK, maxK int) (a, b []int) {
	n := minN + rng.IntN(maxN-minN+1)
	a = randomLabels(rng, n, minK+rng.IntN(maxK-minK+1))
	return a, randomLabels(rng, n, minK+rng.IntN(maxK-minK+1))
}

// rename maps every distinct label to a different random non-negative value.
func rename(rng *rand.Rand, labels []int) []int {
	to := map[int]int{}
	used := map[int]bool{}
	out := make([]int, len(labels))
	for i, v := range labels {
		w, ok := to[v]
		for !ok {
			w = rng.IntN(1 << 40)
			if !used[w] {
				used[w], to[v], ok = true, w, true
			}
		}
		out[i] = w
	}
	return out
}

// directEntropies computes H(U), H(V) and H(U,V) in nats straight from the
// definition −Σ p log p over label frequencies, without the Table.
func directEntropies(u, v []int) (hu, hv, huv float64) {
	cu, cv, cuv := map[int]int{}, map[int]int{}, map[[2]int]int{}
	for i := range u {
		cu[u[i]]++
		cv[v[i]]++
		cuv[[2]int{u[i], v[i]}]++
	}
	n := float64(len(u))
	h := func(count int) float64 { p := float64(count) / n; return -p * math.Log(p) }
	for _, c := range cu {
		hu += h(c)
	}
	for _, c := range cv {
		hv += h(c)
	}
	for _, c := range cuv {
		huv += h(c)
	}
	return hu, hv, huv
}

func TestExternalBadInput(t *testing.T) {
	cases := []struct {
		name string
		a, b []int
		want error
	}{
		{"both nil", nil, nil, ErrEmpty},
		{"first empty", []int{}, []int{1}, ErrEmpty},
		{"second empty", []int{1}, []int{}, ErrEmpty},
		{"length", []int{0, 1}, []int{0}, ErrLength},
		{"negative first", []int{0, -1}, []int{0, 0}, ErrLabel},
		{"negative second", []int{0, 0}, []int{0, -3}, ErrLabel},
		{"min int", []int{math.MinInt, 0}, []int{0, 0}, ErrLabel},
	}
	for _, ix := range labelIndices() {
		for _, c := range cases {
			t.Run(ix.name+"/"+c.name, func(t *testing.T) {
				_, err := ix.fn(c.a, c.b)
				require.ErrorIs(t, err, c.want)
			})
		}
	}
	for _, m := range []Norm{-1, Joint + 1} {
		_, err := NMIWith([]int{0, 1}, []int{0, 1}, m)
		require.ErrorIs(t, err, ErrParameter, m.String())
		_, err = AMIWith([]int{0, 1}, []int{0, 1}, m)
		require.ErrorIs(t, err, ErrParameter, m.String())
	}
	_, err := AMIWith([]int{0, 1}, []int{0, 1}, Joint)
	require.ErrorIs(t, err, ErrParameter)
}

func TestExternalInputsUnchanged(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	a, b := randomLabels(rng, 60, 4), randomLabels(rng, 60, 5)
	a0, b0 := slices.Clone(a), slices.Clone(b)
	for _, ix := range labelIndices() {
		_, err := ix.fn(a, b)
		require.NoError(t, err, ix.name)
		require.Equal(t, a0, a, ix.name)
		require.Equal(t, b0, b, ix.name)
	}
}

func TestNormString(t *testing.T) {
	want := []string{"arithmetic", "geometric", "max", "min", "joint"}
	for i, m := range allNorms {
		assert.Equal(t, want[i], m.String())
	}
	assert.Equal(t, "Norm(9)", Norm(9).String())
}

// The 2×3 example a = 000111, b = 001122 worked by hand:
//
//	      b=0 b=1 b=2 | sum
//	a=0    2   1   0  |  3
//	a=1    0   1   2  |  3
//	sum    2   2   2  |  6
func TestContingencyWorkedExample(t *testing.T) {
	tab, err := Contingency([]int{0, 0, 0, 1, 1, 1}, []int{0, 0, 1, 1, 2, 2})
	require.NoError(t, err)
	r, c := tab.Dims()
	require.Equal(t, 2, r)
	require.Equal(t, 3, c)
	want := [][]int{{2, 1, 0}, {0, 1, 2}}
	for i := range r {
		for j := range c {
			assert.Equal(t, want[i][j], tab.At(i, j), "cell %d,%d", i, j)
		}
		assert.Equal(t, 3, tab.RowSum(i))
		assert.Equal(t, i, tab.RowLabel(i))
	}
	for j := range c {
		assert.Equal(t, 2, tab.ColSum(j))
		assert.Equal(t, j, tab.ColLabel(j))
	}
	assert.Equal(t, 6, tab.Total())
	assert.Equal(t, []Cell{{0, 0, 2}, {0, 1, 1}, {1, 1, 1}, {1, 2, 2}}, tab.Cells())
	assert.Equal(t, ""+
		"a\\b  0  1  2  sum\n"+
		"  0  2  1  .    3\n"+
		"  1  .  1  2    3\n"+
		"sum  2  2  2    6\n", tab.String())
	assert.Panics(t, func() { tab.At(2, 0) })
	assert.Panics(t, func() { tab.At(0, -1) })
}

// Sparse, huge label values take the sorting path of labelCodes and must give
// the same table (rows and columns in ascending label order).
func TestContingencySparseLabels(t *testing.T) {
	a := []int{math.MaxInt, 5, 5, 0, math.MaxInt}
	b := []int{1 << 50, 7, 1 << 50, 7, 7}
	tab, err := Contingency(a, b)
	require.NoError(t, err)
	r, c := tab.Dims()
	require.Equal(t, []int{0, 5, math.MaxInt}, []int{tab.RowLabel(0), tab.RowLabel(1), tab.RowLabel(2)})
	require.Equal(t, []int{7, 1 << 50}, []int{tab.ColLabel(0), tab.ColLabel(1)})
	// Counted by hand from the rows: (MaxInt,2^50) (5,7) (5,2^50) (0,7) (MaxInt,7).
	want := [][]int{{1, 0}, {1, 1}, {1, 1}}
	for i := range r {
		for j := range c {
			assert.Equal(t, want[i][j], tab.At(i, j), "cell %d,%d", i, j)
		}
	}
	dense, err := AdjustedRand([]int{2, 1, 1, 0, 2}, []int{1, 0, 1, 0, 0})
	require.NoError(t, err)
	sparse, err := AdjustedRand(a, b)
	require.NoError(t, err)
	assert.Equal(t, dense, sparse)
}

// Every index of the 2×3 example above, worked by hand.
func TestExternalWorkedExample(t *testing.T) {
	a := []int{0, 0, 0, 1, 1, 1}
	b := []int{0, 0, 1, 1, 2, 2}
	ln2, ln3, ln6 := math.Log(2), math.Log(3), math.Log(6)
	// Pairs: Index = C(2,2)+C(1,2)+C(1,2)+C(2,2) = 2; Σ C(aᵢ,2) = 3+3 = 6;
	// Σ C(bⱼ,2) = 1+1+1 = 3; C(6,2) = 15. Hubert & Arabie 1985:
	// Expected = 6·3/15 = 1.2, Max = (6+3)/2 = 4.5,
	// ARI = (2 − 1.2)/(4.5 − 1.2) = 0.8/3.3 = 8/33.
	// Fowlkes & Mallows 1983: FM = 2/√(6·3) = √2/3.
	// Purity(a, b): column maxima 2, 1, 2 → 5/6; Purity(b, a): 2, 2 → 4/6.
	// Entropies: H(a) = ln 2, H(b) = ln 3,
	// H(a,b) = −2·(2/6)ln(2/6) − 2·(1/6)ln(1/6) = (2/3)ln 3 + (1/3)ln 6,
	// I = (2/6)ln(6·2/(3·2)) + 0 + 0 + (2/6)ln(6·2/(3·2)) = (2/3)ln 2.
	// E[I] (Vinh et al. 2010): every (aᵢ,bⱼ) = (3,2), n ∈ {1,2} with
	// P(n) = C(3,n)C(3,2−n)/C(6,2): P(1) = 9/15, P(2) = 3/15; term
	// (n/6)ln(6n/6): 0 for n = 1, (1/3)ln 2 for n = 2; six pairs:
	// E[I] = 6·(3/15)·(1/3)ln 2 = (2/5)ln 2.
	mi := 2 * ln2 / 3
	emi := 2 * ln2 / 5
	h, c := mi/ln2, mi/ln3 // Rosenberg & Hirschberg 2007: h = 1 − H(C|K)/H(C) = I/H(C)
	cases := []struct {
		name string
		fn   func() (float64, error)
		want float64
	}{
		{"ARI", func() (float64, error) { return AdjustedRand(a, b) }, 8.0 / 33},
		{"FM", func() (float64, error) { return FowlkesMallows(a, b) }, math.Sqrt2 / 3},
		{"Purity(a,b)", func() (float64, error) { return Purity(a, b) }, 5.0 / 6},
		{"Purity(b,a)", func() (float64, error) { return Purity(b, a) }, 4.0 / 6},
		{"NMI", func() (float64, error) { return NMI(a, b) }, mi / ((ln2 + ln3) / 2)},
		{"NMI geometric", func() (float64, error) { return NMIWith(a, b, Geometric) }, mi / math.Sqrt(ln2*ln3)},
		{"NMI max", func() (float64, error) { return NMIWith(a, b, Max) }, mi / ln3},
		{"NMI min", func() (float64, error) { return NMIWith(a, b, Min) }, 2.0 / 3},
		{"NMI joint", func() (float64, error) { return NMIWith(a, b, Joint) }, mi / (2*ln3/3 + ln6/3)},
		{"AMI", func() (float64, error) { return AMI(a, b) }, (mi - emi) / ((ln2+ln3)/2 - emi)},
		{"AMI max", func() (float64, error) { return AMIWith(a, b, Max) }, (mi - emi) / (ln3 - emi)},
		{"AMI min", func() (float64, error) { return AMIWith(a, b, Min) }, (mi - emi) / (ln2 - emi)},
		{"AMI geometric", func() (float64, error) { return AMIWith(a, b, Geometric) }, (mi - emi) / (math.Sqrt(ln2*ln3) - emi)},
		{"VMeasure", func() (float64, error) { return VMeasure(a, b) }, 2 * h * c / (h + c)},
	}
	for _, tc := range cases {
		got, err := tc.fn()
		require.NoError(t, err, tc.name)
		assert.InDelta(t, tc.want, got, 1e-14, tc.name)
	}
	hh, cc, v, err := VMeasureParts(a, b)
	require.NoError(t, err)
	assert.InDelta(t, h, hh, 1e-14)
	assert.InDelta(t, c, cc, 1e-14)
	assert.InDelta(t, 2*h*c/(h+c), v, 1e-14)
}

// Published ground truth: Fisher's iris species (PROVENANCE.md: rows 1–50
// setosa, 51–100 versicolor, 101–150 virginica, labels 0, 1, 2). The found
// labelling renames the species (setosa→2, versicolor→0, virginica→1) and
// swaps some rows: the first 10 versicolor rows go to 1, the first 5
// virginica rows go to 0. Contingency worked by hand (truth rows, found
// columns):
//
//	            f=0  f=1  f=2 | sum
//	setosa        0    0   50 |  50
//	versicolor   40   10    0 |  50
//	virginica     5   45    0 |  50
//	sum          45   55   50 | 150
func TestIrisSpeciesSwapped(t *testing.T) {
	set := reference.LoadOrSkip(t, "iris")
	truth := set.Labels
	require.Len(t, truth, 150)
	found := make([]int, len(truth))
	for i, s := range truth {
		require.Equal(t, i/50, s, "iris species order (PROVENANCE.md)")
		found[i] = [3]int{2, 0, 1}[s]
		switch {
		case i >= 50 && i < 60:
			found[i] = 1
		case i >= 100 && i < 105:
			found[i] = 0
		}
	}
	truth0 := slices.Clone(truth)

	// Pairs: Index = C(50,2)+C(40,2)+C(10,2)+C(5,2)+C(45,2)
	// = 1225+780+45+10+990 = 3050; SA = 3·1225 = 3675;
	// SB = C(45,2)+C(55,2)+C(50,2) = 990+1485+1225 = 3700; C(150,2) = 11175.
	// ARI = 2(3050·11175 − 3675·3700)/(11175·7375 − 2·3675·3700)
	// = 40972500/55220625 = 7284/9817 (Hubert & Arabie 1985 formula).
	ari, err := AdjustedRand(truth, found)
	require.NoError(t, err)
	assert.Equal(t, 7284.0/9817, ari)
	fm, err := FowlkesMallows(truth, found)
	require.NoError(t, err)
	assert.InDelta(t, 3050/math.Sqrt(3675*3700), fm, 1e-15) // Fowlkes & Mallows 1983
	pur, err := Purity(truth, found)
	require.NoError(t, err)
	assert.Equal(t, 135.0/150, pur) // column maxima 40 + 45 + 50

	// Entropies by hand: H(truth) = ln 3; H(found) over sizes 45, 55, 50;
	// I = Σ (nᵢⱼ/150) ln(150·nᵢⱼ/(aᵢbⱼ)) over the five non-zero cells.
	hu := math.Log(3)
	hv := -(0.3*math.Log(0.3) + (55.0/150)*math.Log(55.0/150) + (50.0/150)*math.Log(50.0/150))
	mi := (50.0/150)*math.Log(3) + (40.0/150)*math.Log(8.0/3) + (10.0/150)*math.Log(6.0/11) +
		(5.0/150)*math.Log(1.0/3) + (45.0/150)*math.Log(27.0/11)
	_, _, huv := directEntropies(truth, found)
	require.InDelta(t, hu+hv-huv, mi, 1e-14, "hand MI vs H(U)+H(V)−H(U,V)")
	nmi, err := NMI(truth, found)
	require.NoError(t, err)
	assert.InDelta(t, 2*mi/(hu+hv), nmi, 1e-14)
	h, c, v, err := VMeasureParts(truth, found)
	require.NoError(t, err)
	assert.InDelta(t, mi/hu, h, 1e-14) // Rosenberg & Hirschberg 2007: h = I/H(C)
	assert.InDelta(t, mi/hv, c, 1e-14)
	assert.InDelta(t, nmi, v, 1e-14) // V (β = 1) = 2I/(H(C)+H(K))
	ami, err := AMI(truth, found)
	require.NoError(t, err)
	emi := ratEMI(truth, found)
	assert.InDelta(t, (mi-emi)/((hu+hv)/2-emi), ami, 1e-12) // Vinh et al. 2010

	// Renaming alone gives identical partitions.
	renamed := make([]int, len(truth))
	for i, s := range truth {
		renamed[i] = [3]int{2, 0, 1}[s]
	}
	for _, ix := range labelIndices() {
		got, err := ix.fn(truth, renamed)
		require.NoError(t, err, ix.name)
		assert.Equal(t, 1.0, got, ix.name)
	}
	require.Equal(t, truth0, truth)
}

func TestIdenticalPartitionsScoreOne(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 1))
	cases := map[string][]int{
		"one row":        {4},
		"one cluster":    {2, 2, 2, 2, 2},
		"all singletons": {0, 1, 2, 3, 4, 5, 6},
		"two clusters":   {0, 1, 0, 1, 1},
		"random":         randomLabels(rng, 200, 6),
		"sparse values":  {1 << 60, 3, 3, 1 << 60, 77},
	}
	for name, a := range cases {
		for _, b := range [][]int{a, rename(rng, a)} {
			for _, ix := range labelIndices() {
				got, err := ix.fn(a, b)
				require.NoError(t, err, name+" "+ix.name)
				assert.Equal(t, 1.0, got, name+" "+ix.name)
			}
		}
	}
}

// Conventions for a labelling that puts all rows in one cluster against one
// that does not (documented on each index): no pair agreement beyond chance
// and no shared information.
func TestSingleClusterAgainstOther(t *testing.T) {
	one := []int{5, 5, 5, 5, 5, 5}
	other := []int{0, 0, 1, 1, 2, 2}
	singles := []int{0, 1, 2, 3, 4, 5}
	check := func(name string, want float64, fn func() (float64, error)) {
		got, err := fn()
		require.NoError(t, err, name)
		assert.InDelta(t, want, got, 1e-15, name)
	}
	// ARI: SA = C(6,2) = 15 = C(N,2), Index = SB = 3 → numerator 2(3·15 − 15·3) = 0.
	check("ARI", 0, func() (float64, error) { return AdjustedRand(one, other) })
	// FM = 3/√(15·3) = √(1/5).
	check("FM", math.Sqrt(0.2), func() (float64, error) { return FowlkesMallows(one, other) })
	check("FM singletons", 0, func() (float64, error) { return FowlkesMallows(singles, other) })
	// Truth in one class: every found cluster is pure.
	check("Purity", 1, func() (float64, error) { return Purity(one, other) })
	for _, m := range allNorms {
		check("NMI "+m.String(), 0, func() (float64, error) { return NMIWith(one, other, m) })
		if m != Joint {
			check("AMI "+m.String(), 0, func() (float64, error) { return AMIWith(one, other, m) })
		}
	}
	// Every row its own truth cluster: I = H(found) = E[I] for any found,
	// so the Min normalisation leaves nothing above chance.
	check("AMI min singletons", 0, func() (float64, error) { return AMIWith(singles, other, Min) })
	rng := rand.New(rand.NewPCG(9, 9))
	for _, n := range []int{10, 100, 1000, 3000} {
		many := make([]int, n)
		for i := range many {
			many[i] = i
		}
		draw := randomLabels(rng, n, 7)
		// I = E[I] = H(draw) = min(H) up to rounding of the sums: 0/0 → 0.
		check(fmt.Sprintf("AMI min %d singletons", n), 0, func() (float64, error) { return AMIWith(many, draw, Min) })
		ami, err := AMI(many, draw)
		require.NoError(t, err)
		assert.InDelta(t, 0, ami, 1e-12)
	}
	h, c, v, err := VMeasureParts(one, other)
	require.NoError(t, err)
	assert.Equal(t, []float64{1, 0, 0}, []float64{h, c, v}) // H(C) = 0 → h = 1; c = 1 − H(K)/H(K)
}

func TestRenamingChangesNothing(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 5))
	for range 20 {
		a, b := randomPair(rng, 2, 81, 1, 6)
		ra, rb := rename(rng, a), rename(rng, b)
		for _, ix := range labelIndices() {
			want, err := ix.fn(a, b)
			require.NoError(t, err, ix.name)
			got, err := ix.fn(ra, rb)
			require.NoError(t, err, ix.name)
			assert.InDelta(t, want, got, 1e-13, ix.name)
		}
		want, err := AdjustedRand(a, b)
		require.NoError(t, err)
		got, err := AdjustedRand(ra, rb)
		require.NoError(t, err)
		assert.Equal(t, want, got, "ARI is computed exactly")
	}
}

func TestSymmetricIndices(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 9))
	for range 20 {
		a, b := randomPair(rng, 2, 81, 1, 6)
		for _, ix := range labelIndices() {
			if !ix.symmetric {
				continue
			}
			ab, err := ix.fn(a, b)
			require.NoError(t, err, ix.name)
			ba, err := ix.fn(b, a)
			require.NoError(t, err, ix.name)
			assert.InDelta(t, ab, ba, 1e-13, ix.name)
		}
		// Swapping the arguments swaps homogeneity and completeness.
		h1, c1, _, err := VMeasureParts(a, b)
		require.NoError(t, err)
		h2, c2, _, err := VMeasureParts(b, a)
		require.NoError(t, err)
		assert.InDelta(t, h1, c2, 1e-13)
		assert.InDelta(t, c1, h2, 1e-13)
	}
}

// bruteARI enumerates all pairs of rows and applies Hubert & Arabie's 1985
// formula (Index − Expected)/(Max − Expected) in exact rationals, with the
// documented convention 1 when Max = Expected.
func bruteARI(a, b []int) float64 {
	var both, inA, inB, all int64
	for i := range a {
		for j := i + 1; j < len(a); j++ {
			sa, sb := a[i] == a[j], b[i] == b[j]
			all++
			if sa {
				inA++
			}
			if sb {
				inB++
			}
			if sa && sb {
				both++
			}
		}
	}
	if all == 0 {
		return 1
	}
	expected := big.NewRat(inA*inB, all)
	maxIdx := big.NewRat(inA+inB, 2)
	den := new(big.Rat).Sub(maxIdx, expected)
	if den.Sign() == 0 {
		return 1
	}
	num := new(big.Rat).Sub(big.NewRat(both, 1), expected)
	f, _ := num.Quo(num, den).Float64()
	return f
}

func TestAdjustedRandBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	for range 200 {
		a, b := randomPair(rng, 1, 60, 1, 8)
		got, err := AdjustedRand(a, b)
		require.NoError(t, err)
		require.Equal(t, bruteARI(a, b), got, "a=%v b=%v", a, b)
	}
}

// NMI in every normalisation (formulas of Vinh, Epps & Bailey 2010, Table 2)
// and V-measure (Rosenberg & Hirschberg 2007) against entropies computed
// directly from label frequencies, with I = H(U) + H(V) − H(U,V) and
// H(C|K) = H(C,K) − H(K).
func TestInformationIndicesAgainstEntropies(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 3))
	for range 50 {
		a, b := randomPair(rng, 5, 204, 2, 7)
		hu, hv, huv := directEntropies(a, b)
		if hu == 0 || hv == 0 {
			continue // a single cluster: the ratios below are 0/0
		}
		mi := hu + hv - huv
		want := map[Norm]float64{
			Arithmetic: 2 * mi / (hu + hv),
			Geometric:  mi / math.Sqrt(hu*hv),
			Max:        mi / max(hu, hv),
			Min:        mi / min(hu, hv),
			Joint:      mi / huv,
		}
		for m, w := range want {
			got, err := NMIWith(a, b, m)
			require.NoError(t, err)
			assert.InDelta(t, w, got, 1e-12, m.String())
		}
		h, c, v, err := VMeasureParts(a, b)
		require.NoError(t, err)
		wh, wc := 1-(huv-hv)/hu, 1-(huv-hu)/hv
		assert.InDelta(t, wh, h, 1e-12)
		assert.InDelta(t, wc, c, 1e-12)
		assert.InDelta(t, 2*wh*wc/(wh+wc), v, 1e-12)
	}
}

// ratEMI is E[I] of Vinh et al. 2010 summed directly over the hypergeometric
// pmf P(n) = C(a,n)·C(N−a,b−n)/C(N,b), which is evaluated exactly in big
// rationals instead of through log-gamma.
func ratEMI(u, v []int) float64 {
	cu, cv := map[int]int64{}, map[int]int64{}
	for i := range u {
		cu[u[i]]++
		cv[v[i]]++
	}
	n := int64(len(u))
	var e float64
	for _, a := range cu {
		for _, b := range cv {
			for k := max(1, a+b-n); k <= min(a, b); k++ {
				p := new(big.Rat).SetFrac(
					new(big.Int).Mul(new(big.Int).Binomial(a, k), new(big.Int).Binomial(n-a, b-k)),
					new(big.Int).Binomial(n, b))
				pf, _ := p.Float64()
				e += float64(k) / float64(n) * math.Log(float64(n*k)/float64(a*b)) * pf
			}
		}
	}
	return e
}

// permutationEMI averages I(u, v∘σ) over all permutations σ of the rows:
// the definition of E[I] under the permutation model (Vinh et al. 2010).
func permutationEMI(u, v []int) float64 {
	p := slices.Clone(v)
	var sum float64
	count := 0
	var heap func(k int)
	heap = func(k int) { // Heap's algorithm
		if k == 1 {
			hu, hv, huv := directEntropies(u, p)
			sum += hu + hv - huv
			count++
			return
		}
		for i := range k - 1 {
			heap(k - 1)
			if k%2 == 0 {
				p[i], p[k-1] = p[k-1], p[i]
			} else {
				p[0], p[k-1] = p[k-1], p[0]
			}
		}
		heap(k - 1)
	}
	heap(len(p))
	return sum / float64(count)
}

func TestExpectedMIBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	for range 30 {
		a, b := randomPair(rng, 2, 41, 1, 5)
		tab, err := Contingency(a, b)
		require.NoError(t, err)
		assert.InDelta(t, ratEMI(a, b), tab.expectedMI(), 1e-12, "a=%v b=%v", a, b)
	}
	// Larger N, where differences of log-gamma values would lose about
	// N·log N ulps.
	for _, n := range []int{200, 500} {
		a, b := randomLabels(rng, n, 3), randomLabels(rng, n, 4)
		tab, err := Contingency(a, b)
		require.NoError(t, err)
		assert.InDelta(t, ratEMI(a, b), tab.expectedMI(), 1e-14, "n=%d", n)
	}
	for _, c := range []struct{ a, b []int }{
		{[]int{0, 0, 1, 1, 1, 2, 2}, []int{0, 1, 1, 0, 2, 2, 2}},
		{[]int{0, 0, 0, 0, 1, 1, 1}, []int{3, 3, 4, 4, 5, 5, 6}},
		{[]int{0, 1, 2, 3, 4, 5}, []int{0, 0, 0, 1, 1, 1}},
		{[]int{0, 0, 0, 0, 0}, []int{0, 1, 1, 2, 2}},
	} {
		tab, err := Contingency(c.a, c.b)
		require.NoError(t, err)
		assert.InDelta(t, permutationEMI(c.a, c.b), tab.expectedMI(), 1e-13, "a=%v b=%v", c.a, c.b)
	}
}

// Chance-corrected indices average 0 over independent random labellings:
// given the cluster sizes, one labelling is a uniformly random arrangement
// relative to the other, which is exactly the model both corrections assume
// (Hubert & Arabie 1985; Vinh et al. 2010). The check |mean| < 3 standard
// errors is common practice.
func TestChanceCorrectedMeanZero(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 12))
	const draws = 600
	indices := []labelIndex{{name: "ARI", fn: AdjustedRand}, {name: "AMI", fn: AMI}}
	for _, ix := range indices {
		var sum, sumSq float64
		for range draws {
			a, b := randomLabels(rng, 40, 3), randomLabels(rng, 40, 4)
			v, err := ix.fn(a, b)
			require.NoError(t, err)
			sum += v
			sumSq += v * v
		}
		mean := sum / draws
		se := math.Sqrt((sumSq/draws - mean*mean) / (draws - 1))
		require.Greater(t, se, 0.0, ix.name)
		assert.Less(t, math.Abs(mean), 3*se, "%s: mean %.4g, standard error %.4g", ix.name, mean, se)
	}
}

func benchmarkExternal(b *testing.B, n, k int, fn func(a, b []int) (float64, error)) {
	rng := rand.New(rand.NewPCG(1, 1))
	x, y := randomLabels(rng, n, k), randomLabels(rng, n, k)
	b.ReportAllocs()
	for b.Loop() {
		if _, err := fn(x, y); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkAdjustedRand10k(b *testing.B) { benchmarkExternal(b, 10000, 10, AdjustedRand) }
func BenchmarkNMI10k(b *testing.B)          { benchmarkExternal(b, 10000, 10, NMI) }
func BenchmarkAMI10k(b *testing.B)          { benchmarkExternal(b, 10000, 10, AMI) }
