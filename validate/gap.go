package validate

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"sync"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
)

// ClusterFunc clusters X into k clusters and returns the within-cluster
// dispersion W_k of the result: the pooled within-cluster sum of squares
// Σ_r Σ_{x∈r} ‖x−c_r‖² about the cluster means. (Tibshirani et al. define
// W_k = Σ_r D_r/(2n_r) with D_r the sum of squared Euclidean distances
// between all pairs of rows of cluster r, which is the same number.) The cost
// of a k-means clustering in the Euclidean metric is exactly this quantity.
//
// seed is derived by Gap from GapOptions.Seed, the data set and k, so a
// ClusterFunc that draws its randomness from seed makes Gap reproducible.
// X must not be modified or retained after the call. W_k must be finite and
// positive. When GapOptions.Workers > 1 the function is called from several
// goroutines at once and must be safe for concurrent use.
type ClusterFunc func(ctx context.Context, X *mat.Dense, k int, seed uint64) (cost float64, err error)

// Reference names how Gap draws its reference (null) data sets.
type Reference int

const (
	// PCABox draws uniformly in the box aligned with the principal
	// components of the data: the centred data are rotated onto their
	// principal axes (gonum stat.PC), points are drawn uniformly within the
	// range of each rotated column, then rotated back and shifted to the
	// data mean. It is the zero value and the choice Tibshirani et al.
	// recommend, as it follows the shape of the data.
	PCABox Reference = iota
	// UniformBox draws every column uniformly within the range of the
	// corresponding data column.
	UniformBox
)

// String returns the reference distribution's name.
func (r Reference) String() string {
	switch r {
	case PCABox:
		return "PCA box"
	case UniformBox:
		return "uniform box"
	}
	return fmt.Sprintf("Reference(%d)", int(r))
}

// MaxGapReferences is the largest GapOptions.B: every reference set is
// clustered once per k, so the cost grows with B while the estimate of
// E*[log W_k] sharpens only as 1/√B.
const MaxGapReferences = 1 << 12

// GapOptions tunes Gap. A nil *GapOptions and the zero value mean the
// defaults.
type GapOptions struct {
	// B is the number of reference data sets. Zero means 10; 1, negative
	// values (the spread needs at least two) and values above
	// MaxGapReferences are invalid.
	B int
	// Reference is the null distribution. The zero value is PCABox.
	Reference Reference
	// Seed determines the reference data sets and the seeds passed to the
	// ClusterFunc. Any value is valid.
	Seed uint64
	// Workers is the number of reference data sets clustered at the same
	// time. Zero means 1 (the ClusterFunc is typically parallel itself);
	// negative values are invalid. The result does not depend on Workers.
	Workers int
}

// GapResult is the outcome of Gap. The slices are parallel to Ks: Gap[i] is
// the gap statistic for k = Ks[i], and so on.
type GapResult struct {
	// Ks are the numbers of clusters tried, in increasing order.
	Ks []int
	// LogW is log W_k of the data.
	LogW []float64
	// ExpectedLogW is the mean of log W*_kb over the B reference sets, the
	// estimate of E*_n[log W_k].
	ExpectedLogW []float64
	// Gap is ExpectedLogW − LogW.
	Gap []float64
	// SK is s_k = sd_k·sqrt(1 + 1/B), where sd_k is the standard deviation
	// (denominator B) of log W*_kb over the reference sets.
	SK []float64
	// Best is the smallest Ks[i] with Gap[i] ≥ Gap[i+1] − SK[i+1] (the rule
	// of Tibshirani et al., comparing consecutive entries of Ks). If no
	// entry satisfies it, Best is the largest k tried and Found is false.
	Best int
	// Found reports whether the rule above picked Best.
	Found bool
}

// Gap computes the gap statistic for every k in ks (R. Tibshirani, G.
// Walther and T. Hastie, "Estimating the number of clusters in a data set via
// the gap statistic", J. Royal Statistical Society B 63(2), 2001):
//
//	Gap(k) = (1/B) Σ_b log W*_kb − log W_k
//
// where W_k is the dispersion cluster reports for the data and W*_kb for the
// b-th of B reference data sets of the same size drawn from a uniform
// distribution over a box fitted to the data (see Reference). Every
// reference set is clustered for every k. The suggested number of clusters
// is the smallest k with Gap(k) ≥ Gap(k+1) − s_{k+1} (see GapResult).
//
// Reference set b (b = 0, …, B−1) is drawn from its own random stream
// determined by Seed and b, and the seed given to cluster is determined by
// Seed, the set (data or b) and k, so the result is the same for any
// Workers. If X is a *mat.Dense it is passed to cluster as it is; other
// matrices are copied once.
//
// Gap returns an error wrapping ErrEmpty for nil or empty X or fewer than 2
// rows; ErrNotFinite for NaN or ±Inf; ErrClusters if a k is below 1 or above
// the number of rows, or if cluster reports W_k = 0 for the data (k is at
// least the number of distinct rows); ErrParameter for empty or unsorted ks,
// a nil cluster, invalid options or a cost that is negative or not finite;
// and the error of cluster or ctx, wrapped, if either fails.
func Gap(ctx context.Context, X mat.Matrix, ks []int, cluster ClusterFunc, opts *GapOptions) (*GapResult, error) {
	var o GapOptions
	if opts != nil {
		o = *opts
	}
	v, err := viewRows(X)
	if err != nil {
		return nil, err
	}
	if v.n < 2 {
		return nil, fmt.Errorf("%w: the gap statistic needs at least 2 rows, have %d", ErrEmpty, v.n)
	}
	if err := v.checkFinite(); err != nil {
		return nil, err
	}
	if err := checkGapArgs(ks, v.n, cluster, &o); err != nil {
		return nil, err
	}
	data, ok := X.(*mat.Dense)
	if !ok {
		data = mat.DenseCopyOf(X)
	}

	res := &GapResult{
		Ks:           append([]int(nil), ks...),
		LogW:         make([]float64, len(ks)),
		ExpectedLogW: make([]float64, len(ks)),
		Gap:          make([]float64, len(ks)),
		SK:           make([]float64, len(ks)),
	}
	for i, k := range ks {
		w, err := callCluster(ctx, cluster, data, k, gapSeed(o.Seed, 0, k))
		if err != nil {
			return nil, fmt.Errorf("validate: gap: data, k = %d: %w", k, err)
		}
		if w == 0 {
			return nil, fmt.Errorf("%w: gap: W_k = 0 for the data at k = %d (k is at least the number of distinct rows)", ErrClusters, k)
		}
		res.LogW[i] = math.Log(w)
	}

	box, err := newRefBox(v, o.Reference)
	if err != nil {
		return nil, err
	}
	logWRef := make([][]float64, o.B) // [b][i] = log W*_{ks[i], b}
	// The first failure cancels the other reference sets and is reported
	// (later ones are usually just the cancellation).
	var (
		mu       sync.Mutex
		firstErr error
		wg       sync.WaitGroup
	)
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	jobs := make(chan int)
	for range o.Workers {
		wg.Go(func() {
			for b := range jobs {
				lw, err := refLogW(ctx, cluster, box, ks, o.Seed, b)
				if err != nil {
					mu.Lock()
					if firstErr == nil {
						firstErr = err
					}
					mu.Unlock()
					cancel()
					continue
				}
				logWRef[b] = lw
			}
		})
	}
	for b := range o.B {
		if ctx.Err() != nil {
			break
		}
		jobs <- b
	}
	close(jobs)
	wg.Wait()
	if firstErr != nil {
		return nil, firstErr
	}
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("validate: gap: %w", err)
	}

	B := float64(o.B)
	for i := range ks {
		var mean float64
		for b := range o.B {
			mean += logWRef[b][i]
		}
		mean /= B
		var ss float64
		for b := range o.B {
			d := logWRef[b][i] - mean
			ss += d * d
		}
		res.ExpectedLogW[i] = mean
		res.Gap[i] = mean - res.LogW[i]
		res.SK[i] = math.Sqrt(ss/B) * math.Sqrt(1+1/B)
	}
	res.Best = ks[len(ks)-1]
	for i := 0; i+1 < len(ks); i++ {
		if res.Gap[i] >= res.Gap[i+1]-res.SK[i+1] {
			res.Best, res.Found = ks[i], true
			break
		}
	}
	return res, nil
}

// checkGapArgs validates ks, cluster and the options, filling in defaults.
func checkGapArgs(ks []int, n int, cluster ClusterFunc, o *GapOptions) error {
	if len(ks) == 0 {
		return fmt.Errorf("%w: gap: no k to try", ErrParameter)
	}
	for i, k := range ks {
		if k < 1 || k > n {
			return fmt.Errorf("%w: gap: k = %d with %d rows, want 1 ≤ k ≤ %d", ErrClusters, k, n, n)
		}
		if i > 0 && k <= ks[i-1] {
			return fmt.Errorf("%w: gap: ks must be strictly increasing (%d after %d)", ErrParameter, k, ks[i-1])
		}
	}
	if cluster == nil {
		return fmt.Errorf("%w: gap: nil ClusterFunc", ErrParameter)
	}
	switch {
	case o.B == 0:
		o.B = 10
	case o.B < 2 || o.B > MaxGapReferences:
		return fmt.Errorf("%w: gap: B = %d reference sets, want 2 ≤ B ≤ %d", ErrParameter, o.B, MaxGapReferences)
	}
	if o.Reference != PCABox && o.Reference != UniformBox {
		return fmt.Errorf("%w: gap: unknown reference distribution %v", ErrParameter, o.Reference)
	}
	switch {
	case o.Workers == 0:
		o.Workers = 1
	case o.Workers < 0:
		return fmt.Errorf("%w: gap: Workers = %d", ErrParameter, o.Workers)
	}
	o.Workers = min(o.Workers, o.B)
	return nil
}

// callCluster calls cluster unless ctx is done and checks the cost it returns.
func callCluster(ctx context.Context, cluster ClusterFunc, X *mat.Dense, k int, seed uint64) (float64, error) {
	if err := ctx.Err(); err != nil {
		return 0, err
	}
	w, err := cluster(ctx, X, k, seed)
	if err != nil {
		return 0, err
	}
	if !(w >= 0) || math.IsInf(w, 0) {
		return 0, fmt.Errorf("%w: ClusterFunc returned cost %v, want finite and ≥ 0", ErrParameter, w)
	}
	return w, nil
}

// refLogW draws reference set b and returns log W* for every k in ks.
func refLogW(ctx context.Context, cluster ClusterFunc, box *refBox, ks []int, seed uint64, b int) ([]float64, error) {
	if err := ctx.Err(); err != nil {
		return nil, fmt.Errorf("validate: gap: %w", err)
	}
	Z := box.draw(rand.New(rand.NewPCG(seed, splitMix(uint64(b)+1))))
	out := make([]float64, len(ks))
	for i, k := range ks {
		w, err := callCluster(ctx, cluster, Z, k, gapSeed(seed, b+1, k))
		if err != nil {
			return nil, fmt.Errorf("validate: gap: reference set %d, k = %d: %w", b, k, err)
		}
		if w == 0 {
			return nil, fmt.Errorf("%w: gap: ClusterFunc returned W_k = 0 for reference set %d at k = %d", ErrParameter, b, k)
		}
		out[i] = math.Log(w)
	}
	return out, nil
}

// refBox is a box to draw reference data from: column j of the rotated
// coordinates is uniform on [lo[j], hi[j]], and a rotated point z' maps back
// to z = z'·rotᵀ + mean. rot is nil for UniformBox (no rotation, zero mean).
type refBox struct {
	n, d   int
	lo, hi []float64
	rot    *mat.Dense // d×p, columns are principal directions
	mean   []float64  // length d
}

func newRefBox(v *rowView, ref Reference) (*refBox, error) {
	box := &refBox{n: v.n, d: v.d}
	if ref == UniformBox {
		box.lo, box.hi = columnRange(v)
		return box, nil
	}
	data := mat.NewDense(v.n, v.d, nil)
	box.mean = make([]float64, v.d)
	for i := range v.n {
		data.SetRow(i, v.row(i))
		for j, x := range v.row(i) {
			box.mean[j] += x
		}
	}
	for j := range box.mean {
		box.mean[j] /= float64(v.n)
	}
	for i := range v.n {
		r := data.RawRowView(i)
		for j := range r {
			r[j] -= box.mean[j]
		}
	}
	var pc stat.PC
	if !pc.PrincipalComponents(data, nil) {
		return nil, fmt.Errorf("%w: gap: principal components of the data could not be computed", ErrNotFinite)
	}
	box.rot = new(mat.Dense)
	pc.VectorsTo(box.rot)
	var rotated mat.Dense
	rotated.Mul(data, box.rot)
	rv, _ := viewRows(&rotated)
	box.lo, box.hi = columnRange(rv)
	return box, nil
}

// columnRange returns the minimum and maximum of every column of v.
func columnRange(v *rowView) (lo, hi []float64) {
	lo = append([]float64(nil), v.row(0)...)
	hi = append([]float64(nil), v.row(0)...)
	for i := 1; i < v.n; i++ {
		for j, x := range v.row(i) {
			lo[j], hi[j] = min(lo[j], x), max(hi[j], x)
		}
	}
	return lo, hi
}

// draw returns a new n×d reference data set drawn with rnd.
func (box *refBox) draw(rnd *rand.Rand) *mat.Dense {
	p := len(box.lo)
	Zp := mat.NewDense(box.n, p, nil)
	for i := range box.n {
		r := Zp.RawRowView(i)
		for j := range r {
			r[j] = box.lo[j] + (box.hi[j]-box.lo[j])*rnd.Float64()
		}
	}
	if box.rot == nil {
		return Zp
	}
	Z := mat.NewDense(box.n, box.d, nil)
	Z.Mul(Zp, box.rot.T())
	for i := range box.n {
		r := Z.RawRowView(i)
		for j := range r {
			r[j] += box.mean[j]
		}
	}
	return Z
}

// gapSeed derives the seed passed to the ClusterFunc for data set set (0 for
// the data, b+1 for reference set b) and k.
func gapSeed(seed uint64, set, k int) uint64 {
	return splitMix(seed ^ splitMix(uint64(set)<<32|uint64(uint32(k))))
}

// splitMix is the SplitMix64 output function (G. L. Steele, D. Lea and C. H.
// Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014).
func splitMix(x uint64) uint64 {
	x += 0x9e3779b97f4a7c15
	x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9
	x = (x ^ (x >> 27)) * 0x94d049bb133111eb
	return x ^ (x >> 31)
}
