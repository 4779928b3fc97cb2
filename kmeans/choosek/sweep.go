package choosek

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"sync"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/validate"
)

// Defaults of Options.
const (
	DefaultExactSilhouetteRows = 2000
	DefaultSilhouetteSamples   = 1000
	DefaultDunnRows            = 2000
	DefaultGapReferences       = 10
	DefaultGapRestarts         = 2
)

// Options tunes [Sweep]. A nil *Options and the zero value mean the
// defaults: every index, the gap statistic with 10 reference sets and
// stability with 10 resamples.
type Options struct {
	// ExactSilhouetteRows is the largest number of rows for which the mean
	// silhouette is computed exactly, in O(n²d) time. Above it the mean is
	// estimated from SilhouetteSamples rows drawn without replacement, each
	// scored against all n rows, with a 95% confidence interval
	// ([validate.SampledSilhouette]). Zero means DefaultExactSilhouetteRows
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
	// KneeFlatSteps is how many steps of k the cost curve must run flat
	// after a bend before the bend counts as its knee
	// ([validate.KneeOptions].FlatSteps). Zero means
	// [validate.DefaultKneeFlatSteps] (1); negative is invalid.
	KneeFlatSteps float64
	// SkipGap turns the gap statistic off: it clusters GapReferences
	// reference sets for every k, which usually costs more than the rest
	// of the sweep.
	SkipGap bool
	// GapReferences is the number B of reference data sets of the gap
	// statistic. Zero means DefaultGapReferences (10); 1 and negative
	// values are invalid.
	GapReferences int
	// GapReference is the null distribution of the gap statistic; the zero
	// value is [validate.PCABox].
	GapReference validate.Reference
	// GapRestarts is Settings.Restarts of each reference clustering. Zero
	// means DefaultGapRestarts (2); negative is invalid.
	GapRestarts int
	// SkipStability turns the stability resamples off. Every k is then
	// admissible in the recommendation.
	SkipStability bool
	// Stability tunes the resamples (see [MeasureStability]); the zero value
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
	if !(r.KneeFlatSteps >= 0) || math.IsInf(r.KneeFlatSteps, 1) {
		return r, fmt.Errorf("%w: KneeFlatSteps = %v", kmeans.ErrSettings, r.KneeFlatSteps)
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

// Point is the evidence [Sweep] gathered for one k. Every score is
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

// Result is the outcome of [Sweep].
type Result struct {
	// Points holds the evidence for every swept k, in increasing k.
	Points []Point
	// Knee is the k at the knee of the cost curve, 0 if Kneedle found none.
	Knee int
	// Gap is the gap statistic over the swept ks, nil if skipped or
	// undefined (the gap preference then says why).
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
//   - mean silhouette ([validate.Silhouette]), exact up to
//     Options.ExactSilhouetteRows rows and above that estimated from
//     SilhouetteSamples rows with a 95% interval ([validate.SampledSilhouette]);
//   - Davies–Bouldin and Caliński–Harabasz ([validate.DaviesBouldin],
//     [validate.CalinskiHarabasz]);
//   - Dunn's index ([validate.Dunn]) up to Options.DunnRows rows;
//   - stability: Resamples subsamples clustered again ([MeasureStability]),
//     the mean adjusted Rand index between them and the per-cluster Jaccard
//     stability of Hennig (2007).
//
// Over all ks: the knee of the cost curve ([validate.Knee], Kneedle) and the
// gap statistic ([validate.Gap]; Tibshirani, Walther and Hastie 2001) with
// GapReferences reference sets, each clustered by Cluster with GapRestarts
// restarts; the data's own dispersion W_k is the cost of the sweep's
// clustering.
//
// # Recommendation
//
// Every criterion scores every swept k on [0, 1], 1 being its best k; the
// combined score of a k is the mean of the scores defined there, and the
// recommendation is the admissible k (stability check passed) with the
// best combined score, with k = 1 decided by the gap rule. The rule, the
// mapping of each criterion and how the rule behaves on reference data
// sets are in the package documentation.
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
	knee := res.knee(o.KneeFlatSteps)
	gap, err := res.gap(ctx, p, Z, set, m, &o)
	if err != nil {
		return nil, err
	}
	res.recommend(knee, gap, !o.SkipStability)
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

// knee finds the knee of the cost curve and scores every k by its bend.
// The curve is the running minimum of the cost over the swept ks: the best
// cost with at most k clusters cannot rise with k, and a rise is a local
// optimum of a restart, not part of the curve.
func (r *Result) knee(flatSteps float64) curveEvidence {
	ev := curveEvidence{pref: Preference{By: ByKnee}}
	x := make([]float64, len(r.Points))
	y := make([]float64, len(r.Points))
	for i, p := range r.Points {
		x[i], y[i] = float64(p.K), p.Cost
		if i > 0 {
			y[i] = min(y[i], y[i-1])
		}
	}
	i, err := validate.Knee(x, y, &validate.KneeOptions{FlatSteps: flatSteps})
	if err != nil {
		ev.pref.Note = fmt.Sprintf("no knee in the cost curve (%v)", err)
		return ev
	}
	bend, err := validate.KneeCurve(x, y)
	if err != nil { // unreachable: Knee accepted the curve
		ev.pref.Note = fmt.Sprintf("no knee in the cost curve (%v)", err)
		return ev
	}
	r.Knee = r.Points[i].K
	ev.pref.K = r.Knee
	ev.scores = kneeScores(bend, i)
	ev.pref.Note = fmt.Sprintf("knee of the cost curve (Kneedle), %.2f below its chord: cost %.4g, then %.4g at k = %d",
		bend[i], y[i], y[i+1], r.Points[i+1].K)
	return ev
}

// gap computes the gap statistic and scores every k by it.
func (r *Result) gap(ctx context.Context, p kmeans.Problem, Z *mat.Dense, set kmeans.Settings, m kmeans.Method, o *Options) (curveEvidence, error) {
	ev := curveEvidence{pref: Preference{By: ByGap}}
	v := &ev.pref
	if o.SkipGap {
		v.Note = "gap statistic skipped"
		return ev, nil
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
			return ev, cerr
		}
		v.Note = fmt.Sprintf("gap statistic undefined: %v", err)
		return ev, nil
	}
	r.Gap = g
	for i := range r.Points {
		r.Points[i].Gap, r.Points[i].GapSE = g.Gap[i], g.SK[i]
	}
	if !g.Found {
		v.Note = fmt.Sprintf("no swept k has Gap(k) ≥ Gap(k+1) − s_{k+1} (%s reference, B = %d): extend the range", o.GapReference, o.GapReferences)
		return ev, nil
	}
	i := 0
	for ks[i] != g.Best {
		i++
	}
	v.K = g.Best
	ev.scores = gapScores(g.Gap, i)
	v.Note = fmt.Sprintf("smallest k with Gap(k) ≥ Gap(k+1) − s_{k+1}: %.3f ≥ %.3f − %.3f at k+1 = %d (%s reference, B = %d)",
		g.Gap[i], g.Gap[i+1], g.SK[i+1], ks[i+1], o.GapReference, o.GapReferences)
	return ev, nil
}
