package choosek

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/validate"
)

// Defaults of Options.
const (
	DefaultExactSilhouetteRows = 2000
	DefaultSilhouetteSamples   = 1000
	DefaultDunnRows            = 4000
	DefaultSampleRows          = 4000
	DefaultGapReferences       = 10
	DefaultGapRestarts         = 2
	DefaultGapTolerance        = 1e-4
)

// Options tunes [Sweep]. A nil *Options and the zero value mean the
// defaults: every index, the gap statistic with 10 reference sets and
// stability with 10 resamples, the last two and Dunn's index on a seeded
// sample of 4000 rows when the data has more. With these defaults a sweep
// over k = 1..8 of 20 000 rows of 6 features costs a few times one
// default [kmeans.Cluster] at k = 8 (BenchmarkSweep20000x6).
type Options struct {
	// ExactSilhouetteRows is the largest number of rows for which the mean
	// silhouette is computed exactly, in O(n²d) time. Above it the mean is
	// estimated from SilhouetteSamples rows drawn without replacement, each
	// scored against all n rows, with a 95% confidence interval
	// ([validate.SampledSilhouette]). Zero means DefaultExactSilhouetteRows
	// (2000); negative is invalid.
	ExactSilhouetteRows int
	// SilhouetteSamples is the sample size of the estimated silhouette.
	// Zero means DefaultSilhouetteSamples (1000): the half-width of the
	// 95% interval is then about 2·sd/√1000 ≈ 0.06·sd of the rows'
	// silhouettes (0.01 to 0.02 on the reference sets); 1 and negative
	// values are invalid.
	SilhouetteSamples int
	// SampleRows is the size of the seeded sample, drawn once without
	// replacement and shared by all ks, on which Dunn's index, the
	// stability resamples and the gap statistic are computed when the data
	// has more rows; the other indices and the clusterings use every row.
	// Zero means DefaultSampleRows (4000); negative means never sample.
	//
	// Why 4000: a stability resample then holds 3200 rows (80%), so a
	// cluster with 2% of the data still has about 64 rows in it and its
	// Jaccard similarity moves in steps under 2%; the gap statistic's
	// spread s_k over 10 reference sets of 4000 rows is about 0.01 (on the
	// benchmark data), well below the gaps between neighbouring ks that the
	// gap rule reads; and these criteria cost time linear in the sample
	// (Dunn quadratic), so a fixed sample keeps a sweep of a large data set
	// at the price of a few clusterings of it. Dunn's index on a sample is
	// an estimate: its minimum separation can only grow and its maximum
	// diameter only shrink, so it reads optimistic.
	SampleRows int
	// DunnRows is the largest number of rows (of the sample, if the data is
	// sampled) for which Dunn's index is computed; it takes O(n²d) time and
	// has no sampled form. Zero means DefaultDunnRows (4000); negative
	// means never.
	DunnRows int
	// KneeFlatSteps is how many steps of k the cost curve must run flat
	// after a bend before the bend counts as its knee
	// ([validate.KneeOptions].FlatSteps). Zero means
	// [validate.DefaultKneeFlatSteps] (1); negative is invalid.
	KneeFlatSteps float64
	// SkipGap turns the gap statistic off.
	SkipGap bool
	// GapReferences is the number B of reference data sets of the gap
	// statistic. Zero means DefaultGapReferences (10); 1 and negative
	// values are invalid.
	GapReferences int
	// GapReference is the null distribution of the gap statistic; the zero
	// value is [validate.PCABox].
	GapReference validate.Reference
	// GapRestarts is Settings.Restarts of each reference clustering (and of
	// the clustering of the data sample, when the data is sampled). Zero
	// means DefaultGapRestarts (2); negative is invalid.
	GapRestarts int
	// GapTolerance is Settings.Tolerance of the same clusterings: they stop
	// when a pass lowers the cost by at most this share. Zero means
	// DefaultGapTolerance (1e-4), which changes log W_k by less than 1e-4,
	// far below the spread s_k the gap rule compares with, while clusterings
	// of structureless reference data, which creep towards a fixed point
	// for many passes, stop in about a third of the passes (measured);
	// negative means iterate to a fixed point; 1 and above are invalid.
	GapTolerance float64
	// SkipStability turns the stability resamples off. Every k is then
	// admissible in the recommendation.
	SkipStability bool
	// Stability tunes the resamples (see [MeasureStability]); the zero value
	// means the defaults.
	Stability StabilityOptions
	// Progress, if not nil, is called as the sweep's jobs finish (see
	// [Progress]). Calls are serialised: never two at once, and Overall
	// never decreases from one call to the next. Jobs of different ks run
	// concurrently, so reports of different ks interleave, but for each k
	// the order is fixed: its clustering is reported (Done = 1) before any
	// other stage of that k, the indices and stability of k follow in any
	// interleaving, each stage's Done grows to 1, and the gap stage of every
	// k comes after all other stages of all ks. There is at least one report
	// per swept k and stage that runs (indices and stability run for k ≥ 2).
	// No call is made after ctx is done. Progress must not call Sweep.
	Progress func(Progress)
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
	if r.SampleRows == 0 {
		r.SampleRows = DefaultSampleRows
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
	switch {
	case math.IsNaN(r.GapTolerance) || r.GapTolerance >= 1:
		return r, fmt.Errorf("%w: GapTolerance = %v, want < 1", kmeans.ErrSettings, r.GapTolerance)
	case r.GapTolerance == 0:
		r.GapTolerance = DefaultGapTolerance
	case r.GapTolerance < 0:
		r.GapTolerance = 0
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
	// Dunn is Dunn's index (higher is better), on the sample when the data
	// is sampled (Result.SampleRows).
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
	// Rows is the number of rows of the data, and SampleRows the number
	// of rows on which Dunn's index, the stability resamples and the gap
	// statistic were computed (Rows when the data was not sampled).
	Rows, SampleRows int
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
// Every clustering of the data uses [kmeans.Cluster] with s (Restarts,
// MaxIterations, Tolerance, Workers; Progress is ignored) and method m,
// seeded with a value derived from s.Seed and k. The work is split into
// jobs (one clustering per k, its indices, each stability resample) run by
// s.Workers goroutines, then the gap statistic, whose reference sets are
// clustered s.Workers at a time. The result is deterministic for a given
// s.Seed whatever s.Workers: every job draws from its own seed and owns its
// output. Options.Progress reports the jobs as they finish.
//
// All scores are measured in the clustering space: the rows after the
// learned scaler p.Scaler (as Model.Scaler().Apply gives them), computed
// once ([kmeans.NewSpace]) and shared by all ks. For every k ≥ 2:
//
//   - mean silhouette ([validate.Silhouette]), exact up to
//     Options.ExactSilhouetteRows rows and above that estimated from
//     SilhouetteSamples rows with a 95% interval ([validate.SampledSilhouette]);
//   - Davies–Bouldin and Caliński–Harabasz ([validate.DaviesBouldin],
//     [validate.CalinskiHarabasz]) on all rows;
//   - Dunn's index ([validate.Dunn]) up to Options.DunnRows rows;
//   - stability: Resamples subsamples clustered again ([MeasureStability]),
//     the mean adjusted Rand index between them and the per-cluster Jaccard
//     stability of Hennig (2007).
//
// Over all ks: the knee of the cost curve ([validate.Knee], Kneedle) and the
// gap statistic ([validate.Gap]; Tibshirani, Walther and Hastie 2001) with
// GapReferences reference sets, each drawn once and clustered for every k
// by [kmeans.Cluster] with GapRestarts restarts and GapTolerance. The data's
// own dispersion W_k is the cost of the sweep's clustering; when the data
// is sampled, it is the cost of clustering the sample like the references.
//
// When the data has more than Options.SampleRows rows, Dunn's index, the
// stability resamples (drawn from the sample, compared with the sweep's
// clustering restricted to it) and the gap statistic use one seeded sample
// of SampleRows rows; see Options.SampleRows for the reasons and
// Result.SampleRows for the size used.
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
// Per k: the restarts of Cluster on all n rows; Resamples·Restarts
// clusterings of Fraction of min(n, SampleRows) rows; O(samples·n·d) for
// the silhouette above ExactSilhouetteRows (O(n²d) below); O(m²d) for Dunn
// on m = min(n, SampleRows) rows; and GapReferences·GapRestarts clusterings
// of m rows for the gap statistic.
//
// # Errors
//
// Sweep returns an error wrapping ErrK if ks is empty, not strictly
// increasing, below 1 or above the number of distinct rows; ErrWeights if
// p.Weights is not nil (the validity indices are unweighted: cluster
// weighted data with Cluster and score it yourself); ErrMetric for a metric
// other than Euclidean (the indices and the gap statistic are Euclidean);
// ErrSettings for invalid settings or options; the errors of Cluster; and
// ctx.Err() if ctx ends, promptly: no job starts after that. p.Data is
// never modified.
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
	sw := &sweep{p: p, ks: ks, set: set, m: m, o: &o}
	sw.Z = mat.NewDense(sp.N, sp.D, sp.X) // read-only view of the clustering space
	sw.sampleRows(sp.N)
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	res, err := sw.run(ctx)
	if cerr := ctx.Err(); cerr != nil {
		return nil, cerr
	}
	if err != nil {
		return nil, err
	}
	return res, nil
}

// sweep is the state of one call of Sweep.
type sweep struct {
	p   kmeans.Problem
	ks  []int
	set kmeans.Settings
	m   kmeans.Method
	o   *Options
	Z   *mat.Dense // the clustering space, n×d
	// sample lists the rows of the sample in ascending order, nil when the
	// data is not sampled; Zs and Xs are those rows of Z and of p.Data.
	sample []int
	Zs, Xs *mat.Dense
	points []Point
	draws  [][]redraw // stability resamples per point
	left   []int      // stability resamples not yet finished per point
	rep    *reporter
}

// sampleRows draws the sample of the expensive criteria, if n exceeds
// Options.SampleRows.
func (sw *sweep) sampleRows(n int) {
	sw.Zs = sw.Z
	if sw.o.SampleRows < 0 || n <= sw.o.SampleRows {
		return
	}
	sw.sample = subsample(n, sw.o.SampleRows, sweepMix(sw.set.Seed, sampleStream, 0))
	sw.Zs = selectRows(sw.Z, sw.sample)
	if !sw.o.SkipStability {
		sw.Xs = selectRows(sw.p.Data, sw.sample)
	}
}

// onSample returns a's entries for the rows of the sample (a itself when
// the data is not sampled).
func (sw *sweep) onSample(a []int) []int {
	if sw.sample == nil {
		return a
	}
	out := make([]int, len(sw.sample))
	for t, i := range sw.sample {
		out[t] = a[i]
	}
	return out
}

// run does the work of Sweep after the checks.
func (sw *sweep) run(ctx context.Context) (*Result, error) {
	n, _ := sw.Z.Dims()
	ns, _ := sw.Zs.Dims()
	sw.points = make([]Point, len(sw.ks))
	sw.draws = make([][]redraw, len(sw.ks))
	sw.left = make([]int, len(sw.ks))
	sw.rep = newReporter(ctx, sw.o.Progress)
	for i, k := range sw.ks {
		sw.rep.plan(k, StageClustering, 1)
		if k >= 2 {
			sw.rep.plan(k, StageIndices, 1)
			if !sw.o.SkipStability {
				sw.rep.plan(k, StageStability, sw.o.Stability.Resamples)
			}
		}
		if !sw.o.SkipGap {
			sw.rep.plan(k, StageGap, sw.o.GapReferences+1)
		}
		nan := math.NaN()
		sw.points[i] = Point{K: k, DaviesBouldin: nan, CalinskiHarabasz: nan, Dunn: nan, Gap: nan, GapSE: nan,
			Silhouette: validate.Estimate{Mean: nan, StdErr: nan, Lo: nan, Hi: nan}}
	}

	inner := sw.set
	inner.Workers = max(1, sw.set.Workers/len(sw.ks))
	pl := newPool(ctx, sw.rep.begin)
	// The largest k first: its clustering is the longest job.
	for i := len(sw.ks) - 1; i >= 0; i-- {
		pl.add(sw.ks[i], StageClustering, func(ctx context.Context) error { return sw.cluster(ctx, pl, i, inner) })
	}
	pl.start(sw.set.Workers)
	if err := pl.wait(); err != nil {
		return nil, err
	}

	res := &Result{Points: sw.points, Rows: n, SampleRows: ns}
	knee := res.knee(sw.o.KneeFlatSteps)
	gap, err := sw.gap(ctx, res)
	if err != nil {
		return nil, err
	}
	res.recommend(knee, gap, !sw.o.SkipStability)
	return res, nil
}

// seedOf is the seed of the clustering of the data with k clusters and of
// everything derived from it (indices, resamples).
func (sw *sweep) seedOf(k int) uint64 { return sweepMix(sw.set.Seed, sweepKStream, uint64(k)) }

// cluster clusters the data with k = sw.ks[i] clusters and queues the
// jobs that score the result.
func (sw *sweep) cluster(ctx context.Context, pl *pool, i int, set kmeans.Settings) error {
	k := sw.ks[i]
	q := sw.p
	q.K = k
	set.Seed = sw.seedOf(k)
	res, err := kmeans.Cluster(ctx, q, &set, sw.m)
	if err != nil {
		return fmt.Errorf("sweep k = %d: %w", k, err)
	}
	pt := &sw.points[i]
	pt.Result, pt.Cost = res, res.Cost
	sw.rep.finish(k, StageClustering)
	if k < 2 {
		return nil
	}
	pl.add(k, StageIndices, func(context.Context) error { return sw.indices(i) })
	if sw.o.SkipStability {
		return nil
	}
	sub := sw.p
	sub.K = k
	if sw.Xs != nil {
		sub.Data = sw.Xs
	}
	ref := sw.onSample(res.Assignments)
	opt := sw.o.Stability
	size, err := resampleSize(sub, opt)
	if err != nil {
		if sw.sample != nil {
			err = fmt.Errorf("%w (or SampleRows)", err)
		}
		return fmt.Errorf("sweep k = %d: %w", k, err)
	}
	rs := sw.set
	rs.Seed, rs.Workers = sw.seedOf(k), 1
	sw.draws[i] = make([]redraw, opt.Resamples)
	sw.left[i] = opt.Resamples
	for b := range opt.Resamples {
		pl.add(k, StageStability, func(ctx context.Context) error {
			d, err := resample(ctx, sub, ref, rs, sw.m, opt, size, b)
			if err != nil {
				return fmt.Errorf("sweep k = %d: %w", k, err)
			}
			sw.draws[i][b] = d
			if sw.doneResample(i) {
				st, err := combineRedraws(sub, opt, sw.draws[i])
				if err != nil {
					return fmt.Errorf("sweep k = %d: %w", k, err)
				}
				sw.points[i].Stability = st
				sw.draws[i] = nil
			}
			sw.rep.finish(k, StageStability)
			return nil
		})
	}
	return nil
}

// doneResample counts one finished resample of point i and reports whether
// it was the last.
func (sw *sweep) doneResample(i int) bool {
	sw.rep.mu.Lock()
	defer sw.rep.mu.Unlock()
	sw.left[i]--
	return sw.left[i] == 0
}

// indices computes the internal indices of point i.
func (sw *sweep) indices(i int) error {
	pt := &sw.points[i]
	k := pt.K
	a := pt.Result.Assignments
	n, _ := sw.Z.Dims()
	if n <= sw.o.ExactSilhouetteRows {
		v, err := scoreOrNaN(validate.Silhouette(sw.Z, a, distance.Euclidean{}))
		if err != nil {
			return fmt.Errorf("sweep k = %d: %w", k, err)
		}
		pt.Silhouette = validate.Estimate{Mean: v, Lo: v, Hi: v, Samples: n}
	} else {
		rnd := rand.New(rand.NewPCG(sw.seedOf(k), silhouetteStream))
		e, err := validate.SampledSilhouette(sw.Z, a, distance.Euclidean{}, sw.o.SilhouetteSamples, rnd)
		switch {
		case err == nil:
			pt.Silhouette = e
		case !errors.Is(err, validate.ErrClusters):
			return fmt.Errorf("sweep k = %d: %w", k, err)
		}
	}
	var err error
	if pt.DaviesBouldin, err = scoreOrNaN(validate.DaviesBouldin(sw.Z, a)); err != nil {
		return fmt.Errorf("sweep k = %d: %w", k, err)
	}
	if pt.CalinskiHarabasz, err = scoreOrNaN(validate.CalinskiHarabasz(sw.Z, a)); err != nil {
		return fmt.Errorf("sweep k = %d: %w", k, err)
	}
	if ns, _ := sw.Zs.Dims(); ns <= sw.o.DunnRows {
		if pt.Dunn, err = scoreOrNaN(validate.Dunn(sw.Zs, sw.onSample(a))); err != nil {
			return fmt.Errorf("sweep k = %d: %w", k, err)
		}
	}
	sw.rep.finish(k, StageIndices)
	return nil
}

// scoreOrNaN passes an index value on, turns an index that is undefined
// for the clustering ([validate.ErrClusters]) into NaN, and returns any other
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

// gap computes the gap statistic on the data (or its sample) and scores
// every k by it.
func (sw *sweep) gap(ctx context.Context, r *Result) (curveEvidence, error) {
	ev := curveEvidence{pref: Preference{By: ByGap}}
	v := &ev.pref
	o := sw.o
	if o.SkipGap {
		v.Note = "gap statistic skipped"
		return ev, nil
	}
	cost := make(map[int]float64, len(r.Points))
	for _, pt := range r.Points {
		cost[pt.K] = pt.Cost
	}
	cluster := func(ctx context.Context, X *mat.Dense, k int, seed uint64) (float64, error) {
		if err := sw.rep.begin(ctx, k, StageGap); err != nil {
			return 0, err
		}
		defer sw.rep.finish(k, StageGap)
		if X == sw.Z {
			return cost[k], nil
		}
		res, err := kmeans.Cluster(ctx, kmeans.Problem{Data: X, K: k, Seeder: sw.p.Seeder}, &kmeans.Settings{
			Restarts: o.GapRestarts, MaxIterations: sw.set.MaxIterations, Tolerance: o.GapTolerance, Seed: seed, Workers: 1,
		}, sw.m)
		if err != nil {
			return 0, err
		}
		return res.Cost, nil
	}
	g, err := validate.Gap(ctx, sw.Zs, sw.ks, cluster, &validate.GapOptions{
		B: o.GapReferences, Reference: o.GapReference, Seed: sweepMix(sw.set.Seed, gapStream, 0), Workers: sw.set.Workers,
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
	on := ""
	if sw.sample != nil {
		on = fmt.Sprintf(", on a sample of %d rows", len(sw.sample))
	}
	if !g.Found {
		v.Note = fmt.Sprintf("no swept k has Gap(k) ≥ Gap(k+1) − s_{k+1} (%s reference, B = %d%s): extend the range", o.GapReference, o.GapReferences, on)
		return ev, nil
	}
	i := 0
	for sw.ks[i] != g.Best {
		i++
	}
	v.K = g.Best
	ev.scores = gapScores(g.Gap, i)
	v.Note = fmt.Sprintf("smallest k with Gap(k) ≥ Gap(k+1) − s_{k+1}: %.3f ≥ %.3f − %.3f at k+1 = %d (%s reference, B = %d%s)",
		g.Gap[i], g.Gap[i+1], g.SK[i+1], sw.ks[i+1], o.GapReference, o.GapReferences, on)
	return ev, nil
}
