package profile

import (
	"context"
	"encoding/json"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
)

// hyndmanFan2 is definition 2 of R. J. Hyndman and Y. Fan, "Sample
// quantiles in statistical packages", The American Statistician 50(4),
// 1996, written from the paper's formula: with np = n·p, j = ⌊np⌋ and
// g = np − j, Q(p) = x_(j+1) if g > 0 and (x_(j) + x_(j+1))/2 if g = 0
// (1-based order statistics, clamped to the sample).
func hyndmanFan2(sorted []float64, p float64) float64 {
	n := len(sorted)
	np := float64(n) * p
	j := int(math.Floor(np))
	at := func(i int) float64 { return sorted[min(n, max(1, i))-1] }
	if np-float64(j) > 0 {
		return at(j + 1)
	}
	return (at(j) + at(j+1)) / 2
}

func TestQuantileWorked(t *testing.T) {
	cases := []struct {
		vals, ws []float64
		p, want  float64
	}{
		// Hyndman & Fan (1996) definition 2 by hand.
		{[]float64{1, 2, 3, 4}, nil, 0.5, 2.5},
		{[]float64{1, 2, 3, 4}, nil, 0.25, 1.5},
		{[]float64{1, 2, 3, 4}, nil, 0.75, 3.5},
		{[]float64{1, 2, 3, 4, 5}, nil, 0.5, 3},
		{[]float64{1, 2, 3, 4, 5}, nil, 0.25, 2},
		{[]float64{7}, nil, 0.5, 7},
		{[]float64{1, 2, 3, 4}, nil, 0, 1},
		{[]float64{1, 2, 3, 4}, nil, 1, 4},
		// Integer weights count as repeated values: 1, 2, 3, 3.
		{[]float64{1, 2, 3}, []float64{1, 1, 2}, 0.5, 2.5},
		{[]float64{1, 2, 3}, []float64{1, 1, 2}, 0.75, 3},
		// Half the weight on 10.
		{[]float64{0, 10}, []float64{1, 1}, 0.5, 5},
		{[]float64{0, 10}, []float64{1, 3}, 0.5, 10},
	}
	for _, c := range cases {
		assert.Equal(t, c.want, quantile(c.p, c.vals, c.ws), "%v %v p=%v", c.vals, c.ws, c.p)
	}
	assert.Panics(t, func() { quantile(0.5, nil, nil) })
	assert.Panics(t, func() { quantile(1.5, []float64{1}, nil) })
	assert.Panics(t, func() { quantile(0.5, []float64{2, 1}, nil) })
	assert.Panics(t, func() { quantile(0.5, []float64{1, 2}, []float64{1}) })
}

// profileData returns invented rows and a clustering of them.
func profileData(t *testing.T, n int, seed uint64) (*mat.Dense, *kmeans.Result) {
	t.Helper()
	x, _ := sweepMixture([][]float64{{0, 100, -5}, {3, 140, -5}, {-2, 80, 5}}, []int{n / 3, n / 3, n - 2*(n/3)}, 2, seed)
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: 3}, &kmeans.Settings{Seed: seed}, nil)
	require.NoError(t, err)
	return x, res
}

// TestDescribeAgainstReferences checks every statistic against gonum stat
// (means, standard deviations, weighted empirical quantiles) and a brute
// force of Hyndman & Fan's definition 2 (unweighted quantiles).
func TestDescribeAgainstReferences(t *testing.T) {
	x, res := profileData(t, 97, 3)
	n, d := x.Dims()
	rnd := rand.New(rand.NewPCG(8, 8))
	weights := make([]float64, n)
	for i := range weights {
		weights[i] = 0.5 + 1.5*rnd.Float64() // continuous: no cumulative weight hits p·W exactly
	}
	for _, w := range [][]float64{nil, weights} {
		pf, err := Describe(x, res, &ProfileOptions{Weights: w, Features: []string{"a", "b", "c"}})
		require.NoError(t, err)
		require.Len(t, pf.Clusters, 3)
		groups := map[int][]int{-1: nil}
		for i, a := range res.Assignments {
			groups[a] = append(groups[a], i)
			groups[-1] = append(groups[-1], i)
		}
		check := func(s FeatureSummary, rows []int, j int) {
			vals := make([]float64, len(rows))
			var ws []float64
			if w != nil {
				ws = make([]float64, len(rows))
			}
			for t, i := range rows {
				vals[t] = x.At(i, j)
				if w != nil {
					ws[t] = w[i]
				}
			}
			mean, sd := stat.PopMeanStdDev(vals, ws)
			assert.InDelta(t, mean, s.Mean, 1e-12*math.Abs(mean)+1e-12)
			assert.InDelta(t, sd, s.StdDev, 1e-9*sd)
			stat.SortWeighted(vals, ws)
			assert.Equal(t, vals[0], s.Min)
			assert.Equal(t, vals[len(vals)-1], s.Max)
			for _, q := range []struct {
				p   float64
				got float64
			}{{0.25, s.Q1}, {0.5, s.Median}, {0.75, s.Q3}} {
				want := hyndmanFan2(vals, q.p)
				if w != nil {
					want = stat.Quantile(q.p, stat.Empirical, vals, ws)
				}
				assert.Equal(t, want, q.got, "p=%v weighted=%v", q.p, w != nil)
			}
		}
		var total float64
		for i := range n {
			total += 1
			if w != nil {
				total += w[i] - 1
			}
		}
		assert.InDelta(t, total, pf.Weight, 1e-9)
		for j := range d {
			check(pf.Overall[j], groups[-1], j)
		}
		for c, cp := range pf.Clusters {
			assert.Equal(t, c, cp.Cluster)
			assert.Equal(t, len(groups[c]), cp.Size)
			assert.Equal(t, res.Sizes[c], cp.Size)
			var cw float64
			for _, i := range groups[c] {
				cw += 1
				if w != nil {
					cw += w[i] - 1
				}
			}
			assert.InDelta(t, cw, cp.Weight, 1e-9)
			assert.InDelta(t, cw/total, cp.Share, 1e-12)
			for j := range d {
				check(cp.Features[j], groups[c], j)
				wantZ := (cp.Features[j].Mean - pf.Overall[j].Mean) / pf.Overall[j].StdDev
				assert.InDelta(t, wantZ, cp.Z[j], 1e-12)
			}
			// Apart: exactly the features with |z| ≥ 0.5, by decreasing |z|.
			var apart []int
			for j := range d {
				if math.Abs(cp.Z[j]) >= DefaultApartThreshold {
					apart = append(apart, j)
				}
			}
			slices.SortStableFunc(apart, func(a, b int) int {
				switch za, zb := math.Abs(cp.Z[a]), math.Abs(cp.Z[b]); {
				case za > zb:
					return -1
				case za < zb:
					return 1
				}
				return 0
			})
			got := make([]int, len(cp.Apart))
			for i, a := range cp.Apart {
				got[i] = a.Feature
				assert.Equal(t, []string{"a", "b", "c"}[a.Feature], a.Name)
				assert.Equal(t, cp.Z[a.Feature], a.Z)
			}
			assert.Equal(t, apart, got)
		}
	}
}

// TestDescribeIntegerWeights: an integer weight is the same as repeating
// the row, for every statistic.
func TestDescribeIntegerWeights(t *testing.T) {
	x, res := profileData(t, 30, 5)
	n, d := x.Dims()
	w := make([]float64, n)
	var rep []float64
	var repAssign []int
	for i := range n {
		w[i] = float64(1 + i%3)
		for range int(w[i]) {
			rep = append(rep, x.RawRowView(i)...)
			repAssign = append(repAssign, res.Assignments[i])
		}
	}
	pw, err := Describe(x, res, &ProfileOptions{Weights: w})
	require.NoError(t, err)
	repRes := *res
	repRes.Assignments = repAssign
	pr, err := Describe(mat.NewDense(len(repAssign), d, rep), &repRes, nil)
	require.NoError(t, err)
	for c := range pw.Clusters {
		assert.Equal(t, pr.Clusters[c].Weight, pw.Clusters[c].Weight)
		for j := range d {
			a, b := pw.Clusters[c].Features[j], pr.Clusters[c].Features[j]
			assert.Equal(t, b.Median, a.Median)
			assert.Equal(t, b.Q1, a.Q1)
			assert.Equal(t, b.Q3, a.Q3)
			assert.InDelta(t, b.Mean, a.Mean, 1e-12*math.Abs(b.Mean)+1e-12)
			assert.InDelta(t, b.StdDev, a.StdDev, 1e-9)
		}
	}
}

// modelWithK returns a clustering result of x with k clusters whose
// assignments are replaced by assign.
func modelWithK(t *testing.T, x *mat.Dense, k int, assign []int) *kmeans.Result {
	t.Helper()
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: k}, &kmeans.Settings{Seed: 1, Restarts: 1}, nil)
	require.NoError(t, err)
	out := *res
	out.Assignments = assign
	return &out
}

func TestDescribeZeroWeights(t *testing.T) {
	x := mat.NewDense(5, 1, []float64{1, 2, 3, 100, 200})
	res := modelWithK(t, x, 2, []int{0, 0, 0, 1, 1})
	pf, err := Describe(x, res, &ProfileOptions{Weights: []float64{1, 1, 0, 0, 0}})
	require.NoError(t, err)
	c0, c1 := pf.Clusters[0], pf.Clusters[1]
	assert.Equal(t, 3, c0.Size)
	assert.Equal(t, 2.0, c0.Weight)
	assert.Equal(t, 1.0, c0.Share)
	assert.Equal(t, 1.5, c0.Features[0].Mean, "the zero-weight row is left out")
	assert.Equal(t, 2.0, c0.Features[0].Max)
	// All weights zero: summarised unweighted, share 0.
	assert.Equal(t, 0.0, c1.Share)
	assert.Equal(t, 150.0, c1.Features[0].Mean)
	assert.Equal(t, 150.0, c1.Features[0].Median)
}

func TestDescribeEmptyClusterAndConstantFeature(t *testing.T) {
	x := mat.NewDense(4, 2, []float64{1, 5, 2, 5, 9, 5, 10, 5})
	res := modelWithK(t, x, 3, []int{0, 0, 2, 2})
	pf, err := Describe(x, res, nil)
	require.NoError(t, err)
	assert.Equal(t, []string{"x0", "x1"}, pf.Features)
	assert.Zero(t, pf.Clusters[1].Size)
	assert.Equal(t, FeatureSummary{}, pf.Clusters[1].Features[0])
	assert.Equal(t, []float64{0, 0}, pf.Clusters[1].Z)
	assert.Zero(t, pf.Clusters[0].Z[1], "constant feature: z is 0")
	assert.Less(t, pf.Clusters[0].Z[0], -0.5)
	require.Len(t, pf.Clusters[0].Apart, 1)
	assert.Equal(t, 0, pf.Clusters[0].Apart[0].Feature)
}

func TestDescribeBadInput(t *testing.T) {
	x, res := profileData(t, 12, 1)
	bad := mat.DenseCopyOf(x)
	bad.Set(3, 1, math.Inf(1))
	short := *res
	short.Assignments = res.Assignments[:5]
	wrong := *res
	wrong.Assignments = slices.Clone(res.Assignments)
	wrong.Assignments[2] = 3
	cases := []struct {
		name string
		x    mat.Matrix
		res  *kmeans.Result
		o    *ProfileOptions
		want error
	}{
		{"nil data", nil, res, nil, kmeans.ErrData},
		{"nil result", x, nil, nil, kmeans.ErrData},
		{"nil model", x, &kmeans.Result{Assignments: res.Assignments}, nil, kmeans.ErrData},
		{"infinite value", bad, res, nil, kmeans.ErrData},
		{"short assignments", x, &short, nil, kmeans.ErrData},
		{"label out of range", x, &wrong, nil, kmeans.ErrData},
		{"wrong width", x.Slice(0, 12, 0, 2), res, nil, kmeans.ErrDimension},
		{"feature names", x, res, &ProfileOptions{Features: []string{"a"}}, kmeans.ErrDimension},
		{"units", x, res, &ProfileOptions{Units: []string{"a", "b"}}, kmeans.ErrDimension},
		{"weights length", x, res, &ProfileOptions{Weights: []float64{1}}, kmeans.ErrWeights},
		{"negative weight", x, res, &ProfileOptions{Weights: append(make([]float64, 11), -1)}, kmeans.ErrWeights},
		{"negative threshold", x, res, &ProfileOptions{Threshold: -1}, kmeans.ErrSettings},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			pf, err := Describe(c.x, c.res, c.o)
			require.ErrorIs(t, err, c.want)
			assert.Nil(t, pf)
		})
	}
}

func TestProfileJSONAndText(t *testing.T) {
	x, res := profileData(t, 60, 2)
	before := mat.DenseCopyOf(x)
	o := &ProfileOptions{Features: []string{"trips_per_day", "elevation_m", "imbalance"}, Units: []string{"trips/day", "m", "bikes/day"}, Threshold: 0.8}
	pf, err := Describe(x, res, o)
	require.NoError(t, err)
	require.True(t, mat.Equal(before, x))
	b, err := json.Marshal(pf)
	require.NoError(t, err)
	for _, key := range []string{`"features"`, `"units"`, `"clusters"`, `"median"`, `"q1"`, `"apart"`, `"share"`, `"threshold":0.8`} {
		assert.Contains(t, string(b), key)
	}
	var back Profile
	require.NoError(t, json.Unmarshal(b, &back))
	assert.Equal(t, *pf, back)

	text := pf.String()
	for _, want := range []string{"60 rows", "all rows", "cluster 0:", "cluster 2:", "sets it apart (|z| ≥ 0.8)", "trips_per_day", "trips/day", "median"} {
		assert.Contains(t, text, want)
	}
	assert.Len(t, pf.Apart(), 3)
	for c, line := range pf.Apart() {
		if len(pf.Clusters[c].Apart) == 0 {
			assert.Contains(t, line, "nothing")
			continue
		}
		assert.True(t, strings.HasPrefix(line, "high ") || strings.HasPrefix(line, "low "), line)
	}
	_, err = pf.WriteTo(failWriter{})
	require.Error(t, err)
}

func TestDecimalsFor(t *testing.T) {
	for _, c := range []struct {
		sd   float64
		want int
	}{{150, 0}, {15, 1}, {1.5, 2}, {0.15, 3}, {0.0015, 5}, {0, 2}, {math.Inf(1), 2}, {1e-20, 8}} {
		assert.Equal(t, c.want, decimalsFor(c.sd), "%v", c.sd)
	}
}
