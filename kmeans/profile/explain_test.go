package profile

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
)

// stations returns n Riverton Bikes stations and their latent kinds as the
// clustering to explain (no clustering code is needed for that).
func stations(n int, seed uint64) (*mat.Dense, []int) {
	st, x := bikeshare.Generate(n, seed)
	return x, bikeshare.KindsOf(st)
}

// randomWeights returns n weights: continuous in [0.5, 2.5), or (dyadic)
// multiples of 1/4 up to 2, so that every sum is exact; about a fifth are
// zero when zeros is set.
func randomWeights(n int, seed uint64, dyadic, zeros bool) []float64 {
	rnd := rand.New(rand.NewPCG(seed, 9))
	w := make([]float64, n)
	for i := range w {
		switch {
		case zeros && rnd.IntN(5) == 0:
			w[i] = 0
		case dyadic:
			w[i] = float64(1+rnd.IntN(8)) / 4
		default:
			w[i] = 0.5 + 2*rnd.Float64()
		}
	}
	return w
}

// column returns the values of column j and their weights over the given
// rows, keeping only rows of positive weight (w nil = all ones).
func column(x mat.Matrix, w []float64, rows []int, j int) (vals, ws []float64) {
	for _, i := range rows {
		wi := 1.0
		if w != nil {
			wi = w[i]
		}
		if wi > 0 {
			vals = append(vals, x.At(i, j))
			ws = append(ws, wi)
		}
	}
	return vals, ws
}

// bruteQuantile is the definition written out: the smallest value v whose
// cumulative weight Σ{w : value ≤ v} reaches p·W.
func bruteQuantile(p float64, vals, ws []float64) float64 {
	var total float64
	for _, w := range ws {
		total += w
	}
	best := math.Inf(1)
	for _, v := range vals {
		var c float64
		for k, u := range vals {
			if u <= v {
				c += ws[k]
			}
		}
		if c >= p*total {
			best = min(best, v)
		}
	}
	return best
}

// near reports whether got is within tol of want, relative to max(1, |want|).
func near(want, got, tol float64) bool {
	return math.Abs(want-got) <= tol*math.Max(1, math.Abs(want))
}

// checkSummary compares s with gonum stat and brute force over vals, ws.
func checkSummary(t *testing.T, s Summary, vals, ws []float64, exactQuantiles bool, where string) {
	t.Helper()
	// Brute force: the weighted mean and population sd from their formulas.
	var sw, sx float64
	for k, v := range vals {
		sw += ws[k]
		sx += ws[k] * v
	}
	mean := sx / sw
	var ss float64
	for k, v := range vals {
		ss += ws[k] * (v - mean) * (v - mean)
	}
	assert.True(t, near(mean, s.Mean, 1e-12), "%s mean: brute force %v, got %v", where, mean, s.Mean)
	assert.True(t, near(math.Sqrt(ss/sw), s.SD, 1e-10), "%s sd: brute force %v, got %v", where, math.Sqrt(ss/sw), s.SD)
	// Reference: gonum stat.Mean and stat.PopMeanStdDev (population form).
	gm, gsd := stat.PopMeanStdDev(vals, ws)
	assert.True(t, near(stat.Mean(vals, ws), s.Mean, 1e-12), "%s mean vs gonum", where)
	assert.True(t, near(gm, s.Mean, 1e-12), "%s mean vs gonum", where)
	assert.True(t, near(gsd, s.SD, 1e-10), "%s sd vs gonum: %v, got %v", where, gsd, s.SD)

	sorted, sws := slices.Clone(vals), slices.Clone(ws)
	stat.SortWeighted(sorted, sws)
	for _, q := range []struct {
		p   float64
		got float64
	}{{0.25, s.MiddleHalf[0]}, {0.5, s.Median}, {0.75, s.MiddleHalf[1]}} {
		assert.Equal(t, bruteQuantile(q.p, vals, ws), q.got, "%s Q(%v): brute force", where, q.p)
		if exactQuantiles {
			// Reference: gonum stat.Quantile with stat.Empirical (the
			// weights here sum exactly in any order).
			assert.Equal(t, stat.Quantile(q.p, stat.Empirical, sorted, sws), q.got, "%s Q(%v): gonum", where, q.p)
		}
	}
}

func TestExplainAgainstReferences(t *testing.T) {
	x, assign := stations(150, 3)
	n, d := x.Dims()
	cases := []struct {
		name  string
		w     []float64
		exact bool // sums exact in any order, so gonum's quantiles agree bit for bit
	}{
		{"unweighted", nil, true},
		{"dyadic weights with zeros", randomWeights(n, 1, true, true), true},
		{"continuous weights with zeros", randomWeights(n, 2, false, true), false},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			r, err := Explain(x, assign, &Options{Weights: tc.w, Names: bikeshare.Features()})
			require.NoError(t, err)
			require.Len(t, r.Clusters, bikeshare.NumKinds)
			everyone := make([]int, n)
			groups := make([][]int, bikeshare.NumKinds)
			for i, a := range assign {
				everyone[i] = i
				groups[a] = append(groups[a], i)
			}
			var total float64
			for i := range n {
				total += weightAt(tc.w, i)
			}
			assert.True(t, near(total, r.Weight, 1e-14))
			assert.Equal(t, n, r.Rows)
			assert.Equal(t, tc.w != nil, r.Weighted)
			for j := range d {
				vals, ws := column(x, tc.w, everyone, j)
				checkSummary(t, r.Overall[j], vals, ws, tc.exact, fmt.Sprintf("overall column %d", j))
			}
			for c, cl := range r.Clusters {
				assert.Equal(t, c, cl.Cluster)
				assert.Equal(t, len(groups[c]), cl.Rows, "zero-weight rows count in Rows")
				var cw float64
				for _, i := range groups[c] {
					cw += weightAt(tc.w, i)
				}
				assert.True(t, near(cw, cl.Weight, 1e-14))
				assert.True(t, near(cw/total, cl.Share, 1e-14))
				for j := range d {
					vals, ws := column(x, tc.w, groups[c], j)
					checkSummary(t, cl.Features[j], vals, ws, tc.exact, fmt.Sprintf("cluster %d column %d", c, j))
					want := (cl.Features[j].Mean - r.Overall[j].Mean) / r.Overall[j].SD
					assert.True(t, near(want, cl.Shift[j], 1e-12), "cluster %d shift %d", c, j)
				}
				// Standouts: brute force, every column with |shift| ≥ 0.5,
				// by decreasing |shift| (selection of the largest left).
				var want []int
				left := make([]bool, d)
				for j := range d {
					left[j] = math.Abs(cl.Shift[j]) >= DefaultMinShift
				}
				for {
					best := -1
					for j := range d {
						if left[j] && (best < 0 || math.Abs(cl.Shift[j]) > math.Abs(cl.Shift[best])) {
							best = j
						}
					}
					if best < 0 {
						break
					}
					want = append(want, best)
					left[best] = false
				}
				assert.Equal(t, want, cl.Standouts, "cluster %d", c)
			}
		})
	}
}

func weightAt(w []float64, i int) float64 {
	if w == nil {
		return 1
	}
	return w[i]
}

func TestExplainQuantileDefinition(t *testing.T) {
	// One cluster of 1, 2, 3, 4 and one of 10, 20, 30, 40 weighted 3 1 1 1.
	// Hyndman & Fan (1996) definition 1 by hand: the median of 1 2 3 4 is
	// the lower middle value 2 (earlier releases printed 2.5), the middle
	// half runs from 1 to 3. Weighted: cumulative 3 4 5 6 of W = 6 reach
	// 1.5, 3 and 4.5 at 10, 10 and 30.
	x := mat.NewDense(8, 1, []float64{4, 1, 3, 2, 40, 10, 30, 20})
	r, err := Explain(x, []int{0, 0, 0, 0, 1, 1, 1, 1}, &Options{Weights: []float64{1, 1, 1, 1, 1, 3, 1, 1}})
	require.NoError(t, err)
	assert.Equal(t, 2.0, r.Clusters[0].Features[0].Median)
	assert.Equal(t, [2]float64{1, 3}, r.Clusters[0].Features[0].MiddleHalf)
	assert.Equal(t, 10.0, r.Clusters[1].Features[0].Median)
	assert.Equal(t, [2]float64{10, 30}, r.Clusters[1].Features[0].MiddleHalf)
	assert.Equal(t, 2.5, r.Clusters[0].Features[0].Mean)
}

func TestExplainIntegerWeightsAreRepetitions(t *testing.T) {
	x, assign := stations(60, 5)
	n, d := x.Dims()
	w := make([]float64, n)
	var rows []float64
	var repAssign []int
	for i := range n {
		w[i] = float64(i % 4) // zeros included
		for range int(w[i]) {
			rows = append(rows, x.RawRowView(i)...)
			repAssign = append(repAssign, assign[i])
		}
	}
	rw, err := Explain(x, assign, &Options{Weights: w})
	require.NoError(t, err)
	rr, err := Explain(mat.NewDense(len(repAssign), d, rows), repAssign, nil)
	require.NoError(t, err)
	for c := range rw.Clusters {
		a, b := rw.Clusters[c], rr.Clusters[c]
		assert.Equal(t, b.Weight, a.Weight)
		assert.Equal(t, b.Standouts, a.Standouts)
		for j := range d {
			assert.Equal(t, b.Features[j].Median, a.Features[j].Median)
			assert.Equal(t, b.Features[j].MiddleHalf, a.Features[j].MiddleHalf)
			assert.True(t, near(b.Features[j].Mean, a.Features[j].Mean, 1e-12))
			assert.True(t, near(b.Features[j].SD, a.Features[j].SD, 1e-10))
		}
	}
}

func TestExplainZeroWeightRows(t *testing.T) {
	// Rows of weight zero count in Rows but change no statistic, however
	// far out their values are.
	x, assign := stations(40, 6)
	w := randomWeights(40, 6, true, false)
	w[3], w[17] = 0, 0
	far := mat.DenseCopyOf(x)
	far.SetRow(3, []float64{1e12, -5, 7, 1e9, -1e9, 1e12})
	far.SetRow(17, []float64{-1e12, 9, -7, -1e9, 1e9, -1e12})
	a, err := Explain(x, assign, &Options{Weights: w})
	require.NoError(t, err)
	b, err := Explain(far, assign, &Options{Weights: w})
	require.NoError(t, err)
	assert.Equal(t, a, b)
	assert.Equal(t, 40, b.Rows)
	rows := 0
	for _, c := range b.Clusters {
		rows += c.Rows
	}
	assert.Equal(t, 40, rows)
}

func TestExplainEmptyAndWeightlessClusters(t *testing.T) {
	x := mat.NewDense(6, 2, []float64{
		1, 5,
		2, 5,
		3, 5,
		9, 5,
		10, 5,
		50, 5,
	})
	// Cluster 1 has no rows, cluster 2 only a row of weight zero, cluster 4
	// (beyond every label) none: K = 5 reports it.
	r, err := Explain(x, []int{0, 0, 0, 3, 3, 2}, &Options{Weights: []float64{1, 1, 1, 1, 1, 0}, K: 5})
	require.NoError(t, err)
	require.Len(t, r.Clusters, 5)
	for _, c := range []int{1, 4} {
		assert.Equal(t, Cluster{Cluster: c}, r.Clusters[c], "cluster %d is empty", c)
		assert.Equal(t, "empty", r.Gist(c))
	}
	assert.Equal(t, Cluster{Cluster: 2, Rows: 1}, r.Clusters[2], "no weight: no statistics")
	assert.Equal(t, "no weight", r.Gist(2))
	assert.Equal(t, 0.6, r.Clusters[0].Share)
	// The weightless row at 50 is left out of the overall statistics: mean
	// of 1 2 3 9 10 is 5.
	assert.Equal(t, 5.0, r.Overall[0].Mean)

	// Column 1 is constant: sd 0, shift 0, never a standout.
	for _, c := range []int{0, 3} {
		cl := r.Clusters[c]
		assert.Zero(t, cl.Shift[1])
		assert.Equal(t, Summary{Mean: 5, Median: 5, MiddleHalf: [2]float64{5, 5}}, cl.Features[1])
		assert.Equal(t, []int{0}, cl.Standouts)
	}
	assert.Zero(t, r.Overall[1].SD)

	// K = 0 infers the clusters from the largest label.
	r, err = Explain(x, []int{0, 0, 0, 3, 3, 2}, nil)
	require.NoError(t, err)
	assert.Len(t, r.Clusters, 4)
	assert.Equal(t, []string{"x0", "x1"}, r.Names)
	assert.Equal(t, "rows", r.Noun)
	assert.False(t, r.Weighted)
}

// matrixOnly hides the fast paths of the matrix it wraps.
type matrixOnly struct{ mat.Matrix }

func TestExplainMatrixKinds(t *testing.T) {
	x, assign := stations(30, 8)
	big := mat.NewDense(30, 9, nil)
	view := big.Slice(0, 30, 2, 8).(*mat.Dense)
	view.Copy(x)
	want, err := Explain(x, assign, nil)
	require.NoError(t, err)
	for name, m := range map[string]mat.Matrix{"strided view": view, "through At": matrixOnly{x}, "transpose of transpose": x.T().T()} {
		got, err := Explain(m, assign, nil)
		require.NoError(t, err, name)
		assert.Equal(t, want, got, name)
	}
}

func TestExplainLeavesInputsAlone(t *testing.T) {
	x, assign := stations(50, 9)
	w := randomWeights(50, 9, false, true)
	names, units := bikeshare.Features(), bikeshare.Units()
	xc, ac, wc, nc, uc := mat.DenseCopyOf(x), slices.Clone(assign), slices.Clone(w), slices.Clone(names), slices.Clone(units)
	r, err := Explain(x, assign, &Options{Weights: w, Names: names, Units: units})
	require.NoError(t, err)
	assert.True(t, mat.Equal(xc, x))
	assert.Equal(t, ac, assign)
	assert.Equal(t, wc, w)
	r.Names[0], r.Units[0] = "changed", "changed"
	assert.Equal(t, nc, names, "the report's names are its own")
	assert.Equal(t, uc, units)
}

func TestExplainBadInput(t *testing.T) {
	x, assign := stations(12, 1)
	inf := mat.DenseCopyOf(x)
	inf.Set(4, 2, math.Inf(-1))
	nan := mat.DenseCopyOf(x)
	nan.Set(0, 0, math.NaN())
	label := func(i, v int) []int {
		a := slices.Clone(assign)
		a[i] = v
		return a
	}
	huge := mat.NewDense(2, 1, []float64{math.MaxFloat64, math.MaxFloat64})
	cases := []struct {
		name   string
		x      mat.Matrix
		assign []int
		o      *Options
		want   error
	}{
		{"nil matrix", nil, assign, nil, ErrData},
		{"nil *mat.Dense", (*mat.Dense)(nil), assign, nil, ErrData},
		{"empty matrix", &mat.Dense{}, assign, nil, ErrData},
		{"-Inf value", inf, assign, nil, ErrData},
		{"NaN value", nan, assign, nil, ErrData},
		{"statistics overflow", huge, []int{0, 0}, nil, ErrData},
		{"no assignments", x, nil, nil, ErrAssignments},
		{"short assignments", x, assign[:11], nil, ErrAssignments},
		{"negative cluster", x, label(3, -1), nil, ErrAssignments},
		{"cluster not below K", x, assign, &Options{K: 2}, ErrAssignments},
		{"cluster not below n", x, label(0, 12), nil, ErrAssignments},
		{"negative K", x, assign, &Options{K: -1}, ErrOptions},
		{"K above rows", x, assign, &Options{K: 13}, ErrOptions},
		{"too few names", x, assign, &Options{Names: []string{"a"}}, ErrOptions},
		{"empty name", x, assign, &Options{Names: []string{"a", "b", "", "d", "e", "f"}}, ErrOptions},
		{"name with newline", x, assign, &Options{Names: []string{"a", "b\nc", "c", "d", "e", "f"}}, ErrOptions},
		{"too many units", x, assign, &Options{Units: make([]string, 7)}, ErrOptions},
		{"unit with tab", x, assign, &Options{Units: []string{"", "", "\t", "", "", ""}}, ErrOptions},
		{"noun with newline", x, assign, &Options{Noun: "rows\n"}, ErrOptions},
		{"negative MinShift", x, assign, &Options{MinShift: -0.5}, ErrOptions},
		{"NaN MinShift", x, assign, &Options{MinShift: math.NaN()}, ErrOptions},
		{"infinite MinShift", x, assign, &Options{MinShift: math.Inf(1)}, ErrOptions},
		{"short weights", x, assign, &Options{Weights: make([]float64, 11)}, ErrWeights},
		{"negative weight", x, assign, &Options{Weights: append(make([]float64, 11), -1)}, ErrWeights},
		{"all weights zero", x, assign, &Options{Weights: make([]float64, 12)}, ErrWeights},
		{"NaN weight", x, assign, &Options{Weights: append(make([]float64, 11), math.NaN())}, ErrWeights},
	}
	sentinels := []error{ErrData, ErrAssignments, ErrWeights, ErrOptions}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			r, err := Explain(tc.x, tc.assign, tc.o)
			require.ErrorIs(t, err, tc.want)
			assert.Nil(t, r)
			for _, s := range sentinels {
				if s != tc.want {
					assert.False(t, errors.Is(err, s), "wraps only %v, also %v", tc.want, s)
				}
			}
		})
	}
}

func TestReportJSON(t *testing.T) {
	x, assign := stations(80, 2)
	w := randomWeights(80, 2, false, true)
	r, err := Explain(x, assign, &Options{Names: bikeshare.Features(), Units: bikeshare.Units(), Weights: w, K: 6, MinShift: 0.8, Noun: "stations"})
	require.NoError(t, err)
	b, err := json.Marshal(r)
	require.NoError(t, err)
	var back Report
	require.NoError(t, json.Unmarshal(b, &back))
	assert.Equal(t, *r, back, "round trip")

	// The documented, stable field names.
	var doc map[string]json.RawMessage
	require.NoError(t, json.Unmarshal(b, &doc))
	assert.ElementsMatch(t, []string{"names", "units", "noun", "rows", "weight", "weighted", "min_shift", "overall", "clusters"}, keys(doc))
	var clusters []map[string]json.RawMessage
	require.NoError(t, json.Unmarshal(doc["clusters"], &clusters))
	require.Len(t, clusters, 6)
	assert.ElementsMatch(t, []string{"cluster", "rows", "weight", "share", "features", "shift", "standouts"}, keys(clusters[0]))
	assert.ElementsMatch(t, []string{"cluster", "rows", "weight", "share"}, keys(clusters[5]), "an empty cluster")
	var summaries []map[string]json.RawMessage
	require.NoError(t, json.Unmarshal(doc["overall"], &summaries))
	assert.ElementsMatch(t, []string{"mean", "sd", "median", "middle_half"}, keys(summaries[0]))
	assert.JSONEq(t, `0.8`, string(doc["min_shift"]))

	// Without units the field is left out, and the round trip still holds.
	r, err = Explain(x, assign, nil)
	require.NoError(t, err)
	b, err = json.Marshal(r)
	require.NoError(t, err)
	assert.NotContains(t, string(b), `"units"`)
	back = Report{}
	require.NoError(t, json.Unmarshal(b, &back))
	assert.Equal(t, *r, back)
}

func keys(m map[string]json.RawMessage) []string {
	var out []string
	for k := range m {
		out = append(out, k)
	}
	return out
}
