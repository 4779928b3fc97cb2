package validate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/data/reference"
)

// This file holds the brute-force references the internal indices are
// checked against. They follow the papers' formulas in their most literal
// form, on [][]float64 rows, and share no code with the package.

// rowsOf copies X into a slice of rows.
func rowsOf(X mat.Matrix) [][]float64 {
	n, d := X.Dims()
	out := make([][]float64, n)
	for i := range out {
		out[i] = make([]float64, d)
		for j := range out[i] {
			out[i][j] = X.At(i, j)
		}
	}
	return out
}

// members maps every label that occurs in assign to its rows, and returns
// the labels in increasing order.
func members(assign []int) (map[int][]int, []int) {
	m := map[int][]int{}
	for i, a := range assign {
		m[a] = append(m[a], i)
	}
	var labels []int
	for l := range m {
		labels = append(labels, l)
	}
	slices.Sort(labels)
	return m, labels
}

func euclid(x, y []float64) float64 {
	var s float64
	for j := range x {
		s += (x[j] - y[j]) * (x[j] - y[j])
	}
	return math.Sqrt(s)
}

func manhattan(x, y []float64) float64 {
	var s float64
	for j := range x {
		s += math.Abs(x[j] - y[j])
	}
	return s
}

func cosineDissim(x, y []float64) float64 {
	var dot, nx, ny float64
	for j := range x {
		dot += x[j] * y[j]
		nx += x[j] * x[j]
		ny += y[j] * y[j]
	}
	return math.Max(0, 1-dot/math.Sqrt(nx*ny))
}

// mean returns the mean of the rows idx of X.
func mean(X [][]float64, idx []int) []float64 {
	c := make([]float64, len(X[0]))
	for _, i := range idx {
		for j, v := range X[i] {
			c[j] += v
		}
	}
	for j := range c {
		c[j] /= float64(len(idx))
	}
	return c
}

// bruteSilhouette follows Rousseeuw (1987) with a full n×n distance matrix.
func bruteSilhouette(X [][]float64, assign []int, dist func(x, y []float64) float64) []float64 {
	n := len(X)
	D := make([][]float64, n)
	for i := range D {
		D[i] = make([]float64, n)
		for j := range D[i] {
			D[i][j] = dist(X[i], X[j])
		}
	}
	m, labels := members(assign)
	s := make([]float64, n)
	for i := range X {
		own := m[assign[i]]
		if len(own) == 1 {
			continue // s(i) = 0 for a singleton (Rousseeuw 1987)
		}
		var a float64
		for _, j := range own {
			if j != i {
				a += D[i][j]
			}
		}
		a /= float64(len(own) - 1)
		b := math.Inf(1)
		for _, l := range labels {
			if l == assign[i] {
				continue
			}
			var t float64
			for _, j := range m[l] {
				t += D[i][j]
			}
			b = math.Min(b, t/float64(len(m[l])))
		}
		if math.Max(a, b) > 0 {
			s[i] = (b - a) / math.Max(a, b)
		}
	}
	return s
}

// bruteDaviesBouldin follows Davies & Bouldin (1979) with q = 1, p = 2.
func bruteDaviesBouldin(X [][]float64, assign []int) float64 {
	m, labels := members(assign)
	c := map[int][]float64{}
	S := map[int]float64{}
	for _, l := range labels {
		c[l] = mean(X, m[l])
		for _, i := range m[l] {
			S[l] += euclid(X[i], c[l])
		}
		S[l] /= float64(len(m[l]))
	}
	var sum float64
	for _, i := range labels {
		R := 0.0
		for _, j := range labels {
			if i != j {
				R = math.Max(R, (S[i]+S[j])/euclid(c[i], c[j]))
			}
		}
		sum += R
	}
	return sum / float64(len(labels))
}

// bruteWithinSS uses the pairwise identity of Tibshirani et al. (2001):
// Σ_{x∈r} ‖x−c_r‖² = (1/(2n_r)) Σ_{i,j∈r} ‖x_i−x_j‖².
func bruteWithinSS(X [][]float64, idx []int) float64 {
	var s float64
	for _, i := range idx {
		for _, j := range idx {
			d := euclid(X[i], X[j])
			s += d * d
		}
	}
	return s / (2 * float64(len(idx)))
}

// bruteCalinskiHarabasz follows Caliński & Harabasz (1974), with W from the
// pairwise identity.
func bruteCalinskiHarabasz(X [][]float64, assign []int) float64 {
	m, labels := members(assign)
	all := make([]int, len(X))
	for i := range all {
		all[i] = i
	}
	c := mean(X, all)
	var B, W float64
	for _, l := range labels {
		d := euclid(mean(X, m[l]), c)
		B += float64(len(m[l])) * d * d
		W += bruteWithinSS(X, m[l])
	}
	k, n := float64(len(labels)), float64(len(X))
	return (B / (k - 1)) / (W / (n - k))
}

// bruteDunn follows Dunn (1974): smallest distance between rows of
// different clusters over the largest distance within a cluster.
func bruteDunn(X [][]float64, assign []int) float64 {
	sep, diam := math.Inf(1), 0.0
	for i := range X {
		for j := range X {
			if i == j {
				continue
			}
			d := euclid(X[i], X[j])
			if assign[i] == assign[j] {
				diam = math.Max(diam, d)
			} else {
				sep = math.Min(sep, d)
			}
		}
	}
	return sep / diam
}

// near asserts |got−want| ≤ tol·max(1, |want|).
func near(t *testing.T, want, got, tol float64, msgAndArgs ...any) {
	t.Helper()
	assert.LessOrEqual(t, math.Abs(got-want), tol*math.Max(1, math.Abs(want)), msgAndArgs...)
}

// blobs returns n rows in d dimensions around k random centers, labelled by
// center. Labels are multiplied by stride so that stride > 1 leaves empty
// clusters between them.
func blobs(rnd *rand.Rand, n, d, k int, spread float64, stride int) (*mat.Dense, []int) {
	centers := make([][]float64, k)
	for c := range centers {
		centers[c] = make([]float64, d)
		for j := range centers[c] {
			centers[c][j] = 10 * rnd.NormFloat64()
		}
	}
	X := mat.NewDense(n, d, nil)
	assign := make([]int, n)
	for i := range n {
		c := i % k
		if i >= k {
			c = rnd.IntN(k)
		}
		assign[i] = c * stride
		for j := range d {
			X.Set(i, j, centers[c][j]+spread*rnd.NormFloat64())
		}
	}
	return X, assign
}

// testCase is a data set with an assignment to score.
type testCase struct {
	name   string
	X      *mat.Dense
	assign []int
}

// randomCases returns seeded random data sets, some with empty clusters and
// singletons.
func randomCases() []testCase {
	rnd := rand.New(rand.NewPCG(7, 11))
	var cs []testCase
	for _, p := range []struct{ n, d, k, stride int }{
		{40, 2, 3, 1}, {57, 5, 4, 2}, {90, 3, 7, 1}, {33, 8, 2, 3}, {120, 1, 5, 1},
	} {
		X, a := blobs(rnd, p.n, p.d, p.k, 1+rnd.Float64()*3, p.stride)
		cs = append(cs, testCase{name: "blobs", X: X, assign: a})
	}
	// Random labels on random data: overlapping clusters, silhouettes near 0.
	X := mat.NewDense(50, 3, nil)
	a := make([]int, 50)
	for i := range 50 {
		a[i] = rnd.IntN(4)
		for j := range 3 {
			X.Set(i, j, rnd.Float64())
		}
	}
	cs = append(cs, testCase{name: "random labels", X: X, assign: a})
	// A singleton cluster and an empty label.
	X2, a2 := blobs(rnd, 30, 2, 3, 1, 1)
	a2[29] = 5
	cs = append(cs, testCase{name: "singleton", X: X2, assign: a2})
	return cs
}

// datasetCases loads the reference sets with their ground truth, skipping
// the test when they are absent.
func datasetCases(t *testing.T) []testCase {
	var cs []testCase
	for _, name := range []string{"iris", "wine", "seeds"} {
		s := reference.LoadOrSkip(t, name)
		cs = append(cs, testCase{name: name, X: s.X, assign: s.Labels})
	}
	return cs
}

// Worked example, by hand. Rows 0, 2, 10, 12 (one column) with labels
// 0, 0, 1, 1:
//
//	Silhouette: a = 2 for every row; b(0) = (10+12)/2 = 11, b(2) = (8+10)/2 = 9,
//	  b(10) = 9, b(12) = 11; s = 9/11, 7/9, 7/9, 9/11; mean = (9/11+7/9)/2 = 79/99.
//	Davies–Bouldin: means 1 and 11, S = 1 and 1, M = 10, R = 2/10 for both: 0.2.
//	Calinski–Harabasz: grand mean 6, B = 2·25 + 2·25 = 100, W = 4·1 = 4,
//	  (100/1)/(4/2) = 50.
//	Dunn: closest rows of different clusters 2 and 10, distance 8; both
//	  diameters 2; 8/2 = 4.
//	WithinSS: 1+1 = 2 for each cluster.
//
// Adding row 30 with label 3 (a singleton; label 2 is empty, label 1 too
// after relabelling 1 → 2): rows 0, 2, 10, 12, 30 with labels 0, 0, 2, 2, 3:
//
//	Silhouette: the singleton has s = 0; for the others the nearest other
//	  cluster is unchanged (b(10) = min(9, 20), b(12) = min(11, 18)), so the
//	  mean is (2·9/11 + 2·7/9 + 0)/5 = 316/495.
//	Davies–Bouldin: means 1, 11, 30; S = 1, 1, 0; R_0 = max(2/10, 1/29) = 0.2,
//	  R_2 = max(2/10, 1/19) = 0.2, R_3 = max(1/29, 1/19) = 1/19;
//	  DB = (0.4 + 1/19)/3 = 43/285.
//	Calinski–Harabasz: grand mean 54/5 = 10.8; B = 2·9.8² + 2·0.2² + 19.2²
//	  = 192.08 + 0.08 + 368.64 = 560.8; W = 4; (560.8/2)/(4/(5−3)) = 140.2.
//	Dunn: separation 8 (2 to 10), largest diameter 2: 4.
//	WithinSS: [2, 0, 2, 0]; ClusterSilhouettes: [79/99, 0, 79/99, 0].
func TestWorkedExample(t *testing.T) {
	X := mat.NewDense(4, 1, []float64{0, 2, 10, 12})
	assign := []int{0, 0, 1, 1}
	sil, err := Silhouette(X, assign, nil)
	require.NoError(t, err)
	near(t, 79.0/99, sil, 1e-15)
	db, err := DaviesBouldin(X, assign)
	require.NoError(t, err)
	near(t, 0.2, db, 1e-15)
	ch, err := CalinskiHarabasz(X, assign)
	require.NoError(t, err)
	near(t, 50, ch, 1e-15)
	dunn, err := Dunn(X, assign)
	require.NoError(t, err)
	near(t, 4, dunn, 1e-15)
	w, err := WithinSS(X, assign)
	require.NoError(t, err)
	assert.Equal(t, []float64{2, 2}, w)

	X = mat.NewDense(5, 1, []float64{0, 2, 10, 12, 30})
	assign = []int{0, 0, 2, 2, 3}
	sil, err = Silhouette(X, assign, nil)
	require.NoError(t, err)
	near(t, 316.0/495, sil, 1e-15)
	vals, err := SilhouetteValues(nil, X, assign, nil)
	require.NoError(t, err)
	for i, want := range []float64{9.0 / 11, 7.0 / 9, 7.0 / 9, 9.0 / 11, 0} {
		near(t, want, vals[i], 1e-15, "row %d", i)
	}
	per, err := ClusterSilhouettes(X, assign, nil)
	require.NoError(t, err)
	require.Len(t, per, 4)
	for i, want := range []float64{79.0 / 99, 0, 79.0 / 99, 0} {
		near(t, want, per[i], 1e-15, "cluster %d", i)
	}
	db, err = DaviesBouldin(X, assign)
	require.NoError(t, err)
	near(t, 43.0/285, db, 1e-15)
	ch, err = CalinskiHarabasz(X, assign)
	require.NoError(t, err)
	near(t, 140.2, ch, 1e-14)
	dunn, err = Dunn(X, assign)
	require.NoError(t, err)
	near(t, 4, dunn, 1e-15)
	w, err = WithinSS(X, assign)
	require.NoError(t, err)
	assert.Equal(t, []float64{2, 0, 2, 0}, w)
}

// TestAgainstBruteForce checks every Euclidean index against the literal
// references above on random and reference data.
func TestAgainstBruteForce(t *testing.T) {
	cases := randomCases()
	if !testing.Short() {
		cases = append(cases, datasetCases(t)...)
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			X := rowsOf(c.X)
			db, err := DaviesBouldin(c.X, c.assign)
			require.NoError(t, err)
			near(t, bruteDaviesBouldin(X, c.assign), db, 1e-12, "Davies-Bouldin")

			ch, err := CalinskiHarabasz(c.X, c.assign)
			require.NoError(t, err)
			near(t, bruteCalinskiHarabasz(X, c.assign), ch, 1e-11, "Calinski-Harabasz")

			dunn, err := Dunn(c.X, c.assign)
			require.NoError(t, err)
			near(t, bruteDunn(X, c.assign), dunn, 1e-12, "Dunn")

			w, err := WithinSS(c.X, c.assign)
			require.NoError(t, err)
			m, _ := members(c.assign)
			require.Len(t, w, slices.Max(c.assign)+1)
			for l, wl := range w {
				if idx, ok := m[l]; ok {
					near(t, bruteWithinSS(X, idx), wl, 1e-11, "WithinSS cluster %d", l)
				} else {
					assert.Zero(t, wl, "empty cluster %d", l)
				}
			}
		})
	}
}

// TestReferenceValues compares the ground-truth partitions of the reference
// sets with values recalled for them.
func TestReferenceValues(t *testing.T) {
	s := reference.LoadOrSkip(t, "iris")
	// Euclidean silhouette of Fisher's three species on the raw iris data,
	// ≈ 0.503 (from memory); the exact value is checked above by brute force.
	sil, err := Silhouette(s.X, s.Labels, nil)
	require.NoError(t, err)
	assert.InDelta(t, 0.503, sil, 0.001)
	// Calinski–Harabasz of the iris species ≈ 487.3 (from memory).
	ch, err := CalinskiHarabasz(s.X, s.Labels)
	require.NoError(t, err)
	assert.InDelta(t, 487.3, ch, 0.1)
	t.Logf("iris species: silhouette %.6f, Calinski-Harabasz %.4f", sil, ch)
}

// TestMatrixKinds checks that strided views and matrices without raw access
// give the same results as a compact *mat.Dense, and that inputs are not
// modified.
func TestMatrixKinds(t *testing.T) {
	rnd := rand.New(rand.NewPCG(3, 5))
	X, assign := blobs(rnd, 45, 3, 3, 2, 1)
	big := mat.NewDense(50, 6, nil)
	for i := range 50 {
		for j := range 6 {
			big.Set(i, j, rnd.NormFloat64())
		}
	}
	view := big.Slice(2, 47, 1, 4).(*mat.Dense)
	view.Copy(X)
	before := mat.DenseCopyOf(big)
	assignBefore := slices.Clone(assign)

	kinds := map[string]mat.Matrix{
		"strided view": view,
		"no raw":       struct{ mat.Matrix }{X},
		"transposed":   X.T().T(),
	}
	type index func(mat.Matrix) (float64, error)
	indices := map[string]index{
		"silhouette": func(m mat.Matrix) (float64, error) { return Silhouette(m, assign, nil) },
		"db":         func(m mat.Matrix) (float64, error) { return DaviesBouldin(m, assign) },
		"ch":         func(m mat.Matrix) (float64, error) { return CalinskiHarabasz(m, assign) },
		"dunn":       func(m mat.Matrix) (float64, error) { return Dunn(m, assign) },
	}
	for iname, f := range indices {
		want, err := f(X)
		require.NoError(t, err)
		for kname, m := range kinds {
			got, err := f(m)
			require.NoError(t, err)
			assert.Equal(t, want, got, "%s on %s", iname, kname)
		}
	}
	assert.True(t, mat.Equal(before, big), "data modified")
	assert.Equal(t, assignBefore, assign, "assignments modified")
}

// TestExtremeMagnitudes checks that data near the limits of float64 gives
// the same scale-invariant indices as moderate data.
func TestExtremeMagnitudes(t *testing.T) {
	rnd := rand.New(rand.NewPCG(9, 9))
	X, assign := blobs(rnd, 40, 3, 3, 2, 1)
	for _, e := range []int{450, -450, 1000, -1060} {
		var Y mat.Dense
		Y.Apply(func(_, _ int, v float64) float64 { return math.Ldexp(v, e) }, X)
		for name, f := range map[string]func(mat.Matrix) (float64, error){
			"silhouette":        func(m mat.Matrix) (float64, error) { return Silhouette(m, assign, nil) },
			"davies-bouldin":    func(m mat.Matrix) (float64, error) { return DaviesBouldin(m, assign) },
			"calinski-harabasz": func(m mat.Matrix) (float64, error) { return CalinskiHarabasz(m, assign) },
			"dunn":              func(m mat.Matrix) (float64, error) { return Dunn(m, assign) },
		} {
			want, err := f(X)
			require.NoError(t, err)
			got, err := f(&Y)
			require.NoError(t, err)
			// Subnormal values at 2^-1060 keep fewer bits.
			tol := 1e-12
			if e < -1000 {
				tol = 1e-5
			}
			near(t, want, got, tol, "%s at 2^%d", name, e)
		}
		if e == 450 || e == -450 {
			w, err := WithinSS(X, assign)
			require.NoError(t, err)
			wy, err := WithinSS(&Y, assign)
			require.NoError(t, err)
			for l := range w {
				assert.InEpsilon(t, math.Ldexp(w[l], 2*e), wy[l], 1e-12)
			}
		}
	}
}

// TestDunnWorkers checks that Dunn does not depend on the number of
// goroutines.
func TestDunnWorkers(t *testing.T) {
	rnd := rand.New(rand.NewPCG(1, 2))
	X, assign := blobs(rnd, 301, 4, 5, 3, 1)
	v, g, err := prepare(X, assign)
	require.NoError(t, err)
	want, err := dunn(v, g, 1)
	require.NoError(t, err)
	for _, w := range []int{2, 3, 8} {
		got, err := dunn(v, g, w)
		require.NoError(t, err)
		assert.Equal(t, math.Float64bits(want), math.Float64bits(got), "workers %d", w)
	}
}

// TestDegenerate checks the documented values and errors for degenerate
// clusterings.
func TestDegenerate(t *testing.T) {
	// All diameters 0, separation 3: Dunn is +Inf; W = 0: CH is +Inf.
	X := mat.NewDense(4, 1, []float64{0, 0, 3, 3})
	assign := []int{0, 0, 1, 1}
	dunn, err := Dunn(X, assign)
	require.NoError(t, err)
	assert.True(t, math.IsInf(dunn, 1))
	ch, err := CalinskiHarabasz(X, assign)
	require.NoError(t, err)
	assert.True(t, math.IsInf(ch, 1))
	// DB with zero scatter is 0.
	db, err := DaviesBouldin(X, assign)
	require.NoError(t, err)
	assert.Zero(t, db)
	// Every row its own cluster: Dunn +Inf, DB defined (all scatter 0).
	X = mat.NewDense(3, 1, []float64{0, 1, 5})
	dunn, err = Dunn(X, []int{0, 1, 2})
	require.NoError(t, err)
	assert.True(t, math.IsInf(dunn, 1))
	db, err = DaviesBouldin(X, []int{0, 1, 2})
	require.NoError(t, err)
	assert.Zero(t, db)
	// A row shared by two clusters: separation 0, Dunn 0.
	X = mat.NewDense(4, 1, []float64{0, 1, 1, 2})
	dunn, err = Dunn(X, []int{0, 0, 1, 1})
	require.NoError(t, err)
	assert.Zero(t, dunn)
	// Duplicate rows in different clusters: s = 0 where a = b = 0.
	X = mat.NewDense(4, 1, []float64{1, 1, 1, 1})
	vals, err := SilhouetteValues(nil, X, []int{0, 0, 1, 1}, nil)
	require.NoError(t, err)
	assert.Equal(t, []float64{0, 0, 0, 0}, vals)
}

// TestExampleValues recomputes the printed values of the examples with the
// brute-force references.
func TestExampleValues(t *testing.T) {
	X := [][]float64{{42, 10}, {38, 12}, {45, 8}, {10, 55}, {12, 48}, {8, 60}, {25, 30}, {28, 27}}
	assign := []int{0, 0, 0, 1, 1, 1, 2, 2}
	assert.Equal(t, "0.2112", fmt.Sprintf("%.4f", bruteDaviesBouldin(X, assign)))
	assert.Equal(t, "91.4", fmt.Sprintf("%.1f", bruteCalinskiHarabasz(X, assign)))
	s := bruteSilhouette(X, assign, euclid)
	var sum float64
	for _, v := range s {
		sum += v
	}
	assert.Equal(t, "0.7616", fmt.Sprintf("%.4f", sum/8))
	assert.Equal(t, "0.7699", fmt.Sprintf("%.4f", (s[0]+s[1]+s[2])/3))
	assert.Equal(t, "0.7134", fmt.Sprintf("%.4f", (s[3]+s[4]+s[5])/3))
	assert.Equal(t, "0.8215", fmt.Sprintf("%.4f", (s[6]+s[7])/2))
	// ExampleKnee: the hand computation gives differences 0.504, 0.634,
	// 0.519 at k = 2, 3, 4 and 0.396 at k = 5, below 0.634 − 1/7 = 0.491:
	// the elbow is k = 3.
}
