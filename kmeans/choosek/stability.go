package choosek

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/sample"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/validate"
)

// Defaults of StabilityOptions.
const (
	DefaultStabilityResamples = 10
	DefaultStabilityFraction  = 0.8
	DefaultStabilityRestarts  = 3
)

// StabilityOptions tunes [MeasureStability]. A nil *StabilityOptions and the
// zero value mean the defaults.
type StabilityOptions struct {
	// Resamples is the number B of subsamples clustered again. Zero means
	// DefaultStabilityResamples (10); 1 and negative values are invalid (the
	// mean ARI needs a pair of resamples).
	Resamples int
	// Fraction is the share of the rows drawn, without replacement, for
	// every resample: round(Fraction·n) rows. Zero means
	// DefaultStabilityFraction (0.8); values outside (0, 1] are invalid.
	// With Fraction 1 every resample sees all rows and only the seeding
	// varies.
	Fraction float64
	// Restarts is Settings.Restarts of every resample. Zero means
	// DefaultStabilityRestarts (3); negative is invalid.
	Restarts int
}

func (o *StabilityOptions) resolved() (StabilityOptions, error) {
	var r StabilityOptions
	if o != nil {
		r = *o
	}
	switch {
	case r.Resamples == 0:
		r.Resamples = DefaultStabilityResamples
	case r.Resamples < 2:
		return r, fmt.Errorf("%w: stability Resamples = %d, want at least 2", kmeans.ErrSettings, r.Resamples)
	}
	switch {
	case r.Fraction == 0:
		r.Fraction = DefaultStabilityFraction
	case !(r.Fraction > 0 && r.Fraction <= 1):
		return r, fmt.Errorf("%w: stability Fraction = %v, want 0 < Fraction ≤ 1", kmeans.ErrSettings, r.Fraction)
	}
	switch {
	case r.Restarts == 0:
		r.Restarts = DefaultStabilityRestarts
	case r.Restarts < 0:
		return r, fmt.Errorf("%w: stability Restarts = %d", kmeans.ErrSettings, r.Restarts)
	}
	return r, nil
}

// Stability is how well a clustering survives being re-clustered on subsamples
// of its rows.
type Stability struct {
	// K is the number of clusters.
	K int
	// Rows is the number of rows the resamples were drawn from: all rows of
	// the problem, or the seeded sample of [Sweep] (Options.SampleRows).
	Rows int
	// Resamples and Fraction are the number of subsamples and the share of
	// the Rows in each.
	Resamples int
	Fraction  float64
	// MeanARI is the adjusted Rand index between two resamples, computed on
	// the rows both subsamples drew and averaged over all Resamples·(Resamples−1)/2
	// pairs. Near 1: the resamples agree; near 0: agreement no better than
	// chance.
	MeanARI float64
	// Jaccard[j] is the mean, over the resamples that drew rows of cluster j of
	// the reference clustering, of the Jaccard similarity between those
	// rows and the most similar cluster of the resample
	// ([validate.ClusterJaccard]). A reference cluster with no rows, or never
	// drawn, gets 0.
	Jaccard []float64
	// Drawn[j] is the number of resamples that drew rows of cluster j.
	Drawn []int
	// Lost[j] is the number of those resamples that lost cluster j: its
	// best Jaccard similarity was at most [validate.JaccardLost] (0.5).
	Lost []int
}

// MinJaccard returns the smallest per-cluster Jaccard stability: the
// weakest cluster decides whether the whole clustering can be trusted.
func (s *Stability) MinJaccard() float64 {
	if len(s.Jaccard) == 0 {
		return 0
	}
	return slices.Min(s.Jaccard)
}

// Reading returns the reading ([validate.ReadJaccard]) of the weakest
// cluster: a clustering is only as trustworthy as its least reproduced
// cluster.
func (s *Stability) Reading() validate.Reproduction { return validate.ReadJaccard(s.MinJaccard()) }

// Readings returns the reading ([validate.ReadJaccard]) of every cluster.
func (s *Stability) Readings() []validate.Reproduction {
	r := make([]validate.Reproduction, len(s.Jaccard))
	for j, x := range s.Jaccard {
		r[j] = validate.ReadJaccard(x)
	}
	return r
}

// MeasureStability clusters subsamples of the rows of problem p again and
// measures how well the clusters of the reference assignments ref
// (len n, labels in [0, p.K)) are reproduced, cluster by cluster, following
// Hennig's resampling scheme (C. Hennig, "Cluster-wise assessment of
// cluster stability", Computational Statistics & Data Analysis 52, 2007).
// If ref is nil, p is first clustered with s and m and that result is the
// reference.
//
// Resample b draws round(Fraction·n) rows without replacement (a partial
// Fisher–Yates shuffle from a PCG generator seeded by s.Seed and b) and runs
// Cluster on them with the same metric, seeder, scaler (learned again on
// the subsample: the whole procedure is repeated) and weights, Restarts
// restarts and a seed derived from s.Seed and b. The result is
// deterministic for a given s.Seed whatever s.Workers.
//
// It returns an error wrapping ErrSettings for invalid options, ErrData or
// ErrK if ref does not label the n rows with values in [0, p.K), ErrK if a
// subsample has fewer than p.K distinct rows (raise Fraction), the errors of
// Cluster, and ctx.Err() if ctx ends.
func MeasureStability(ctx context.Context, p kmeans.Problem, ref []int, s *kmeans.Settings, m kmeans.Method, o *StabilityOptions) (*Stability, error) {
	opt, err := o.resolved()
	if err != nil {
		return nil, err
	}
	set, err := quietSettings(s)
	if err != nil {
		return nil, err
	}
	if ref == nil {
		res, err := kmeans.Cluster(ctx, p, &set, m)
		if err != nil {
			return nil, err
		}
		ref = res.Assignments
	}
	if p.Data == nil {
		return nil, fmt.Errorf("%w: nil matrix", kmeans.ErrData)
	}
	n, _ := p.Data.Dims()
	if len(ref) != n {
		return nil, fmt.Errorf("%w: %d reference assignments for %d rows", kmeans.ErrData, len(ref), n)
	}
	for i, a := range ref {
		if a < 0 || a >= p.K {
			return nil, fmt.Errorf("%w: reference assignment %d is %d, want 0 ≤ a < K = %d", kmeans.ErrK, i, a, p.K)
		}
	}
	return stabilityOf(ctx, p, ref, set, m, opt)
}

// stabilityOf is [MeasureStability] after the checks, with resolved settings.
func stabilityOf(ctx context.Context, p kmeans.Problem, ref []int, set kmeans.Settings, m kmeans.Method, opt StabilityOptions) (*Stability, error) {
	size, err := resampleSize(p, opt)
	if err != nil {
		return nil, err
	}
	draws := make([]redraw, opt.Resamples)
	for b := range opt.Resamples {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		if draws[b], err = resample(ctx, p, ref, set, m, opt, size, b); err != nil {
			return nil, err
		}
	}
	return combineRedraws(p, opt, draws)
}

// redraw is the outcome of one stability resample: the rows drawn
// (ascending), the labels the refit gave them, and the best Jaccard
// similarity of every reference cluster (NaN for a cluster not drawn).
type redraw struct {
	rows, labels []int
	best         []float64
}

// resampleSize returns the number of rows of every resample of p, or an
// error wrapping ErrK if it cannot hold p.K clusters.
func resampleSize(p kmeans.Problem, opt StabilityOptions) (int, error) {
	n, _ := p.Data.Dims()
	size := int(math.Round(opt.Fraction * float64(n)))
	if size < p.K || size < 2 {
		return 0, fmt.Errorf("%w: a subsample of %d of %d rows cannot hold K = %d clusters (raise Fraction)", kmeans.ErrK, size, n, p.K)
	}
	return size, nil
}

// resample draws resample b of size rows from p, clusters it and compares
// it with the reference assignments ref, cluster by cluster. Its random
// streams depend only on set.Seed and b.
func resample(ctx context.Context, p kmeans.Problem, ref []int, set kmeans.Settings, m kmeans.Method, opt StabilityOptions, size, b int) (redraw, error) {
	n, _ := p.Data.Dims()
	rows := subsample(n, size, sweepMix(set.Seed, stabilityStream, uint64(b)))
	sub := p
	sub.Data = selectRows(p.Data, rows)
	if p.Weights != nil {
		sub.Weights = make([]float64, size)
		for t, i := range rows {
			sub.Weights[t] = p.Weights[i]
		}
	}
	rs := set
	rs.Restarts = opt.Restarts
	rs.Seed = sweepMix(set.Seed, redrawStream, uint64(b))
	res, err := kmeans.Cluster(ctx, sub, &rs, m)
	if err != nil {
		if errors.Is(err, kmeans.ErrK) || errors.Is(err, kmeans.ErrWeights) {
			return redraw{}, fmt.Errorf("stability resample %d on %d of %d rows: %w (raise Fraction)", b, size, n, err)
		}
		return redraw{}, fmt.Errorf("stability resample %d: %w", b, err)
	}
	present, best, err := validate.ClusterJaccard(ref, res.Assignments, rows)
	if err != nil {
		return redraw{}, fmt.Errorf("stability resample %d: %w", b, err)
	}
	r := redraw{rows: rows, labels: res.Assignments, best: make([]float64, p.K)}
	for j := range r.best {
		r.best[j] = math.NaN()
	}
	for t, j := range present {
		r.best[j] = best[t]
	}
	return r, nil
}

// combineRedraws averages the resamples, in resample order, into the
// stability of the reference clustering.
func combineRedraws(p kmeans.Problem, opt StabilityOptions, draws []redraw) (*Stability, error) {
	n, _ := p.Data.Dims()
	st := &Stability{K: p.K, Rows: n, Resamples: opt.Resamples, Fraction: opt.Fraction,
		Jaccard: make([]float64, p.K), Drawn: make([]int, p.K), Lost: make([]int, p.K)}
	for _, d := range draws {
		for j, v := range d.best {
			if math.IsNaN(v) {
				continue
			}
			st.Jaccard[j] += v
			st.Drawn[j]++
			if v <= validate.JaccardLost {
				st.Lost[j]++
			}
		}
	}
	for j, c := range st.Drawn {
		if c > 0 {
			st.Jaccard[j] /= float64(c)
		}
	}
	var sum float64
	pairs := 0
	for a := range draws {
		for b := a + 1; b < len(draws); b++ {
			la, lb := commonLabels(draws[a].rows, draws[a].labels, draws[b].rows, draws[b].labels)
			if len(la) < 2 {
				continue
			}
			ari, err := validate.AdjustedRand(la, lb)
			if err != nil {
				return nil, fmt.Errorf("stability: %w", err)
			}
			sum += ari
			pairs++
		}
	}
	if pairs > 0 {
		st.MeanARI = sum / float64(pairs)
	}
	return st, nil
}

// quietSettings resolves s for the many Cluster calls of a sweep or a
// stability check, which report no progress.
func quietSettings(s *kmeans.Settings) (kmeans.Settings, error) {
	set, err := s.Resolve()
	set.Progress = nil
	return set, err
}

// Random streams derived from a seed by sweepMix, so that the parts of a
// sweep never share a generator.
const (
	stabilityStream  = 0x73746162 // "stab": subsample draws
	redrawStream     = 0x72666974 // seeds of the clusterings of the subsamples
	sweepKStream     = 0x6b6b6b6b // seeds of the clustering of each k
	silhouetteStream = 0x73696c68 // "silh": sampled silhouette rows
	gapStream        = 0x67617073 // "gaps": gap statistic
	sampleStream     = 0x73616d70 // "samp": the sample of the expensive criteria
)

// sweepMix derives a seed from seed, a stream and an index with the
// SplitMix64 output function (G. L. Steele, D. Lea and C. H. Flood, "Fast
// splittable pseudorandom number generators", OOPSLA 2014).
func sweepMix(seed, stream, i uint64) uint64 {
	x := seed ^ splitMix64(stream<<32^i)
	return splitMix64(x)
}

func splitMix64(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}

// subsample returns size distinct row indices of [0, n) in ascending order,
// the first size entries of a partial Fisher–Yates shuffle.
func subsample(n, size int, seed uint64) []int {
	out := sample.Without(rand.New(rand.NewPCG(seed, stabilityStream)), n, size)
	slices.Sort(out)
	return out
}

// selectRows returns a new matrix of the given rows of a, in order.
func selectRows(a mat.Matrix, rows []int) *mat.Dense {
	_, d := a.Dims()
	out := mat.NewDense(len(rows), d, nil)
	rm, fast := a.(mat.RawMatrixer)
	var raw blas64.General
	if fast {
		raw = rm.RawMatrix()
	}
	for t, i := range rows {
		dst := out.RawRowView(t)
		if fast {
			copy(dst, raw.Data[i*raw.Stride:i*raw.Stride+d])
			continue
		}
		for j := range dst {
			dst[j] = a.At(i, j)
		}
	}
	return out
}

// commonLabels returns the labels that two resamples gave to the rows both
// drew (rows are ascending).
func commonLabels(ra, la, rb, lb []int) (ca, cb []int) {
	for i, j := 0, 0; i < len(ra) && j < len(rb); {
		switch {
		case ra[i] < rb[j]:
			i++
		case ra[i] > rb[j]:
			j++
		default:
			ca = append(ca, la[i])
			cb = append(cb, lb[j])
			i++
			j++
		}
	}
	return ca, cb
}
