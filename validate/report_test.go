package validate_test

import (
	"context"
	"encoding/json"
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/data/reference"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/validate"
)

// TestReportEqualsIndices checks that every field of the report is the
// value of the function it comes from, bit for bit.
func TestReportEqualsIndices(t *testing.T) {
	rnd := rand.New(rand.NewPCG(4, 4))
	for trial := range 20 {
		n := 5 + rnd.IntN(300)
		truth, found := make([]int, n), make([]int, n)
		for i := range n {
			truth[i] = rnd.IntN(1 + trial%6)
			found[i] = rnd.IntN(2 + trial%5)
			if rnd.IntN(3) == 0 {
				found[i] = truth[i] * 2
			}
		}
		r, err := validate.Compare(truth, found, nil, nil)
		require.NoError(t, err)
		must := func(v float64, err error) float64 { require.NoError(t, err); return v }
		assert.Equal(t, must(validate.AdjustedRand(truth, found)), r.ARI)
		assert.Equal(t, must(validate.NMI(truth, found)), r.NMI)
		assert.Equal(t, must(validate.AMI(truth, found)), r.AMI)
		assert.Equal(t, must(validate.VMeasure(truth, found)), r.VMeasure)
		h, c, _, err := validate.VMeasureParts(truth, found)
		require.NoError(t, err)
		assert.Equal(t, h, r.Homogeneity)
		assert.Equal(t, c, r.Completeness)
		assert.Equal(t, must(validate.FowlkesMallows(truth, found)), r.FowlkesMallows)
		assert.Equal(t, must(validate.Purity(truth, found)), r.Purity)
		assert.Equal(t, must(validate.Purity(found, truth)), r.InversePurity)
		assert.Equal(t, n, r.Rows)
		assert.Nil(t, r.CentroidIndex)
	}
}

// Brute-force indices from their definitions, written independently of
// the package: pair counting over all pairs of rows (Hubert & Arabie
// 1985), entropies from the label frequencies, majority counts.

func bruteARI(a, b []int) float64 {
	n := len(a)
	var both, inA, inB int64
	for i := range n {
		for j := range i {
			sa, sb := a[i] == a[j], b[i] == b[j]
			if sa && sb {
				both++
			}
			if sa {
				inA++
			}
			if sb {
				inB++
			}
		}
	}
	all := int64(n) * int64(n-1) / 2
	exp := new(big.Rat).SetFrac(new(big.Int).Mul(big.NewInt(inA), big.NewInt(inB)), big.NewInt(all))
	num := new(big.Rat).Sub(new(big.Rat).SetInt64(both), exp)
	den := new(big.Rat).Sub(new(big.Rat).SetFrac(big.NewInt(inA+inB), big.NewInt(2)), exp)
	v, _ := new(big.Rat).Quo(num, den).Float64()
	return v
}

func entropy(counts map[int]float64, n float64) float64 {
	var h float64
	for _, c := range counts {
		h -= c / n * math.Log(c/n)
	}
	return h
}

func bruteNMI(a, b []int) float64 {
	n := float64(len(a))
	ca, cb, cab := map[int]float64{}, map[int]float64{}, map[[2]int]float64{}
	for i := range a {
		ca[a[i]]++
		cb[b[i]]++
		cab[[2]int{a[i], b[i]}]++
	}
	var mi float64
	for k, c := range cab {
		mi += c / n * math.Log(c*n/(ca[k[0]]*cb[k[1]]))
	}
	return mi / ((entropy(ca, n) + entropy(cb, n)) / 2)
}

func brutePurity(truth, found []int) float64 {
	counts := map[[2]int]int{}
	best := map[int]int{}
	for i := range truth {
		k := [2]int{found[i], truth[i]}
		counts[k]++
		best[found[i]] = max(best[found[i]], counts[k])
	}
	s := 0
	for _, v := range best {
		s += v
	}
	return float64(s) / float64(len(truth))
}

// bruteCI maps every center of a to its nearest in b and counts the
// centers of b nobody maps to, both ways (Fränti, Rezaei & Zhao 2014).
func bruteCI(a, b *mat.Dense) int {
	orphans := func(from, to *mat.Dense) int {
		kf, _ := from.Dims()
		kt, _ := to.Dims()
		hit := make([]bool, kt)
		for i := range kf {
			best, bd := 0, math.Inf(1)
			for j := range kt {
				var d float64
				for c := range from.RawRowView(i) {
					e := from.At(i, c) - to.At(j, c)
					d += e * e
				}
				if d < bd {
					best, bd = j, d
				}
			}
			hit[best] = true
		}
		n := 0
		for _, h := range hit {
			if !h {
				n++
			}
		}
		return n
	}
	return max(orphans(a, b), orphans(b, a))
}

// TestReportOnIris clusters Fisher's Iris (Fisher 1936) with k = 3 and
// the default settings and checks the report against the brute-force
// indices; k-means on unscaled Iris is widely reported at ARI ≈ 0.730
// (from memory).
func TestReportOnIris(t *testing.T) {
	set := reference.LoadOrSkip(t, "iris")
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: set.X, K: 3}, nil, nil)
	require.NoError(t, err)
	r, err := validate.Compare(set.Labels, res.Assignments, nil, nil)
	require.NoError(t, err)
	assert.InDelta(t, bruteARI(set.Labels, res.Assignments), r.ARI, 1e-12)
	assert.InDelta(t, bruteNMI(set.Labels, res.Assignments), r.NMI, 1e-12)
	assert.InDelta(t, brutePurity(set.Labels, res.Assignments), r.Purity, 1e-15)
	assert.InDelta(t, 0.730, r.ARI, 0.001) // (from memory)
	assert.Equal(t, 150, r.Rows)
	assert.Equal(t, 3, r.TruthClasses)
	assert.Equal(t, 3, r.FoundClusters)
	t.Logf("iris: ARI %.6f NMI %.6f AMI %.6f purity %.6f", r.ARI, r.NMI, r.AMI, r.Purity)
}

// TestReportOnS1 clusters S1 (Fränti & Virmajoki 2006) with k = 15 and
// compares with its published labels and centroids (s1-cb): indices equal
// the brute-force ones, and the centroid index is 0, as Fränti & Sieranoja
// (2018) report for k-means with repeats on S1 (from memory).
func TestReportOnS1(t *testing.T) {
	set := reference.LoadOrSkip(t, "s1")
	cb := reference.LoadOrSkip(t, "s1-cb")
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: set.X, K: 15}, nil, nil)
	require.NoError(t, err)
	found := res.Model.Centers()
	r, err := validate.Compare(set.Labels, res.Assignments, cb.X, found)
	require.NoError(t, err)
	assert.InDelta(t, bruteARI(set.Labels, res.Assignments), r.ARI, 1e-12)
	assert.InDelta(t, bruteNMI(set.Labels, res.Assignments), r.NMI, 1e-12)
	assert.InDelta(t, brutePurity(set.Labels, res.Assignments), r.Purity, 1e-15)
	require.NotNil(t, r.CentroidIndex)
	assert.Equal(t, bruteCI(found, cb.X), *r.CentroidIndex)
	assert.Equal(t, 0, *r.CentroidIndex)
	assert.Greater(t, r.ARI, 0.95)
	t.Logf("s1: ARI %.6f NMI %.6f AMI %.6f purity %.6f CI %d", r.ARI, r.NMI, r.AMI, r.Purity, *r.CentroidIndex)
}

// TestReportJSON checks the stable JSON form: the keys, the version, and a
// round trip through DecodeReport, which rejects other versions.
func TestReportJSON(t *testing.T) {
	ci := mat.NewDense(2, 1, []float64{0, 10})
	r, err := validate.Compare([]int{0, 0, 1, 1}, []int{1, 1, 0, 0}, ci, mat.NewDense(2, 1, []float64{9, 1}))
	require.NoError(t, err)
	b, err := json.Marshal(r)
	require.NoError(t, err)
	var keys map[string]any
	require.NoError(t, json.Unmarshal(b, &keys))
	for _, k := range []string{"format", "version", "rows", "truth_classes", "found_clusters", "ari", "nmi", "ami", "v_measure", "homogeneity", "completeness", "fowlkes_mallows", "purity", "inverse_purity", "centroid_index"} {
		assert.Contains(t, keys, k)
	}
	assert.Equal(t, validate.ReportFormat, keys["format"])
	assert.EqualValues(t, 1, keys["version"])
	assert.EqualValues(t, 1, keys["ari"], "the same partition under other names")
	assert.EqualValues(t, 0, keys["centroid_index"])
	back, err := validate.DecodeReport(b)
	require.NoError(t, err)
	assert.Equal(t, r, back)
	_, err = validate.DecodeReport([]byte(`{"format":"centroid.external-report","version":2}`))
	assert.ErrorIs(t, err, validate.ErrParameter)
	var out []byte
	w := &sliceWriter{&out}
	_, err = r.WriteTo(w)
	require.NoError(t, err)
	assert.Contains(t, string(out), "adjusted Rand (ARI)")
	assert.Contains(t, string(out), "centroid index (CI)")
}

type sliceWriter struct{ b *[]byte }

func (w *sliceWriter) Write(p []byte) (int, error) { *w.b = append(*w.b, p...); return len(p), nil }

func TestReportErrors(t *testing.T) {
	_, err := validate.Compare([]int{0, 1}, []int{0}, nil, nil)
	assert.ErrorIs(t, err, validate.ErrLength)
	_, err = validate.Compare([]int{0, -1}, []int{0, 1}, nil, nil)
	assert.ErrorIs(t, err, validate.ErrLabel)
	_, err = validate.Compare(nil, nil, nil, nil)
	assert.ErrorIs(t, err, validate.ErrEmpty)
	_, err = validate.Compare([]int{0, 1}, []int{0, 1}, mat.NewDense(1, 1, []float64{math.NaN()}), mat.NewDense(1, 1, []float64{0}))
	assert.ErrorIs(t, err, validate.ErrNotFinite)
	_, err = validate.Compare([]int{0, 1}, []int{0, 1}, mat.NewDense(1, 2, nil), mat.NewDense(1, 1, nil))
	assert.ErrorIs(t, err, validate.ErrLength)
}
