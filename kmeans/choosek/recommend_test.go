package choosek

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/validate"
)

// TestRecommendRule applies the documented rule to hand-made evidence;
// every expected score is worked out in the comments.
func TestRecommendRule(t *testing.T) {
	nan := math.NaN()
	stab := func(minJ float64) *Stability {
		return &Stability{K: 2, Resamples: 4, Fraction: 0.8, Jaccard: []float64{1, minJ}, Drawn: []int{4, 4}, Lost: []int{0, 0}, MeanARI: minJ}
	}
	point := func(k int, sil, db, ch float64, st *Stability) Point {
		return Point{K: k, Cost: 100 / float64(k), Silhouette: validate.Estimate{Mean: sil, Lo: sil, Hi: sil}, DaviesBouldin: db, CalinskiHarabasz: ch, Dunn: nan, Gap: nan, GapSE: nan, Stability: st}
	}
	none := curveEvidence{pref: Preference{Note: "off"}}
	curve := func(k int, scores ...float64) curveEvidence {
		return curveEvidence{pref: Preference{K: k, Note: "hand-made"}, scores: scores}
	}
	// Three ks 2, 3, 4 with silhouette 0.5, 0.7, 0.6 → scores 0, 1, 0.5;
	// Davies–Bouldin 0.9, 0.5, 0.6 → (0.9−v)/0.4 = 0, 1, 0.75;
	// Calinski–Harabasz 100, 300, 200 → 0, 1, 0.5; a knee at 3 (no score at
	// the ends). Combined: k=2 (0+0+0)/3 = 0, k=3 (1+1+1+1)/4 = 1,
	// k=4 (0.5+0.75+0.5)/3 = 0.5833.
	three := func(s2, s3, s4 *Stability) []Point {
		return []Point{point(2, 0.5, 0.9, 100, s2), point(3, 0.7, 0.5, 300, s3), point(4, 0.6, 0.6, 200, s4)}
	}
	knee3 := curve(3, nan, 1, nan)
	cases := []struct {
		name       string
		points     []Point
		knee, gap  curveEvidence
		stability  bool
		want       int
		clear      bool
		combined   []float64 // per point; NaN for k = 1
		admissible []bool
	}{
		{
			name: "agreement on a reproduced k", points: three(stab(0.9), stab(0.95), stab(0.8)), knee: knee3, gap: none, stability: true,
			want: 3, clear: true, combined: []float64{0, 1, 1.75 / 3}, admissible: []bool{true, true, true},
		},
		{
			name: "a k with a cluster not reproduced is passed over", points: three(stab(0.9), stab(0.5), stab(0.8)), knee: knee3, gap: none, stability: true,
			want: 4, clear: false, combined: []float64{0, 1, 1.75 / 3}, admissible: []bool{true, false, true},
		},
		{
			name: "partly reproduced is admissible but not clear", points: three(stab(0.9), stab(0.7), stab(0.8)), knee: knee3, gap: none, stability: true,
			want: 3, clear: false, combined: []float64{0, 1, 1.75 / 3}, admissible: []bool{true, true, true},
		},
		{
			name: "nothing admissible: the best combined score, flagged", points: three(stab(0.3), stab(0.2), stab(0.5)), knee: knee3, gap: none, stability: true,
			want: 3, clear: false, combined: []float64{0, 1, 1.75 / 3}, admissible: []bool{false, false, false},
		},
		{
			// Equal values everywhere: every score is 1, the tie goes to 2.
			name:   "equal scores go to the smaller k",
			points: []Point{point(2, 0.7, 0.5, 300, nil), point(3, 0.7, 0.5, 300, nil)}, knee: none, gap: none,
			want: 2, clear: true, combined: []float64{1, 1}, admissible: []bool{true, true},
		},
		{
			// k = 1..4, silhouette 0.3, 0.2, 0.1 → 1, 0.5, 0; Davies–Bouldin
			// 0.9, 0.5, 0.6 → 0, 1, 0.75; Calinski–Harabasz 100, 300, 350 →
			// 0, 0.8, 1; gap picks 1 and scores 1, 0.2, 0.4, 0 (hand-made).
			// Combined: k=2 (1+0+0+0.2)/4 = 0.3, k=3 (0.5+1+0.8+0.4)/4 =
			// 0.675, k=4 (0+0.75+1+0)/4 = 0.4375. The best, k = 3, has a
			// silhouette of 0.2: not clear, so the gap rule's k = 1 stands.
			name: "the gap rule's k = 1 stands against weak evidence",
			points: []Point{
				point(1, nan, nan, nan, nil), point(2, 0.3, 0.9, 100, stab(0.9)), point(3, 0.2, 0.5, 300, stab(0.9)), point(4, 0.1, 0.6, 350, stab(0.9)),
			},
			knee: none, gap: curve(1, 1, 0.2, 0.4, 0), stability: true,
			want: 1, clear: false, combined: []float64{nan, 0.3, 0.675, 0.4375}, admissible: []bool{true, true, true, true},
		},
		{
			// As above with silhouette 0.8, 0.6, 0.55 → 1, 0.2, 0 and
			// Davies–Bouldin 0.3, 0.5, 0.6 → 1, 0.333, 0; Calinski–Harabasz
			// 350, 300, 100 → 1, 0.8, 0; gap scores 1, 0.9, 0.4, 0.
			// Combined k=2 (1+1+1+0.9)/4 = 0.975: clear, so it overrides k = 1.
			name: "clear evidence overrides the gap rule's k = 1",
			points: []Point{
				point(1, nan, nan, nan, nil), point(2, 0.8, 0.3, 350, stab(0.9)), point(3, 0.6, 0.5, 300, stab(0.9)), point(4, 0.55, 0.6, 100, stab(0.9)),
			},
			knee: none, gap: curve(1, 1, 0.9, 0.4, 0), stability: true,
			want: 2, clear: true, combined: []float64{nan, 0.975, (0.2 + 1.0/3 + 0.8 + 0.4) / 4, 0}, admissible: []bool{true, true, true, true},
		},
		{
			name:   "only k = 1, no gap: the smallest swept k",
			points: []Point{point(1, nan, nan, nan, nil)}, knee: none, gap: none, stability: true,
			want: 1, clear: false, combined: []float64{nan}, admissible: []bool{true},
		},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := &Result{Points: c.points}
			r.recommend(c.knee, c.gap, c.stability)
			rec := r.Recommendation
			assert.Equal(t, c.want, rec.K)
			assert.Equal(t, c.clear, rec.Clear)
			require.Len(t, rec.Standings, len(c.points))
			require.Len(t, rec.Preferences, NumCriteria)
			for i, s := range rec.Standings {
				assert.Equal(t, c.points[i].K, s.K)
				if math.IsNaN(c.combined[i]) {
					assert.True(t, math.IsNaN(s.Combined), "k=%d combined %v", s.K, s.Combined)
				} else {
					assert.InDelta(t, c.combined[i], s.Combined, 1e-12, "k=%d", s.K)
				}
				assert.Equal(t, c.admissible[i], s.Admissible, "k=%d", s.K)
			}
			for i, p := range rec.Preferences {
				assert.Equal(t, Criterion(i), p.By)
				if p.K != 0 {
					assert.Contains(t, rec.Standing(p.K).First, p.By, "the preferred k lists its criterion")
				}
			}
			if st := rec.Standing(rec.K); rec.K >= 2 {
				assert.Equal(t, st.Combined, rec.Combined)
			}
			assert.Nil(t, rec.Standing(99))
			assert.NotEmpty(t, rec.Reasons)
			text := rec.String()
			assert.Contains(t, text, fmt.Sprintf("recommended k = %d", c.want))
			for _, banned := range []string{"votes", "vote "} {
				assert.NotContains(t, strings.ToLower(text), banned)
			}
		})
	}
}

func TestCriterionString(t *testing.T) {
	names := map[string]bool{}
	for c := range NumCriteria {
		names[Criterion(c).String()] = true
	}
	assert.Len(t, names, NumCriteria)
	assert.Equal(t, "Criterion(9)", Criterion(9).String())
}

// TestBar checks the agreement bar: eight cells, filled to the nearest
// eighth.
func TestBar(t *testing.T) {
	for _, c := range []struct {
		score float64
		want  string
	}{
		{0, "▁▁▁▁▁▁▁▁"}, {0.06, "▁▁▁▁▁▁▁▁"}, {0.07, "▇▁▁▁▁▁▁▁"}, {0.5, "▇▇▇▇▁▁▁▁"},
		{0.78, "▇▇▇▇▇▇▁▁"}, {1, "▇▇▇▇▇▇▇▇"}, {1.5, "▇▇▇▇▇▇▇▇"}, {-1, "▁▁▁▁▁▁▁▁"}, {math.NaN(), ""},
	} {
		assert.Equal(t, c.want, bar(c.score), "%v", c.score)
	}
}

// bruteScores recomputes every criterion's score of every swept k from the
// raw evidence of a sweep, following the package documentation with
// independent code: min–max for the indices, the bend below the chord of
// the running-minimum cost curve (geometry, as in validate's tests) for the
// knee, and the gap rule applied by hand for the gap.
func bruteScores(t *testing.T, r *Result) [][]float64 {
	t.Helper()
	n := len(r.Points)
	out := make([][]float64, NumCriteria)
	for c := range out {
		out[c] = make([]float64, n)
		for i := range out[c] {
			out[c][i] = math.NaN()
		}
	}
	index := func(c Criterion, v func(p Point) float64, higher bool) {
		var vals []float64
		for _, p := range r.Points {
			if x := v(p); !math.IsNaN(x) {
				vals = append(vals, x)
			}
		}
		if len(vals) == 0 {
			return
		}
		lo, hi := slices.Min(vals), slices.Max(vals)
		for i, p := range r.Points {
			x := v(p)
			switch {
			case math.IsNaN(x):
			case hi == lo:
				out[c][i] = 1
			case higher:
				out[c][i] = (x - lo) / (hi - lo)
			default:
				out[c][i] = (hi - x) / (hi - lo)
			}
		}
	}
	index(BySilhouette, func(p Point) float64 { return p.Silhouette.Mean }, true)
	index(ByDaviesBouldin, func(p Point) float64 { return p.DaviesBouldin }, false)
	index(ByCalinskiHarabasz, func(p Point) float64 { return p.CalinskiHarabasz }, true)
	index(ByDunn, func(p Point) float64 { return p.Dunn }, true)

	if r.Knee != 0 {
		x := make([]float64, n)
		y := make([]float64, n)
		best := math.Inf(1)
		for i, p := range r.Points {
			best = min(best, p.Cost)
			x[i], y[i] = float64(p.K), best
		}
		// Signed distance below the chord through the first and last
		// normalised points (a cross product); the knee's scores are ratios,
		// so the √2 between this distance and the bend cancels.
		dist := func(i int) float64 {
			nx := func(j int) float64 { return (x[j] - x[0]) / (x[n-1] - x[0]) }
			ny := func(j int) float64 { return (y[j] - y[n-1]) / (y[0] - y[n-1]) }
			ax, ay := nx(n-1)-nx(0), ny(n-1)-ny(0)
			bx, by := nx(i)-nx(0), ny(i)-ny(0)
			return -(ax*by - ay*bx) / math.Hypot(ax, ay)
		}
		ki := slices.IndexFunc(r.Points, func(p Point) bool { return p.K == r.Knee })
		for i := 1; i < n-1; i++ {
			out[ByKnee][i] = min(1, max(0, dist(i)/dist(ki)))
		}
	}
	if g := r.Gap; g != nil {
		hat := -1
		for i := 0; i+1 < len(g.Ks); i++ {
			if g.Gap[i] >= g.Gap[i+1]-g.SK[i+1] {
				hat = i
				break
			}
		}
		if hat >= 0 {
			lo := slices.Min(g.Gap)
			for i, v := range g.Gap {
				if v >= g.Gap[hat] {
					out[ByGap][i] = 1
				} else {
					out[ByGap][i] = (v - lo) / (g.Gap[hat] - lo)
				}
			}
		}
	}
	return out
}

// TestCombinedBruteForce recomputes the scores, the combined scores and the
// recommended k of real sweeps from their per-criterion values.
func TestCombinedBruteForce(t *testing.T) {
	for _, sc := range []struct {
		name    string
		centres [][]float64
		sizes   []int
		sd      float64
		opts    *Options
	}{
		{"four clusters", [][]float64{{0, 0}, {6, 0}, {0, 6}, {6, 6}}, []int{60, 40, 50, 70}, 1, &Options{GapReferences: 4, Stability: StabilityOptions{Resamples: 3}}},
		{"overlapping", [][]float64{{0, 0, 0}, {2.5, 0, 0}, {0, 3, 0}}, []int{80, 60, 60}, 1, &Options{GapReferences: 4, Stability: StabilityOptions{Resamples: 3}}},
		{"no gap, no stability", [][]float64{{0, 0}, {5, 5}, {10, 0}}, []int{50, 50, 50}, 1.5, &Options{SkipGap: true, SkipStability: true}},
	} {
		t.Run(sc.name, func(t *testing.T) {
			x, _ := sweepMixture(sc.centres, sc.sizes, sc.sd, 7)
			r, err := Sweep(context.Background(), kmeans.Problem{Data: x}, sweepRange(1, 7), &kmeans.Settings{Seed: 3, Restarts: 4}, nil, sc.opts)
			require.NoError(t, err)
			want := bruteScores(t, r)
			rec := r.Recommendation
			bestK, bestScore := 0, math.Inf(-1)
			for i, s := range rec.Standings {
				var sum float64
				m := 0
				for c := range NumCriteria {
					w, got := want[c][i], s.Scores[c]
					if math.IsNaN(w) {
						assert.True(t, math.IsNaN(got), "k=%d %v: want no score, got %v", s.K, Criterion(c), got)
						continue
					}
					assert.InDelta(t, w, got, 1e-12, "k=%d %v", s.K, Criterion(c))
					sum += w
					m++
				}
				if s.K == 1 {
					assert.True(t, math.IsNaN(s.Combined))
					continue
				}
				require.Positive(t, m)
				assert.InDelta(t, sum/float64(m), s.Combined, 1e-12, "k=%d", s.K)
				st := r.Points[i].Stability
				admissible := st == nil || slices.Min(st.Jaccard) >= 0.6
				assert.Equal(t, admissible, s.Admissible, "k=%d", s.K)
				if admissible && sum/float64(m) > bestScore {
					bestK, bestScore = s.K, sum/float64(m)
				}
			}
			if rec.Preferences[ByGap].K != 1 {
				assert.Equal(t, bestK, rec.K, "the admissible k ≥ 2 with the best combined score")
			}
		})
	}
}

// TestRecommendMixtures checks the recommendation finds the generating
// number of clusters of clear synthetic mixtures (well-separated spherical
// Gaussians, invented data) and calls the structure clear.
func TestRecommendMixtures(t *testing.T) {
	seeds := 3
	if sweepRace || testing.Short() {
		seeds = 1
	}
	for _, sc := range []struct {
		name    string
		centres [][]float64
		sizes   []int
	}{
		{"two in 2-D", [][]float64{{0, 0}, {8, 3}}, []int{120, 80}},
		{"three unequal in 2-D", [][]float64{{0, 0}, {0, 9}, {9, -4}}, []int{40, 60, 150}},
		{"four in 3-D", [][]float64{{0, 0, 0}, {9, 0, 0}, {0, 9, 0}, {0, 0, 9}}, []int{50, 70, 60, 80}},
		{"six in 5-D", [][]float64{{0, 0, 0, 0, 0}, {10, 0, 0, 0, 0}, {0, 10, 0, 0, 0}, {0, 0, 10, 0, 0}, {0, 0, 0, 10, 0}, {0, 0, 0, 0, 10}}, []int{40, 40, 50, 50, 60, 60}},
	} {
		t.Run(sc.name, func(t *testing.T) {
			for seed := range uint64(seeds) {
				x, _ := sweepMixture(sc.centres, sc.sizes, 1, 50+seed)
				r, err := Sweep(context.Background(), kmeans.Problem{Data: x}, sweepRange(1, 9), &kmeans.Settings{Seed: seed, Restarts: 4}, nil,
					&Options{GapReferences: 5, Stability: StabilityOptions{Resamples: 3}})
				require.NoError(t, err)
				rec := r.Recommendation
				if !assert.Equal(t, len(sc.sizes), rec.K, "seed %d", seed) || !assert.True(t, rec.Clear, "seed %d", seed) {
					var b strings.Builder
					r.WriteTo(&b)
					t.Log(b.String())
				}
			}
		})
	}
}

// TestRecommendUniform checks the recommendation does not claim a clear
// structure on uniform data (the null model of Tibshirani et al. 2001):
// either it says k = 1 or it calls the evidence weak, with and without the
// gap statistic.
func TestRecommendUniform(t *testing.T) {
	seeds := 3
	if sweepRace || testing.Short() {
		seeds = 1
	}
	for _, sc := range []struct {
		name string
		n, d int
		opts *Options
	}{
		{"200 × 10", 200, 10, &Options{GapReferences: 5, Stability: StabilityOptions{Resamples: 3}}},
		{"300 × 2", 300, 2, &Options{GapReferences: 5, Stability: StabilityOptions{Resamples: 3}}},
		{"300 × 2, no gap", 300, 2, &Options{SkipGap: true, Stability: StabilityOptions{Resamples: 3}}},
	} {
		t.Run(sc.name, func(t *testing.T) {
			ones := 0
			for seed := range uint64(seeds) {
				r, err := Sweep(context.Background(), kmeans.Problem{Data: sweepUniform(sc.n, sc.d, 70+seed)}, sweepRange(1, 8), &kmeans.Settings{Seed: seed, Restarts: 4}, nil, sc.opts)
				require.NoError(t, err)
				rec := r.Recommendation
				t.Logf("seed %d: k = %d, combined %.2f, clear %v", seed, rec.K, rec.Combined, rec.Clear)
				assert.False(t, rec.Clear, "seed %d: uniform data has no clear structure", seed)
				if rec.K == 1 {
					ones++
					continue
				}
				assert.Contains(t, rec.String(), "weak evidence")
			}
			if sc.opts.SkipGap {
				assert.Zero(t, ones, "without the gap statistic nothing speaks for k = 1")
			}
		})
	}
}
