package choosek

import (
	"fmt"
	"math"
	"strings"

	"github.com/centroidlab/centroid/validate"
)

// Criterion names one line of evidence in a Recommendation.
type Criterion int

const (
	// BySilhouette scores the mean silhouette (higher is better).
	BySilhouette Criterion = iota
	// ByDaviesBouldin scores the Davies–Bouldin index (lower is better).
	ByDaviesBouldin
	// ByCalinskiHarabasz scores the Caliński–Harabasz ratio (higher is
	// better).
	ByCalinskiHarabasz
	// ByDunn scores Dunn's index (higher is better).
	ByDunn
	// ByKnee scores the bend of the cost curve; Kneedle's knee scores 1.
	ByKnee
	// ByGap scores the gap statistic; the k of the gap rule of Tibshirani
	// et al. scores 1.
	ByGap
)

// NumCriteria is the number of criteria; Criterion values run from 0 to
// NumCriteria−1 and index Standing.Scores and Recommendation.Preferences.
const NumCriteria = int(ByGap) + 1

// String returns the criterion's name.
func (c Criterion) String() string {
	switch c {
	case BySilhouette:
		return "silhouette"
	case ByDaviesBouldin:
		return "Davies–Bouldin"
	case ByCalinskiHarabasz:
		return "Calinski–Harabasz"
	case ByDunn:
		return "Dunn"
	case ByKnee:
		return "knee"
	case ByGap:
		return "gap"
	}
	return fmt.Sprintf("Criterion(%d)", int(c))
}

// Thresholds of the recommendation rule (see the package documentation).
const (
	// clearCombined is the combined score a k needs for clear evidence.
	clearCombined = 0.8
	// clearSilhouette is the mean silhouette a k needs for clear evidence.
	// L. Kaufman and P. J. Rousseeuw, Finding Groups in Data, Wiley 1990,
	// read a mean silhouette above 0.5 as a reasonable structure and 0.26
	// to 0.5 as a weak one that could be artificial (from memory; common
	// practice).
	clearSilhouette = 0.5
)

// Preference is one criterion's reading of a sweep.
type Preference struct {
	By Criterion
	// K is the swept k the criterion ranks first (its score is 1 there), 0
	// if the criterion scores no swept k: not computed, undefined, no knee
	// in the cost curve, or no k meeting the gap rule.
	K int
	// Note explains the preference, or why there is none.
	Note string
}

// Standing is how one swept k fares under the recommendation rule.
type Standing struct {
	// K is the number of clusters.
	K int
	// Scores holds one score per criterion, indexed by Criterion, on the
	// common scale [0, 1] where 1 is that criterion's best swept k; NaN
	// where the criterion is undefined at K or was not computed. The
	// mapping of every criterion is in the package documentation.
	Scores []float64
	// Combined is the mean of the scores defined at K: the agreement of
	// the criteria on K. It is NaN for K = 1, for which only the gap
	// statistic can speak, and when no score is defined.
	Combined float64
	// First lists the criteria whose preferred k is K, in Criterion order.
	First []Criterion
	// Admissible reports whether K passed the stability check: K = 1,
	// stability not measured, or no cluster not reproduced (every
	// cluster's mean Jaccard at least [validate.JaccardPartly], 0.6).
	Admissible bool
}

// Recommendation is Sweep's suggested number of clusters with the
// evidence behind it. It is a heuristic (the rule is in the package
// documentation): the criteria answer different questions, and when they
// disagree the data rarely has one right k.
type Recommendation struct {
	// K is the recommended number of clusters.
	K int
	// Combined is the combined score of K (NaN for K = 1).
	Combined float64
	// Clear reports clear evidence of cluster structure at K: K ≥ 2, a
	// combined score of at least 0.8, a mean silhouette of at least 0.5,
	// and, when stability was measured, every cluster reproduced (mean
	// Jaccard at least [validate.JaccardReproduced], 0.75).
	Clear bool
	// Preferences holds one entry per criterion, in Criterion order.
	Preferences []Preference
	// Standings holds one entry per swept k, in increasing k.
	Standings []Standing
	// Reasons explains the choice, one sentence per entry.
	Reasons []string
}

// Standing returns the standing of k, or nil if k was not swept.
func (r *Recommendation) Standing(k int) *Standing {
	for i := range r.Standings {
		if r.Standings[i].K == k {
			return &r.Standings[i]
		}
	}
	return nil
}

// minMaxScores maps an index onto [0, 1] over the swept ks: (v−min)/(max−min)
// when higher is better, (max−v)/(max−min) when lower is better. NaN stays
// NaN; an infinite value in the better direction scores 1 and one in the
// worse direction 0, the finite values being normalised among themselves;
// if all finite values are equal they score 1.
func minMaxScores(v []float64, higher bool) []float64 {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, x := range v {
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			lo, hi = min(lo, x), max(hi, x)
		}
	}
	out := make([]float64, len(v))
	for i, x := range v {
		switch {
		case math.IsNaN(x):
			out[i] = math.NaN()
		case math.IsInf(x, 0):
			if (x > 0) == higher {
				out[i] = 1
			}
		case hi == lo:
			out[i] = 1
		case higher:
			out[i] = (x - lo) / (hi - lo)
		default:
			out[i] = (hi - x) / (hi - lo)
		}
	}
	return out
}

// bestScore returns the index of the highest raw value of an index in its
// better direction (ties to the smaller k), or −1 if none is defined.
func bestScore(v []float64, higher bool) int {
	best := -1
	for i, x := range v {
		if math.IsNaN(x) {
			continue
		}
		if best < 0 || (higher && x > v[best]) || (!higher && x < v[best]) {
			best = i
		}
	}
	return best
}

// kneeScores scores every swept k by its bend below the cost curve's chord
// relative to the knee's bend, clipped to [0, 1]; NaN at the two ends of
// the swept range (a bend is not defined there) and everywhere if there is
// no knee (knee < 0).
func kneeScores(bend []float64, knee int) []float64 {
	out := make([]float64, len(bend))
	for i := range out {
		out[i] = math.NaN()
		if knee >= 0 && i > 0 && i < len(bend)-1 {
			out[i] = clip01(bend[i] / bend[knee])
		}
	}
	return out
}

// gapScores scores every swept k by its gap relative to the gap at the k
// chosen by the gap rule (index best): 1 where the gap is at least as high
// as there, else (Gap(k) − min Gap)/(Gap(best) − min Gap). All NaN if the
// rule chose no k (best < 0).
func gapScores(gap []float64, best int) []float64 {
	out := make([]float64, len(gap))
	lo := math.Inf(1)
	for _, g := range gap {
		lo = min(lo, g)
	}
	for i, g := range gap {
		switch {
		case best < 0 || math.IsNaN(g):
			out[i] = math.NaN()
		case g >= gap[best]:
			out[i] = 1
		default:
			out[i] = (g - lo) / (gap[best] - lo)
		}
	}
	return out
}

func clip01(x float64) float64 { return min(1, max(0, x)) }

// curveEvidence is what the knee or the gap rule contributes: its
// preference and its score of every swept k.
type curveEvidence struct {
	pref   Preference
	scores []float64
}

// recommend fills r.Recommendation from the points, the knee and gap
// evidence and the stability of every k (see the package documentation).
// stability says whether stability was measured.
func (r *Result) recommend(knee, gap curveEvidence, stability bool) {
	n := len(r.Points)
	rec := &r.Recommendation
	*rec = Recommendation{}
	scores := make([][]float64, NumCriteria)
	rec.Preferences = make([]Preference, NumCriteria)
	for _, ix := range []struct {
		by     Criterion
		value  func(*Point) float64
		higher bool
	}{
		{BySilhouette, func(p *Point) float64 { return p.Silhouette.Mean }, true},
		{ByDaviesBouldin, func(p *Point) float64 { return p.DaviesBouldin }, false},
		{ByCalinskiHarabasz, func(p *Point) float64 { return p.CalinskiHarabasz }, true},
		{ByDunn, func(p *Point) float64 { return p.Dunn }, true},
	} {
		v := make([]float64, n)
		for i := range r.Points {
			v[i] = ix.value(&r.Points[i])
		}
		scores[ix.by] = minMaxScores(v, ix.higher)
		rec.Preferences[ix.by] = r.indexPreference(ix.by, v, ix.higher)
	}
	scores[ByKnee], rec.Preferences[ByKnee] = knee.scores, knee.pref
	scores[ByGap], rec.Preferences[ByGap] = gap.scores, gap.pref
	rec.Preferences[ByKnee].By, rec.Preferences[ByGap].By = ByKnee, ByGap

	rec.Standings = make([]Standing, n)
	for i, p := range r.Points {
		s := Standing{K: p.K, Scores: make([]float64, NumCriteria), Combined: math.NaN()}
		var sum float64
		defined := 0
		for c := range NumCriteria {
			s.Scores[c] = math.NaN()
			if scores[c] != nil {
				s.Scores[c] = scores[c][i]
			}
			if !math.IsNaN(s.Scores[c]) {
				sum += s.Scores[c]
				defined++
			}
			if rec.Preferences[c].K == p.K {
				s.First = append(s.First, Criterion(c))
			}
		}
		if p.K >= 2 && defined > 0 {
			s.Combined = sum / float64(defined)
		}
		s.Admissible = p.K == 1 || p.Stability == nil || p.Stability.Reading() != validate.NotReproduced
		rec.Standings[i] = s
	}

	// The candidate: the admissible k ≥ 2 with the best combined score,
	// ties to the smaller k; failing that, the best of all k ≥ 2.
	best := func(admissibleOnly bool, except int) int {
		b := -1
		for i, s := range rec.Standings {
			if s.K < 2 || math.IsNaN(s.Combined) || (admissibleOnly && !s.Admissible) || s.K == except {
				continue
			}
			if b < 0 || s.Combined > rec.Standings[b].Combined {
				b = i
			}
		}
		return b
	}
	cand := best(true, 0)
	admissible := cand >= 0
	if !admissible {
		cand = best(false, 0)
	}
	gapOne := rec.Preferences[ByGap].K == 1
	switch {
	case cand < 0 && gapOne:
		rec.K = 1
		rec.Reasons = append(rec.Reasons, "the gap rule finds no cluster structure (k = 1) and no criterion scores a larger swept k")
	case cand < 0:
		rec.K = r.Points[0].K
		rec.Reasons = append(rec.Reasons, fmt.Sprintf("no criterion scores any swept k ≥ 2; k = %d is the smallest swept k", rec.K))
	default:
		c := rec.Standings[cand]
		rec.K, rec.Combined, rec.Clear = c.K, c.Combined, r.clear(&r.Points[cand], c.Combined)
		switch {
		case gapOne && !rec.Clear:
			rec.Reasons = append(rec.Reasons, fmt.Sprintf("the gap rule finds no cluster structure (k = 1), and the best k ≥ 2, k = %d with a combined score of %.2f, does not show clear structure: the data may have no clusters", c.K, c.Combined))
			rec.K, rec.Combined, rec.Clear = 1, math.NaN(), false
		case !admissible:
			rec.Reasons = append(rec.Reasons, fmt.Sprintf("no k ≥ 2 passed the stability check; k = %d has the best combined score (%.2f) but a cluster the resamples do not reproduce: treat it with care", c.K, c.Combined))
		default:
			rec.Reasons = append(rec.Reasons, fmt.Sprintf("k = %d has the best combined score among the admissible ks ≥ 2: %.2f, ranked first by %s (ties go to the smaller k)", c.K, c.Combined, criteriaList(c.First)))
			if gapOne {
				rec.Reasons = append(rec.Reasons, fmt.Sprintf("the gap rule finds no cluster structure (k = 1), but the evidence for k = %d is clear", c.K))
			}
			if ru := best(true, c.K); ru >= 0 {
				rec.Reasons = append(rec.Reasons, fmt.Sprintf("runner-up: k = %d at %.2f", rec.Standings[ru].K, rec.Standings[ru].Combined))
			}
		}
	}
	var out []string
	for _, s := range rec.Standings {
		if !s.Admissible {
			out = append(out, fmt.Sprint(s.K))
		}
	}
	if len(out) > 0 {
		rec.Reasons = append(rec.Reasons, fmt.Sprintf("not admissible, a cluster not reproduced by the resamples (mean Jaccard below %.2g): k = %s", validate.JaccardPartly, strings.Join(out, ", ")))
	}
	if p := r.Point(rec.K); p != nil && p.Stability != nil {
		rec.Reasons = append(rec.Reasons, stabilitySentence(p.Stability))
	} else if !stability {
		rec.Reasons = append(rec.Reasons, "stability not measured: every k counted as admissible")
	}
	if rec.K >= 2 {
		rec.Reasons = append(rec.Reasons, r.strengthSentence(rec))
	}
	rec.Reasons = append(rec.Reasons, "this is a heuristic: read the scores, and prefer the k that serves the purpose when the criteria disagree")
}

// clear applies the test of Recommendation.Clear to a point with the given
// combined score.
func (r *Result) clear(p *Point, combined float64) bool {
	if p.K < 2 || !(combined >= clearCombined) || !(p.Silhouette.Mean >= clearSilhouette) {
		return false
	}
	return p.Stability == nil || p.Stability.Reading() == validate.Reproduced
}

// strengthSentence says whether the evidence for rec.K is clear, and if not
// what is missing.
func (r *Result) strengthSentence(rec *Recommendation) string {
	p := r.Point(rec.K)
	if rec.Clear {
		s := fmt.Sprintf("the structure is clear: combined score %.2f ≥ %.2g, mean silhouette %.3f ≥ %.2g", rec.Combined, clearCombined, p.Silhouette.Mean, clearSilhouette)
		if p.Stability != nil {
			s += " and every cluster reproduced"
		}
		return s
	}
	var weak []string
	if !(rec.Combined >= clearCombined) {
		weak = append(weak, fmt.Sprintf("combined score %.2f below %.2g", rec.Combined, clearCombined))
	}
	if !(p.Silhouette.Mean >= clearSilhouette) {
		weak = append(weak, fmt.Sprintf("mean silhouette %.3f below %.2g (at most a weak structure in the reading of Kaufman & Rousseeuw 1990)", p.Silhouette.Mean, clearSilhouette))
	}
	if st := p.Stability; st != nil && st.Reading() != validate.Reproduced {
		weak = append(weak, fmt.Sprintf("weakest cluster %s (mean Jaccard %.3f)", st.Reading(), st.MinJaccard()))
	}
	return "the evidence is weak: " + strings.Join(weak, "; ")
}

// stabilitySentence summarises the stability of one clustering.
func stabilitySentence(st *Stability) string {
	reproduced, partly, lost := 0, 0, 0
	for j, r := range st.Readings() {
		switch r {
		case validate.Reproduced:
			reproduced++
		case validate.PartlyReproduced:
			partly++
		}
		lost += st.Lost[j]
	}
	var what string
	switch {
	case reproduced == st.K:
		what = "every cluster reproduced"
	case reproduced+partly == st.K:
		what = fmt.Sprintf("%d clusters reproduced, %d partly", reproduced, partly)
	default:
		what = fmt.Sprintf("%d clusters reproduced, %d partly, %d not", reproduced, partly, st.K-reproduced-partly)
	}
	losses := "no resample lost a cluster"
	if lost > 0 {
		losses = fmt.Sprintf("resamples lost a cluster %d times (best Jaccard ≤ %.2g)", lost, validate.JaccardLost)
	}
	return fmt.Sprintf("stability at k = %d: %s, weakest mean Jaccard %.3f, %s; mean ARI %.3f between %d resamples of %.0f%% of %d rows (Hennig 2007)",
		st.K, what, st.MinJaccard(), losses, st.MeanARI, st.Resamples, 100*st.Fraction, st.Rows)
}

// indexPreference returns the preference of an index that is maximised (or
// minimised) over the swept ks, ignoring NaN; ties go to the smaller k.
func (r *Result) indexPreference(by Criterion, v []float64, higher bool) Preference {
	pref := Preference{By: by}
	i := bestScore(v, higher)
	if i < 0 {
		pref.Note = "not computed for any swept k"
		if by == ByDunn {
			pref.Note = "not computed (more rows than Options.DunnRows, or k = 1 only)"
		}
		return pref
	}
	p := &r.Points[i]
	pref.K = p.K
	word := "highest"
	if !higher {
		word = "lowest"
	}
	pref.Note = fmt.Sprintf("%s %s %.4g", word, by, v[i])
	if by == BySilhouette {
		if e := p.Silhouette; e.Hi > e.Lo {
			pref.Note += fmt.Sprintf(" (estimated from %d rows, 95%% interval %.3f–%.3f)", e.Samples, e.Lo, e.Hi)
		} else {
			pref.Note += " (exact)"
		}
	}
	return pref
}

// criteriaList names criteria in prose: "a", "a and b", "a, b and c", or
// "no single criterion".
func criteriaList(cs []Criterion) string {
	switch len(cs) {
	case 0:
		return "no single criterion"
	case 1:
		return cs[0].String()
	}
	names := make([]string, len(cs))
	for i, c := range cs {
		names[i] = c.String()
	}
	return strings.Join(names[:len(names)-1], ", ") + " and " + names[len(names)-1]
}
