package validate

import (
	"fmt"
	"math"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"

	"github.com/centroidlab/centroid/internal/check"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
)

// rowView is a read-only view of the rows of an n×d matrix. For a
// mat.RawMatrixer (such as *mat.Dense) it aliases the matrix's storage and
// honours its stride; other matrices are copied once.
type rowView struct {
	n, d, stride int
	data         []float64
	maxAbs       float64 // largest |x|, set by checkFinite
}

// row returns row i with its capacity clipped so that appending cannot write
// into the next row.
func (v *rowView) row(i int) []float64 {
	off := i * v.stride
	return v.data[off : off+v.d : off+v.d]
}

// viewRows returns a view of X or an error wrapping ErrEmpty for a nil or
// empty matrix.
func viewRows(X mat.Matrix) (*rowView, error) {
	n, d, err := check.Matrix(X, ErrEmpty)
	if err != nil {
		return nil, err
	}
	if rm, ok := X.(mat.RawMatrixer); ok {
		g := rm.RawMatrix()
		if g.Rows == n && g.Cols == d && g.Stride >= d && len(g.Data) >= (n-1)*g.Stride+d {
			return &rowView{n: n, d: d, stride: g.Stride, data: g.Data}, nil
		}
	}
	data, _ := check.RowMajor(X)
	return &rowView{n: n, d: d, stride: d, data: data}, nil
}

// checkFinite returns an error wrapping ErrNotFinite naming the first NaN or
// ±Inf element, and records the largest absolute value.
func (v *rowView) checkFinite() error {
	v.maxAbs = 0
	for i := range v.n {
		row := v.row(i)
		if err := check.FiniteRow(row, ErrNotFinite); err != nil {
			return fmt.Errorf("row %d: %w", i, err)
		}
		for _, x := range row {
			v.maxAbs = max(v.maxAbs, math.Abs(x))
		}
	}
	return nil
}

// Data whose largest absolute value lies outside [2^-rangeExp, 2^rangeExp]
// is rescaled before squared distances are summed, so that they neither
// overflow nor underflow.
const rangeExp = 400

// rescaled returns v itself and 0 when its values are of moderate size
// (checkFinite must have run). Otherwise it returns a copy of v multiplied by
// the power of two 2^e that brings the largest absolute value into [0.5, 1),
// and e. Multiplying by a power of two is exact (barring values that become
// subnormal) and leaves the scale-invariant indices unchanged.
func (v *rowView) rescaled() (*rowView, int) {
	if v.maxAbs == 0 || (v.maxAbs >= math.Ldexp(1, -rangeExp) && v.maxAbs <= math.Ldexp(1, rangeExp)) {
		return v, 0
	}
	_, e := math.Frexp(v.maxAbs)
	e = -e
	s := &rowView{n: v.n, d: v.d, stride: v.d, data: make([]float64, v.n*v.d)}
	for i := range v.n {
		for j, x := range v.row(i) {
			s.data[i*v.d+j] = math.Ldexp(x, e)
		}
	}
	s.maxAbs = math.Ldexp(v.maxAbs, e)
	return s, e
}

// grouping is a clustering with its empty clusters removed: the non-empty
// clusters are renumbered 0..K−1 in increasing order of their label.
type grouping struct {
	k     int   // max(assign)+1, counting empty clusters
	id    []int // per row, the dense cluster index in [0, K)
	label []int // per dense index, the caller's label
	size  []int // per dense index, the number of rows (≥ 1)
}

// clusters returns K, the number of non-empty clusters.
func (g *grouping) clusters() int { return len(g.size) }

// groupRows checks assign (ErrLabel for a negative label) and renumbers its
// non-empty clusters. Memory is O(n) whatever the label values.
func groupRows(assign []int) (*grouping, error) {
	n := len(assign)
	top := -1
	for i, a := range assign {
		if a < 0 {
			return nil, fmt.Errorf("%w: assignment %d is %d", ErrLabel, i, a)
		}
		top = max(top, a)
	}
	g := &grouping{k: top + 1, id: make([]int, n)}
	if top == math.MaxInt {
		g.k = math.MaxInt // saturate; perClusterLimit rejects it
	}
	if top < 2*n+1024 {
		slot := make([]int, top+1)
		for _, a := range assign {
			slot[a]++
		}
		for a, c := range slot {
			if c > 0 {
				slot[a] = len(g.size)
				g.label = append(g.label, a)
				g.size = append(g.size, c)
			}
		}
		for i, a := range assign {
			g.id[i] = slot[a]
		}
		return g, nil
	}
	// Sparse labels: sort the distinct values instead of indexing by them.
	g.label = slices.Clone(assign)
	slices.Sort(g.label)
	g.label = slices.Compact(g.label)
	g.size = make([]int, len(g.label))
	for i, a := range assign {
		c, _ := slices.BinarySearch(g.label, a)
		g.id[i] = c
		g.size[c]++
	}
	return g, nil
}

// perClusterLimit returns an error wrapping ErrLabel when a slice indexed by
// label, of length max(assign)+1, would be longer than max(n, 2^20): such a
// label cannot come from a clustering of n rows into a sensible number of
// clusters, and the slice could exhaust memory.
func (g *grouping) perClusterLimit() error {
	if limit := max(len(g.id), 1<<20); g.k > limit {
		return fmt.Errorf("%w: largest label %d needs a per-cluster slice longer than %d", ErrLabel, g.k-1, limit)
	}
	return nil
}

// prepare runs the input checks shared by every index, in the documented
// order: empty data, length mismatch, non-finite data, negative label.
func prepare(X mat.Matrix, assign []int) (*rowView, *grouping, error) {
	v, err := viewRows(X)
	if err != nil {
		return nil, nil, err
	}
	if len(assign) != v.n {
		return nil, nil, fmt.Errorf("%w: %d assignments for %d rows", ErrLength, len(assign), v.n)
	}
	if err := v.checkFinite(); err != nil {
		return nil, nil, err
	}
	g, err := groupRows(assign)
	if err != nil {
		return nil, nil, err
	}
	return v, g, nil
}

// atLeastTwo returns an error wrapping ErrClusters when fewer than two
// clusters have rows.
func (g *grouping) atLeastTwo(index string) error {
	if g.clusters() < 2 {
		return fmt.Errorf("%w: %s needs at least 2 non-empty clusters, have %d", ErrClusters, index, g.clusters())
	}
	return nil
}

// notAllSingletons returns an error wrapping ErrClusters when every row is a
// cluster of its own (K == n).
func (g *grouping) notAllSingletons(index string) error {
	if g.clusters() == len(g.id) {
		return fmt.Errorf("%w: %s is undefined when every one of the %d rows is its own cluster", ErrClusters, index, len(g.id))
	}
	return nil
}

// centroids returns the K×d cluster means, row c at [c*d:(c+1)*d].
func centroids(v *rowView, g *grouping) []float64 {
	d := v.d
	c := make([]float64, g.clusters()*d)
	for i := range v.n {
		ci := c[g.id[i]*d : (g.id[i]+1)*d]
		for j, x := range v.row(i) {
			ci[j] += x
		}
	}
	for k, s := range g.size {
		ck := c[k*d : (k+1)*d]
		for j := range ck {
			ck[j] /= float64(s)
		}
	}
	return c
}

// withinSS returns the within-cluster sum of squares of each non-empty
// cluster about its mean.
func withinSS(v *rowView, g *grouping, c []float64) []float64 {
	d := v.d
	w := make([]float64, g.clusters())
	for i := range v.n {
		k := g.id[i]
		w[k] += distance.SqEuclidean(v.row(i), c[k*d:(k+1)*d])
	}
	return w
}

// WithinSS returns the within-cluster sum of squares Σ‖x−c_j‖² of every
// cluster j about its mean c_j (Euclidean). The result has length
// max(assign)+1; a cluster with no rows has 0.
//
// It returns an error wrapping ErrEmpty, ErrLength, ErrNotFinite or ErrLabel
// for bad input (see the package documentation, including the limit on label
// values).
func WithinSS(X mat.Matrix, assign []int) ([]float64, error) {
	v, g, err := prepare(X, assign)
	if err != nil {
		return nil, err
	}
	if err := g.perClusterLimit(); err != nil {
		return nil, err
	}
	v, e := v.rescaled()
	w := withinSS(v, g, centroids(v, g))
	out := make([]float64, g.k)
	for c, l := range g.label {
		out[l] = math.Ldexp(w[c], -2*e)
	}
	return out, nil
}

// CalinskiHarabasz returns the Caliński–Harabasz variance ratio
//
//	CH = [B/(K−1)] / [W/(n−K)]
//
// where B = Σ_j n_j‖c_j−c‖² is the between-cluster and W = Σ_j Σ_{x∈j} ‖x−c_j‖²
// the within-cluster sum of squares, c_j the cluster means, c the mean of all
// rows and K the number of non-empty clusters (T. Caliński and J. Harabasz,
// "A dendrite method for cluster analysis", Communications in Statistics 3(1),
// 1974). Higher is better.
//
// When W is 0 (every row equals its cluster mean) and B > 0 the result is
// +Inf. It returns an error wrapping ErrClusters if K < 2, if K == n, or if
// all rows coincide (B = W = 0), and ErrEmpty, ErrLength, ErrNotFinite or
// ErrLabel for bad input.
func CalinskiHarabasz(X mat.Matrix, assign []int) (float64, error) {
	v, g, err := prepare(X, assign)
	if err != nil {
		return 0, err
	}
	if err := g.atLeastTwo("Calinski-Harabasz"); err != nil {
		return 0, err
	}
	if err := g.notAllSingletons("Calinski-Harabasz"); err != nil {
		return 0, err
	}
	v, _ = v.rescaled()
	d := v.d
	c := centroids(v, g)
	mean := make([]float64, d)
	for i := range v.n {
		for j, x := range v.row(i) {
			mean[j] += x
		}
	}
	for j := range mean {
		mean[j] /= float64(v.n)
	}
	var b, w float64
	for k, s := range g.size {
		b += float64(s) * distance.SqEuclidean(c[k*d:(k+1)*d], mean)
	}
	for _, wk := range withinSS(v, g, c) {
		w += wk
	}
	K := float64(g.clusters())
	switch {
	case w == 0 && b == 0:
		return 0, fmt.Errorf("%w: Calinski-Harabasz is undefined when all rows coincide", ErrClusters)
	case w == 0:
		return math.Inf(1), nil
	}
	return (b / (K - 1)) / (w / (float64(v.n) - K)), nil
}

// DaviesBouldin returns the Davies–Bouldin index with Euclidean distances
// (D. L. Davies and D. W. Bouldin, "A cluster separation measure", IEEE
// Trans. Pattern Analysis and Machine Intelligence 1(2), 1979), with the
// paper's q = 1 scatter and p = 2 separation:
//
//	S_i  = (1/n_i) Σ_{x∈i} ‖x−c_i‖       mean distance of the members to the mean
//	M_ij = ‖c_i−c_j‖                      distance between the means
//	DB   = (1/K) Σ_i max_{j≠i} (S_i+S_j)/M_ij
//
// over the K non-empty clusters. Lower is better; a singleton has S_i = 0.
//
// Two clusters with the same mean (M_ij = 0) make the ratio infinite or
// undefined: DaviesBouldin then returns an error wrapping ErrClusters rather
// than +Inf or NaN. It also returns ErrClusters if K < 2, and ErrEmpty,
// ErrLength, ErrNotFinite or ErrLabel for bad input.
func DaviesBouldin(X mat.Matrix, assign []int) (float64, error) {
	v, g, err := prepare(X, assign)
	if err != nil {
		return 0, err
	}
	if err := g.atLeastTwo("Davies-Bouldin"); err != nil {
		return 0, err
	}
	v, _ = v.rescaled()
	d := v.d
	c := centroids(v, g)
	K := g.clusters()
	s := make([]float64, K)
	for i := range v.n {
		k := g.id[i]
		s[k] += math.Sqrt(distance.SqEuclidean(v.row(i), c[k*d:(k+1)*d]))
	}
	for k := range s {
		s[k] /= float64(g.size[k])
	}
	var sum float64
	for i := range K {
		worst := 0.0
		for j := range K {
			if j == i {
				continue
			}
			m := math.Sqrt(distance.SqEuclidean(c[i*d:(i+1)*d], c[j*d:(j+1)*d]))
			if m == 0 {
				return 0, fmt.Errorf("%w: Davies-Bouldin is undefined: clusters %d and %d have the same mean", ErrClusters, g.label[i], g.label[j])
			}
			worst = max(worst, (s[i]+s[j])/m)
		}
		sum += worst
	}
	return sum / float64(K), nil
}

// Dunn returns Dunn's index, the smallest Euclidean distance between two rows
// of different clusters divided by the largest cluster diameter (largest
// distance between two rows of the same cluster) (J. C. Dunn, "Well-separated
// clusters and optimal fuzzy partitions", J. Cybernetics 4, 1974). Higher is
// better. It takes O(n²d) time and O(1) extra memory per goroutine; the
// result does not depend on the number of goroutines.
//
// When every diameter is 0 (all clusters are singletons or repeated points)
// the result is +Inf, unless rows of different clusters also coincide, which
// returns an error wrapping ErrClusters. Otherwise coinciding rows in
// different clusters give 0. It returns ErrClusters if fewer than two
// clusters have rows, and ErrEmpty, ErrLength, ErrNotFinite or ErrLabel for
// bad input.
func Dunn(X mat.Matrix, assign []int) (float64, error) {
	v, g, err := prepare(X, assign)
	if err != nil {
		return 0, err
	}
	if err := g.atLeastTwo("Dunn"); err != nil {
		return 0, err
	}
	v, _ = v.rescaled()
	return dunn(v, g, runtime.GOMAXPROCS(0))
}

func dunn(v *rowView, g *grouping, workers int) (float64, error) {
	type extremes struct{ sep, diam float64 }
	part := make([]extremes, workers)
	for w := range part {
		part[w] = extremes{sep: math.Inf(1)}
	}
	runBlocks(v.n, workers, func(w, lo, hi int) {
		sep, diam := part[w].sep, part[w].diam
		for i := lo; i < hi; i++ {
			xi, ci := v.row(i), g.id[i]
			for j := i + 1; j < v.n; j++ {
				d2 := distance.SqEuclidean(xi, v.row(j))
				if g.id[j] == ci {
					diam = max(diam, d2)
				} else {
					sep = min(sep, d2)
				}
			}
		}
		part[w] = extremes{sep, diam}
	})
	sep, diam := math.Inf(1), 0.0
	for _, p := range part {
		sep, diam = min(sep, p.sep), max(diam, p.diam)
	}
	// Min and max are exact, so the order of the reduction does not matter;
	// the square root is monotone, so taking it last changes nothing.
	switch {
	case sep == 0 && diam == 0:
		return 0, fmt.Errorf("%w: Dunn is undefined: rows of different clusters coincide and every diameter is 0", ErrClusters)
	case diam == 0:
		return math.Inf(1), nil
	}
	return math.Sqrt(sep) / math.Sqrt(diam), nil
}

// blockRows is the number of consecutive rows one goroutine handles at a
// time. It is fixed so that the split never depends on the worker count.
const blockRows = 32

// runBlocks calls fn(w, lo, hi) for the blocks [lo, hi) of blockRows rows
// covering [0, n), on at most workers goroutines; w in [0, workers) names the
// goroutine so fn can use per-worker scratch. Blocks are handed out in order
// but may finish in any order: fn must write results by row, not append.
func runBlocks(n, workers int, fn func(w, lo, hi int)) {
	blocks := (n + blockRows - 1) / blockRows
	workers = max(1, min(workers, blocks))
	if workers == 1 {
		for b := range blocks {
			fn(0, b*blockRows, min(n, (b+1)*blockRows))
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := range workers {
		wg.Go(func() {
			for {
				b := int(next.Add(1) - 1)
				if b >= blocks {
					return
				}
				fn(w, b*blockRows, min(n, (b+1)*blockRows))
			}
		})
	}
	wg.Wait()
}
