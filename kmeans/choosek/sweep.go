package choosek

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"strings"
	"sync"
	"text/tabwriter"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/validate"
	"gonum.org/v1/gonum/mat"
)

// Defaults of Options.
const (
	DefaultExactSilhouetteRows = 2000
	DefaultSilhouetteSamples   = 1000
	DefaultDunnRows            = 2000
	DefaultGapReferences       = 10
	DefaultGapRestarts         = 2
)

// Options tunes Sweep. A nil *Options and the zero value mean the
// defaults: every index, the gap statistic with 10 reference sets and
// stability with 10 resamples.
type Options struct {
	// ExactSilhouetteRows is the largest number of rows for which the mean
	// silhouette is computed exactly, in O(n²d) time. Above it the mean is
	// estimated from SilhouetteSamples rows drawn without replacement, each
	// scored against all n rows, with a 95% confidence interval
	// (validate.SampledSilhouette). Zero means DefaultExactSilhouetteRows
	// (2000); negative is invalid.
	ExactSilhouetteRows int
	// SilhouetteSamples is the sample size of the estimated silhouette.
	// Zero means DefaultSilhouetteSamples (1000); 1 and negative values
	// are invalid.
	SilhouetteSamples int
	// DunnRows is the largest number of rows for which Dunn's index is
	// computed; it takes O(n²d) time and has no sampled form (a minimum
	// and a maximum over all pairs). Zero means DefaultDunnRows (2000);
	// negative means never.
	DunnRows int
	// KneeSensitivity is Kneedle's S for the knee of the cost curve
	// (validate.KneeOptions). Zero means 1; negative is invalid.
	KneeSensitivity float64
	// SkipGap turns the gap statistic off: it clusters GapReferences
	// reference sets for every k, which usually costs more than the rest
	// of the sweep.
	SkipGap bool
	// GapReferences is the number B of reference data sets of the gap
	// statistic. Zero means DefaultGapReferences (10); 1 and negative
	// values are invalid.
	GapReferences int
	// GapReference is the null distribution of the gap statistic; the zero
	// value is validate.PCABox.
	GapReference validate.Reference
	// GapRestarts is Settings.Restarts of each reference clustering. Zero
	// means DefaultGapRestarts (2); negative is invalid.
	GapRestarts int
	// SkipStability turns the stability resamples off. Every k is then
	// admissible in the recommendation.
	SkipStability bool
	// Stability tunes the resamples (see MeasureStability); the zero value
	// means the defaults.
	Stability StabilityOptions
}

func (o *Options) resolved() (Options, error) {
	var r Options
	if o != nil {
		r = *o
	}
	switch {
	case r.ExactSilhouetteRows == 0:
		r.ExactSilhouetteRows = DefaultExactSilhouetteRows
	case r.ExactSilhouetteRows < 0:
		return r, fmt.Errorf("%w: ExactSilhouetteRows = %d", kmeans.ErrSettings, r.ExactSilhouetteRows)
	}
	switch {
	case r.SilhouetteSamples == 0:
		r.SilhouetteSamples = DefaultSilhouetteSamples
	case r.SilhouetteSamples < 2:
		return r, fmt.Errorf("%w: SilhouetteSamples = %d, want at least 2", kmeans.ErrSettings, r.SilhouetteSamples)
	}
	if r.DunnRows == 0 {
		r.DunnRows = DefaultDunnRows
	}
	if !(r.KneeSensitivity >= 0) || math.IsInf(r.KneeSensitivity, 1) {
		return r, fmt.Errorf("%w: KneeSensitivity = %v", kmeans.ErrSettings, r.KneeSensitivity)
	}
	switch {
	case r.GapReferences == 0:
		r.GapReferences = DefaultGapReferences
	case r.GapReferences < 2:
		return r, fmt.Errorf("%w: GapReferences = %d, want at least 2", kmeans.ErrSettings, r.GapReferences)
	}
	if r.GapReference != validate.PCABox && r.GapReference != validate.UniformBox {
		return r, fmt.Errorf("%w: unknown GapReference %v", kmeans.ErrSettings, r.GapReference)
	}
	switch {
	case r.GapRestarts == 0:
		r.GapRestarts = DefaultGapRestarts
	case r.GapRestarts < 0:
		return r, fmt.Errorf("%w: GapRestarts = %d", kmeans.ErrSettings, r.GapRestarts)
	}
	st, err := r.Stability.resolved()
	if err != nil {
		return r, err
	}
	r.Stability = st
	return r, nil
}

// Point is the evidence Sweep gathered for one k. Every score is
// measured in the clustering (scaled) space. A value that is undefined for
// this k (the internal indices at k = 1) or was not computed (Dunn above
// Options.DunnRows, Gap when skipped) is NaN.
type Point struct {
	// K is the number of clusters.
	K int
	// Result is the clustering of the data with K clusters.
	Result *kmeans.Result
	// Cost is Result.Cost, the within-cluster sum of squares; lower is
	// better but it always falls as K grows.
	Cost float64
	// Silhouette is the mean silhouette width (higher is better): exact
	// when Silhouette.Samples equals the number of rows (then Lo = Hi =
	// Mean), otherwise an estimate with its 95% interval [Lo, Hi].
	Silhouette validate.Estimate
	// DaviesBouldin is the Davies–Bouldin index (lower is better).
	DaviesBouldin float64
	// CalinskiHarabasz is the Caliński–Harabasz ratio (higher is better).
	CalinskiHarabasz float64
	// Dunn is Dunn's index (higher is better).
	Dunn float64
	// Gap and GapSE are Gap(K) and s_K of the gap statistic.
	Gap, GapSE float64
	// Stability is the resample stability of Result; nil for K = 1 or when
	// skipped.
	Stability *Stability
}

// Criterion names one line of evidence in a Recommendation.
type Criterion int

const (
	// BySilhouette votes for the highest mean silhouette.
	BySilhouette Criterion = iota
	// ByDaviesBouldin votes for the lowest Davies–Bouldin index.
	ByDaviesBouldin
	// ByCalinskiHarabasz votes for the highest Caliński–Harabasz ratio.
	ByCalinskiHarabasz
	// ByDunn votes for the highest Dunn index.
	ByDunn
	// ByKnee votes for the knee (elbow) of the cost curve found by
	// Kneedle.
	ByKnee
	// ByGap votes for the k of the gap rule of Tibshirani et al.
	ByGap
	numCriteria
)

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

// Vote is one criterion's preferred k and why.
type Vote struct {
	By Criterion
	// K is the preferred number of clusters, 0 if the criterion abstains
	// (not computed, undefined on every k, or its rule was not met).
	K int
	// Reason explains the vote or the abstention.
	Reason string
}

// Recommendation is Sweep's suggested number of clusters with the
// evidence behind it. It is a heuristic: the indices answer different
// questions, and when they disagree the data rarely has one right k.
type Recommendation struct {
	// K is the recommended number of clusters.
	K int
	// Votes holds one vote per Criterion, in Criterion order.
	Votes []Vote
	// Support is the number of votes for K and Cast the number of votes
	// cast (criteria that did not abstain).
	Support, Cast int
	// Admissible lists the swept ks whose clusterings passed the stability
	// check (every cluster's mean Jaccard at least 0.6), in increasing
	// order; every k when stability was skipped.
	Admissible []int
	// Reasons explains the choice, one sentence per entry.
	Reasons []string
}

// String returns the recommendation, each vote and the reasons, one per
// line.
func (r *Recommendation) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "recommended k = %d (%d of %d votes)\n", r.K, r.Support, r.Cast)
	for _, v := range r.Votes {
		if v.K == 0 {
			fmt.Fprintf(&b, "  %-18s abstains: %s\n", v.By, v.Reason)
		} else {
			fmt.Fprintf(&b, "  %-18s k = %-3d %s\n", v.By, v.K, v.Reason)
		}
	}
	for _, s := range r.Reasons {
		fmt.Fprintf(&b, "  %s\n", s)
	}
	return b.String()
}

// Result is the outcome of Sweep.
type Result struct {
	// Points holds the evidence for every swept k, in increasing k.
	Points []Point
	// Knee is the k at the knee of the cost curve, 0 if Kneedle found none.
	Knee int
	// Gap is the gap statistic over the swept ks, nil if skipped or
	// undefined (the gap vote then says why).
	Gap *validate.GapResult
	// Recommendation is the suggested k with its evidence.
	Recommendation Recommendation
}

// Point returns the evidence for k, or nil if k was not swept.
func (r *Result) Point(k int) *Point {
	for i := range r.Points {
		if r.Points[i].K == k {
			return &r.Points[i]
		}
	}
	return nil
}

// Recommended returns the clustering with the recommended number of
// clusters.
func (r *Result) Recommended() *kmeans.Result {
	if p := r.Point(r.Recommendation.K); p != nil {
		return p.Result
	}
	return nil
}

// Sweep clusters the data of p once for every k in ks (p.K is ignored),
// scores every clustering with several internal validity indices, the gap
// statistic and resample stability, and recommends a number of clusters with
// the evidence behind it. ks must be strictly increasing, from 1 up; include
// k = 1 to let the gap statistic say the data has no cluster structure.
//
// Every clustering uses Cluster with s (Restarts, MaxIterations,
// Tolerance, Workers; Progress is ignored) and method m, seeded with a
// value derived from s.Seed and k. Up to s.Workers values of k are
// clustered at once. The result is deterministic for a given s.Seed
// whatever s.Workers.
//
// All scores are measured in the clustering space: the rows after the
// learned scaler p.Scaler (as Model.Scaler().Apply gives them). For every
// k ≥ 2:
//
//   - mean silhouette (validate.Silhouette), exact up to
//     Options.ExactSilhouetteRows rows and above that estimated from
//     SilhouetteSamples rows with a 95% interval (validate.SampledSilhouette);
//   - Davies–Bouldin and Caliński–Harabasz (validate.DaviesBouldin,
//     validate.CalinskiHarabasz);
//   - Dunn's index (validate.Dunn) up to Options.DunnRows rows;
//   - stability: Resamples subsamples clustered again (MeasureStability),
//     the mean adjusted Rand index between them and the per-cluster Jaccard
//     stability of Hennig (2007).
//
// Over all ks: the knee of the cost curve (validate.Knee, Kneedle) and the
// gap statistic (validate.Gap; Tibshirani, Walther and Hastie 2001) with
// GapReferences reference sets, each clustered by Cluster with GapRestarts
// restarts; the data's own dispersion W_k is the cost of the sweep's
// clustering.
//
// # Recommendation rule
//
// A documented heuristic of this package, not a theorem:
//
//  1. Each criterion votes for one swept k: the highest mean silhouette,
//     the lowest Davies–Bouldin, the highest Caliński–Harabasz, the highest
//     Dunn (when computed), the knee of the cost curve, and the gap rule
//     (the smallest k with Gap(k) ≥ Gap(k+1) − s_{k+1}; it abstains when no
//     swept k meets it). Ties within a criterion go to the smaller k. The
//     internal indices are undefined at k = 1, so only the gap rule can
//     vote for it.
//  2. A k is admissible when no cluster of its clustering is unstable:
//     every cluster's mean Jaccard over the resamples is at least 0.6 (the
//     reading of Hennig 2007, common practice). k = 1 is always
//     admissible, and so is every k when stability is skipped.
//  3. The recommended k is the admissible k with the most votes, ties going
//     to the smaller k. If no admissible k has a vote, it is the k with the
//     most votes overall (ties to the smaller k) and the reasons say it is
//     unstable; if no criterion votes at all, it is the smallest swept k.
//
// Structureless data tends to split the votes, and ties then go to the
// smaller k; a clear structure gets most votes on one stable k.
//
// # Cost
//
// Per k: the restarts of Cluster, Resamples·Restarts clusterings of
// Fraction of the rows, O(n²d) for an exact silhouette and Dunn (or O(samples·n·d)
// sampled), plus GapReferences·GapRestarts clusterings of n rows per k for
// the gap statistic. Turn off the gap (SkipGap) or stability
// (SkipStability) for large sweeps.
//
// # Errors
//
// Sweep returns an error wrapping ErrK if ks is empty, not strictly
// increasing, below 1 or above the number of distinct rows; ErrWeights if
// p.Weights is not nil (the validity indices are unweighted: cluster
// weighted data with Cluster and score it yourself); ErrMetric for a metric
// other than Euclidean (the indices and the gap statistic are Euclidean);
// ErrSettings for invalid settings or options; the errors of Cluster; and
// ctx.Err() if ctx ends. p.Data is never modified.
func Sweep(ctx context.Context, p kmeans.Problem, ks []int, s *kmeans.Settings, m kmeans.Method, opts *Options) (*Result, error) {
	o, err := opts.resolved()
	if err != nil {
		return nil, err
	}
	set, err := quietSettings(s)
	if err != nil {
		return nil, err
	}
	if len(ks) == 0 {
		return nil, fmt.Errorf("%w: no k to sweep", kmeans.ErrK)
	}
	for i, k := range ks {
		if k < 1 || (i > 0 && k <= ks[i-1]) {
			return nil, fmt.Errorf("%w: ks must be strictly increasing from 1 up, got %v", kmeans.ErrK, ks)
		}
	}
	if p.Weights != nil {
		return nil, fmt.Errorf("%w: Sweep scores rows unweighted; cluster weighted data with Cluster", kmeans.ErrWeights)
	}
	if p.Metric != nil {
		if _, ok := p.Metric.(distance.Euclidean); !ok {
			return nil, fmt.Errorf("%w: Sweep's indices and gap statistic are Euclidean, got %s", kmeans.ErrMetric, p.Metric.Name())
		}
	}
	q := p
	q.K = ks[len(ks)-1]
	sp, err := kmeans.NewSpace(q)
	if err != nil {
		return nil, err
	}
	Z := mat.NewDense(sp.N, sp.D, sp.X) // read-only view of the clustering space

	points := make([]Point, len(ks))
	errs := make([]error, len(ks))
	conc := min(set.Workers, len(ks))
	inner := set
	inner.Workers = max(1, set.Workers/conc)
	runCtx, cancel := context.WithCancel(ctx)
	defer cancel()
	var wg sync.WaitGroup
	sem := make(chan struct{}, conc)
	for i, k := range ks {
		sem <- struct{}{}
		wg.Go(func() {
			defer func() { <-sem }()
			points[i], errs[i] = sweepOne(runCtx, p, Z, k, inner, m, &o)
			if errs[i] != nil {
				cancel()
			}
		})
	}
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	for _, err := range errs {
		if err != nil && !errors.Is(err, context.Canceled) {
			return nil, err
		}
	}

	res := &Result{Points: points}
	kneeVote := res.knee(o.KneeSensitivity)
	gapVote, err := res.gap(ctx, p, Z, set, m, &o)
	if err != nil {
		return nil, err
	}
	res.recommend(kneeVote, gapVote, !o.SkipStability)
	return res, nil
}

// sweepOne clusters and scores one k.
func sweepOne(ctx context.Context, p kmeans.Problem, Z *mat.Dense, k int, set kmeans.Settings, m kmeans.Method, o *Options) (Point, error) {
	nan := math.NaN()
	pt := Point{K: k, DaviesBouldin: nan, CalinskiHarabasz: nan, Dunn: nan, Gap: nan, GapSE: nan}
	pt.Silhouette = validate.Estimate{Mean: nan, StdErr: nan, Lo: nan, Hi: nan}
	q := p
	q.K = k
	set.Seed = sweepMix(set.Seed, sweepKStream, uint64(k))
	res, err := kmeans.Cluster(ctx, q, &set, m)
	if err != nil {
		return pt, fmt.Errorf("sweep k = %d: %w", k, err)
	}
	pt.Result, pt.Cost = res, res.Cost
	if k < 2 {
		return pt, nil
	}
	a := res.Assignments
	n, _ := Z.Dims()
	if n <= o.ExactSilhouetteRows {
		v, err := scoreOrNaN(validate.Silhouette(Z, a, distance.Euclidean{}))
		if err != nil {
			return pt, fmt.Errorf("sweep k = %d: %w", k, err)
		}
		pt.Silhouette = validate.Estimate{Mean: v, Lo: v, Hi: v, Samples: n}
	} else {
		rnd := rand.New(rand.NewPCG(set.Seed, silhouetteStream))
		e, err := validate.SampledSilhouette(Z, a, distance.Euclidean{}, o.SilhouetteSamples, rnd)
		switch {
		case err == nil:
			pt.Silhouette = e
		case !errors.Is(err, validate.ErrClusters):
			return pt, fmt.Errorf("sweep k = %d: %w", k, err)
		}
	}
	for _, ix := range []struct {
		dst *float64
		fn  func(mat.Matrix, []int) (float64, error)
		on  bool
	}{
		{&pt.DaviesBouldin, validate.DaviesBouldin, true},
		{&pt.CalinskiHarabasz, validate.CalinskiHarabasz, true},
		{&pt.Dunn, validate.Dunn, o.DunnRows >= n},
	} {
		if !ix.on {
			continue
		}
		v, err := scoreOrNaN(ix.fn(Z, a))
		if err != nil {
			return pt, fmt.Errorf("sweep k = %d: %w", k, err)
		}
		*ix.dst = v
	}
	if !o.SkipStability {
		st, err := stabilityOf(ctx, q, a, set, m, o.Stability)
		if err != nil {
			return pt, fmt.Errorf("sweep k = %d: %w", k, err)
		}
		pt.Stability = st
	}
	return pt, nil
}

// scoreOrNaN passes an index value on, turns an index that is undefined
// for the clustering (validate.ErrClusters) into NaN, and returns any other
// error.
func scoreOrNaN(v float64, err error) (float64, error) {
	switch {
	case err == nil:
		return v, nil
	case errors.Is(err, validate.ErrClusters):
		return math.NaN(), nil
	}
	return math.NaN(), err
}

// knee finds the knee of the cost curve and returns its vote.
func (r *Result) knee(sensitivity float64) Vote {
	v := Vote{By: ByKnee}
	x := make([]float64, len(r.Points))
	y := make([]float64, len(r.Points))
	for i, p := range r.Points {
		x[i], y[i] = float64(p.K), p.Cost
	}
	i, err := validate.Knee(x, y, &validate.KneeOptions{Sensitivity: sensitivity})
	if err != nil {
		v.Reason = fmt.Sprintf("no knee in the cost curve (%v)", err)
		return v
	}
	r.Knee = r.Points[i].K
	v.K = r.Knee
	v.Reason = fmt.Sprintf("the cost curve bends most at k = %d (Kneedle): cost %.4g, then %.4g at k = %d", v.K, y[i], y[i+1], r.Points[i+1].K)
	return v
}

// gap computes the gap statistic and returns its vote.
func (r *Result) gap(ctx context.Context, p kmeans.Problem, Z *mat.Dense, set kmeans.Settings, m kmeans.Method, o *Options) (Vote, error) {
	v := Vote{By: ByGap}
	if o.SkipGap {
		v.Reason = "gap statistic skipped"
		return v, nil
	}
	ks := make([]int, len(r.Points))
	cost := make(map[int]float64, len(r.Points))
	for i, pt := range r.Points {
		ks[i] = pt.K
		cost[pt.K] = pt.Cost
	}
	cluster := func(ctx context.Context, X *mat.Dense, k int, seed uint64) (float64, error) {
		if X == Z {
			return cost[k], nil
		}
		res, err := kmeans.Cluster(ctx, kmeans.Problem{Data: X, K: k, Seeder: p.Seeder}, &kmeans.Settings{
			Restarts: o.GapRestarts, MaxIterations: set.MaxIterations, Tolerance: set.Tolerance, Seed: seed, Workers: 1,
		}, m)
		if err != nil {
			return 0, err
		}
		return res.Cost, nil
	}
	g, err := validate.Gap(ctx, Z, ks, cluster, &validate.GapOptions{
		B: o.GapReferences, Reference: o.GapReference, Seed: sweepMix(set.Seed, gapStream, 0), Workers: set.Workers,
	})
	if err != nil {
		if cerr := ctx.Err(); cerr != nil {
			return v, cerr
		}
		v.Reason = fmt.Sprintf("gap statistic undefined: %v", err)
		return v, nil
	}
	r.Gap = g
	for i := range r.Points {
		r.Points[i].Gap, r.Points[i].GapSE = g.Gap[i], g.SK[i]
	}
	if !g.Found {
		v.Reason = fmt.Sprintf("no swept k has Gap(k) ≥ Gap(k+1) − s_{k+1} (%s reference, B = %d): extend the range", o.GapReference, o.GapReferences)
		return v, nil
	}
	i := 0
	for ks[i] != g.Best {
		i++
	}
	v.K = g.Best
	v.Reason = fmt.Sprintf("smallest k with Gap(k) ≥ Gap(k+1) − s_{k+1}: %.3f ≥ %.3f − %.3f at k+1 = %d (%s reference, B = %d)",
		g.Gap[i], g.Gap[i+1], g.SK[i+1], ks[i+1], o.GapReference, o.GapReferences)
	return v, nil
}

// recommend fills r.Recommendation from the index votes, the knee and gap
// votes and the stability of every k (see Sweep).
func (r *Result) recommend(knee, gap Vote, stability bool) {
	rec := &r.Recommendation
	rec.Votes = []Vote{
		r.argVote(BySilhouette, func(p *Point) float64 { return p.Silhouette.Mean }, true),
		r.argVote(ByDaviesBouldin, func(p *Point) float64 { return p.DaviesBouldin }, false),
		r.argVote(ByCalinskiHarabasz, func(p *Point) float64 { return p.CalinskiHarabasz }, true),
		r.argVote(ByDunn, func(p *Point) float64 { return p.Dunn }, true),
		knee,
		gap,
	}
	admissible := map[int]bool{}
	for _, p := range r.Points {
		if p.Stability == nil || p.Stability.Verdict() != Unstable {
			admissible[p.K] = true
			rec.Admissible = append(rec.Admissible, p.K)
		}
	}
	count := map[int]int{}
	for _, v := range rec.Votes {
		if v.K != 0 {
			count[v.K]++
			rec.Cast++
		}
	}
	pick := func(only map[int]bool) int {
		best := 0
		for _, p := range r.Points {
			if (only == nil || only[p.K]) && count[p.K] > count[best] {
				best = p.K
			}
		}
		return best
	}
	rec.K = pick(admissible)
	switch {
	case rec.K != 0:
		rec.Reasons = append(rec.Reasons, fmt.Sprintf("k = %d has the most votes among the admissible ks %v (ties go to the smaller k)", rec.K, rec.Admissible))
	case rec.Cast > 0:
		rec.K = pick(nil)
		rec.Reasons = append(rec.Reasons, fmt.Sprintf("no admissible k got a vote; k = %d has the most votes overall but has an unstable cluster: treat it with care", rec.K))
	default:
		rec.K = r.Points[0].K
		rec.Reasons = append(rec.Reasons, fmt.Sprintf("no criterion could vote; k = %d is the smallest swept k", rec.K))
	}
	rec.Support = count[rec.K]
	if p := r.Point(rec.K); p != nil && p.Stability != nil {
		st := p.Stability
		rec.Reasons = append(rec.Reasons, fmt.Sprintf("stability at k = %d: mean ARI %.3f between %d resamples on %.0f%% subsamples; weakest cluster's mean Jaccard %.3f (%s; Hennig 2007: below 0.6 unstable, 0.75 and above stable)",
			rec.K, st.MeanARI, st.Resamples, 100*st.Fraction, st.MinJaccard(), st.Verdict()))
	} else if !stability {
		rec.Reasons = append(rec.Reasons, "stability not measured: every k counted as admissible")
	}
	rec.Reasons = append(rec.Reasons, "this is a heuristic: read the votes, and prefer the k that serves the purpose when they disagree")
}

// argVote returns the vote of an index that is maximised (or minimised)
// over the swept ks, ignoring NaN; ties go to the smaller k.
func (r *Result) argVote(by Criterion, score func(*Point) float64, higher bool) Vote {
	v := Vote{By: by}
	best := math.NaN()
	var bp *Point
	for i := range r.Points {
		s := score(&r.Points[i])
		if math.IsNaN(s) {
			continue
		}
		if bp == nil || (higher && s > best) || (!higher && s < best) {
			best, bp = s, &r.Points[i]
		}
	}
	if bp == nil {
		v.Reason = "not computed for any swept k"
		if by == ByDunn {
			v.Reason = "not computed (more rows than Options.DunnRows, or k = 1 only)"
		}
		return v
	}
	v.K = bp.K
	word := "highest"
	if !higher {
		word = "lowest"
	}
	v.Reason = fmt.Sprintf("%s %s: %.4g", word, by, best)
	if by == BySilhouette {
		if e := bp.Silhouette; e.Hi > e.Lo {
			v.Reason += fmt.Sprintf(" (estimated from %d rows, 95%% interval %.3f–%.3f)", e.Samples, e.Lo, e.Hi)
		} else {
			v.Reason += " (exact)"
		}
	}
	return v
}

// WriteTo writes the sweep as a table, one line per k (scores, stability
// and the criteria that voted for it, the recommended k marked with *),
// followed by the recommendation. It returns the number of bytes written.
func (r *Result) WriteTo(w io.Writer) (int64, error) {
	cw := &tallyWriter{w: w}
	tw := tabwriter.NewWriter(cw, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, " \tk\tcost\tsilhouette\tDavies–Bouldin\tCalinski–Harabasz\tDunn\tgap ± s_k\tmean ARI\tmin Jaccard\treading\t  votes")
	for _, p := range r.Points {
		mark := " "
		if p.K == r.Recommendation.K {
			mark = "*"
		}
		sil := fmtNum(p.Silhouette.Mean, 3)
		if e := p.Silhouette; e.Hi > e.Lo {
			sil = fmt.Sprintf("%.3f ±%.3f", e.Mean, (e.Hi-e.Lo)/2)
		}
		gap := "–"
		if !math.IsNaN(p.Gap) {
			gap = fmt.Sprintf("%.3f ± %.3f", p.Gap, p.GapSE)
		}
		ari, jac, reading := "–", "–", "–"
		if st := p.Stability; st != nil {
			ari = fmt.Sprintf("%.3f", st.MeanARI)
			jac = fmt.Sprintf("%.3f", st.MinJaccard())
			reading = st.Verdict().String()
		}
		var votes []string
		for _, v := range r.Recommendation.Votes {
			if v.K == p.K {
				votes = append(votes, v.By.String())
			}
		}
		voted := ""
		if len(votes) > 0 {
			voted = "  " + strings.Join(votes, ", ")
		}
		fmt.Fprintf(tw, "%s\t%d\t%.5g\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", mark, p.K, p.Cost, sil,
			fmtNum(p.DaviesBouldin, 3), fmtNum(p.CalinskiHarabasz, 1), fmtNum(p.Dunn, 3), gap, ari, jac, reading, voted)
	}
	if err := tw.Flush(); err != nil {
		return cw.n, err
	}
	_, err := io.WriteString(cw, "\n"+r.Recommendation.String())
	return cw.n, err
}

// fmtNum formats v with the given decimals, or "–" for NaN.
func fmtNum(v float64, decimals int) string {
	if math.IsNaN(v) {
		return "–"
	}
	return fmt.Sprintf("%.*f", decimals, v)
}

// tallyWriter counts the bytes written through it and keeps the first
// error.
type tallyWriter struct {
	w   io.Writer
	n   int64
	err error
}

func (c *tallyWriter) Write(p []byte) (int, error) {
	if c.err != nil {
		return 0, c.err
	}
	n, err := c.w.Write(p)
	c.n += int64(n)
	c.err = err
	return n, err
}
