package profile

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"unicode"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/check"
	"github.com/centroidlab/centroid/internal/quantile"
)

// DefaultMinShift is the default Options.MinShift: a feature sets a
// cluster apart when the cluster's mean lies at least half an overall
// standard deviation from the overall mean (a "medium" standardised
// difference after J. Cohen, Statistical Power Analysis for the Behavioral
// Sciences, 1988; common practice).
const DefaultMinShift = 0.5

// Options tunes Explain. A nil *Options and the zero value mean the
// defaults.
type Options struct {
	// Names is the schema: Names[j] names column j of X. A caller holding
	// a model passes its schema,
	// [github.com/centroidlab/centroid/kmeans.Model.Features], so that the
	// report uses the names the model was trained and is served with (and
	// never silently numbers columns the model has names for). Nil (a
	// model without a schema) means "x0", "x1", …; otherwise there must be
	// one non-empty name per column without control characters.
	Names []string
	// Units[j] is the unit of column j, printed after its values (such as
	// "trips/day"); nil means none, "" leaves one column without a unit.
	Units []string
	// Weights holds one non-negative weight per row, as given to the
	// clustering; nil means all ones. Rows of weight zero count in
	// Cluster.Rows but not in any statistic.
	Weights []float64
	// K is the number of clusters, at most the number of rows. Zero means
	// one more than the largest assignment; a caller holding a model passes
	// [github.com/centroidlab/centroid/kmeans.Model.K], so that clusters
	// left without rows are reported too.
	K int
	// MinShift is the |shift| from which a feature sets a cluster apart.
	// Zero means DefaultMinShift (0.5); negative or non-finite is invalid.
	MinShift float64
	// Noun is the plural word for a row in the text, such as "stations";
	// "" means "rows".
	Noun string
}

// Summary describes one feature over a set of rows, in the units of the
// raw data (see the package documentation for the formulas).
type Summary struct {
	// Mean is the weighted mean and SD the weighted population standard
	// deviation.
	Mean float64 `json:"mean"`
	SD   float64 `json:"sd"`
	// Median is the weighted median Q(½).
	Median float64 `json:"median"`
	// MiddleHalf holds the weighted quartiles Q(¼) and Q(¾): the range of
	// the middle half of the weight.
	MiddleHalf [2]float64 `json:"middle_half"`
}

// Cluster explains one cluster.
type Cluster struct {
	// Cluster is the cluster's index.
	Cluster int `json:"cluster"`
	// Rows is the number of rows assigned to the cluster, Weight their
	// total weight and Share that weight over the total of all rows.
	Rows   int     `json:"rows"`
	Weight float64 `json:"weight"`
	Share  float64 `json:"share"`
	// Features holds one Summary per column; nil when Weight is 0.
	Features []Summary `json:"features,omitempty"`
	// Shift[j] is (Features[j].Mean − overall mean) / overall sd, 0 for a
	// constant column; nil when Weight is 0.
	Shift []float64 `json:"shift,omitempty"`
	// Standouts lists the columns with |Shift| ≥ the report's MinShift by
	// decreasing |Shift|, ties by column; nil when there are none.
	Standouts []int `json:"standouts,omitempty"`
}

// Report explains every cluster of a clustering next to all rows. It
// encodes to JSON with the field names of its struct tags (see the package
// documentation); WriteTo prints it as text.
type Report struct {
	// Names and Units name the columns (Units may be nil).
	Names []string `json:"names"`
	Units []string `json:"units,omitempty"`
	// Noun is the plural noun of a row used by the text.
	Noun string `json:"noun"`
	// Rows is the number of rows, Weight their total weight and Weighted
	// whether weights were given.
	Rows     int     `json:"rows"`
	Weight   float64 `json:"weight"`
	Weighted bool    `json:"weighted"`
	// MinShift is the |shift| from which a feature sets a cluster apart.
	MinShift float64 `json:"min_shift"`
	// Overall summarises every column over all rows.
	Overall []Summary `json:"overall"`
	// Clusters holds one entry per cluster, by index.
	Clusters []Cluster `json:"clusters"`
}

// quartiles are the levels read from every sorted column.
var quartiles = []float64{0.25, 0.5, 0.75}

// Explain profiles the clustering assign of the raw rows X (in their own
// units, not scaled): for every cluster its size and share, the features
// that set it apart, and every feature's mean, standard deviation, median
// and middle half, next to the same statistics over all rows. The columns
// are named by Options.Names, the schema: pass a model's Features there.
// It takes O(d·n log n) time and O(n) scratch memory besides the report.
//
// It returns an error wrapping ErrData if X is nil, empty, holds NaN or
// ±Inf or its statistics overflow; ErrAssignments unless assign holds one
// cluster in [0, K) per row; ErrWeights for bad weights; and ErrOptions
// for bad options (see Options).
func Explain(X mat.Matrix, assign []int, o *Options) (*Report, error) {
	var opt Options
	if o != nil {
		opt = *o
	}
	n, d, err := check.Matrix(X, ErrData)
	if err != nil {
		return nil, err
	}
	k, err := clusters(assign, n, opt.K)
	if err != nil {
		return nil, err
	}
	if err := checkOptions(&opt, d); err != nil {
		return nil, err
	}
	total, err := check.Weights(opt.Weights, n, ErrWeights)
	if err != nil {
		return nil, err
	}
	x, _ := check.RowMajor(X)
	if err := check.Finite(x, d, ErrData); err != nil {
		return nil, err
	}

	r := &Report{
		Names:    slices.Clone(opt.Names),
		Units:    slices.Clone(opt.Units),
		Noun:     opt.Noun,
		Rows:     n,
		Weight:   total,
		Weighted: opt.Weights != nil,
		MinShift: opt.MinShift,
		Clusters: make([]Cluster, k),
	}
	if r.Names == nil {
		r.Names = make([]string, d)
		for j := range r.Names {
			r.Names[j] = fmt.Sprintf("x%d", j)
		}
	}
	if r.Noun == "" {
		r.Noun = "rows"
	}
	weight := func(i int) float64 {
		if opt.Weights == nil {
			return 1
		}
		return opt.Weights[i]
	}

	// Rows of positive weight grouped by cluster, in row order (counting
	// sort), and each cluster's row count and weight.
	start := make([]int, k+1)
	for i, a := range assign {
		r.Clusters[a].Rows++
		if w := weight(i); w > 0 {
			r.Clusters[a].Weight += w
			start[a+1]++
		}
	}
	for c := range k {
		start[c+1] += start[c]
	}
	members := make([]int, start[k])
	next := slices.Clone(start[:k])
	for i, a := range assign {
		if weight(i) > 0 {
			members[next[a]] = i
			next[a]++
		}
	}

	buf := make([]quantile.Pair, 0, len(members))
	summarise := func(rows []int, j int) Summary {
		buf = buf[:0]
		for _, i := range rows {
			buf = append(buf, quantile.Pair{Value: x[i*d+j], Weight: weight(i)})
		}
		return summary(buf)
	}
	all := make([]int, 0, len(members))
	for i := range n {
		if weight(i) > 0 {
			all = append(all, i)
		}
	}
	r.Overall = make([]Summary, d)
	for j := range d {
		r.Overall[j] = summarise(all, j)
	}
	for c := range k {
		cl := &r.Clusters[c]
		cl.Cluster = c
		cl.Share = cl.Weight / total
		if cl.Weight == 0 {
			continue
		}
		rows := members[start[c]:start[c+1]]
		cl.Features = make([]Summary, d)
		cl.Shift = make([]float64, d)
		for j := range d {
			cl.Features[j] = summarise(rows, j)
			if sd := r.Overall[j].SD; sd > 0 {
				cl.Shift[j] = (cl.Features[j].Mean - r.Overall[j].Mean) / sd
			}
			if math.Abs(cl.Shift[j]) >= r.MinShift {
				cl.Standouts = append(cl.Standouts, j)
			}
		}
		slices.SortStableFunc(cl.Standouts, func(a, b int) int {
			return cmp.Compare(math.Abs(cl.Shift[b]), math.Abs(cl.Shift[a]))
		})
	}
	if err := r.finite(); err != nil {
		return nil, err
	}
	return r, nil
}

// clusters checks assign for n rows against k (0 = infer) and returns the
// number of clusters.
func clusters(assign []int, n, k int) (int, error) {
	switch {
	case k < 0 || k > n:
		return 0, fmt.Errorf("%w: K = %d for %d rows, want 0 ≤ K ≤ %d", ErrOptions, k, n, n)
	case len(assign) != n:
		return 0, fmt.Errorf("%w: %d assignments for %d rows", ErrAssignments, len(assign), n)
	}
	limit := k
	if k == 0 {
		limit = n
	}
	inferred := 0
	for i, a := range assign {
		if a < 0 || a >= limit {
			return 0, fmt.Errorf("%w: row %d is in cluster %d, want 0 ≤ cluster < %d", ErrAssignments, i, a, limit)
		}
		inferred = max(inferred, a+1)
	}
	if k == 0 {
		k = inferred
	}
	return k, nil
}

// checkOptions validates the names, units, noun and MinShift for d
// columns and fills in the default MinShift.
func checkOptions(o *Options, d int) error {
	switch {
	case o.Names != nil && len(o.Names) != d:
		return fmt.Errorf("%w: %d names for %d columns", ErrOptions, len(o.Names), d)
	case o.Units != nil && len(o.Units) != d:
		return fmt.Errorf("%w: %d units for %d columns", ErrOptions, len(o.Units), d)
	case !(o.MinShift >= 0) || math.IsInf(o.MinShift, 1):
		return fmt.Errorf("%w: MinShift = %v", ErrOptions, o.MinShift)
	case hasControl(o.Noun):
		return fmt.Errorf("%w: Noun %q holds a control character", ErrOptions, o.Noun)
	}
	for j, s := range o.Names {
		if s == "" || hasControl(s) {
			return fmt.Errorf("%w: name of column %d is %q", ErrOptions, j, s)
		}
	}
	for j, s := range o.Units {
		if hasControl(s) {
			return fmt.Errorf("%w: unit of column %d is %q", ErrOptions, j, s)
		}
	}
	if o.MinShift == 0 {
		o.MinShift = DefaultMinShift
	}
	return nil
}

// hasControl reports whether s holds a control character (which would
// break the lines of the text form).
func hasControl(s string) bool {
	return slices.ContainsFunc([]rune(s), unicode.IsControl)
}

// summary returns the statistics of the non-empty pairs (positive
// weights), which it sorts.
func summary(pairs []quantile.Pair) Summary {
	var w, s float64
	for _, p := range pairs {
		w += p.Weight
		s += p.Weight * p.Value
	}
	mean := s / w
	var ss float64
	for _, p := range pairs {
		dv := p.Value - mean
		ss += p.Weight * dv * dv
	}
	quantile.Sort(pairs)
	var q [3]float64
	quantile.Levels(q[:], quartiles, pairs)
	return Summary{Mean: mean, SD: math.Sqrt(ss / w), Median: q[1], MiddleHalf: [2]float64{q[0], q[2]}}
}

// finite returns an error wrapping ErrData if a statistic overflowed.
func (r *Report) finite() error {
	bad := func(s []Summary, f []float64) bool {
		for _, v := range s {
			if !isFinite(v.Mean) || !isFinite(v.SD) {
				return true
			}
		}
		return slices.ContainsFunc(f, func(v float64) bool { return !isFinite(v) })
	}
	if bad(r.Overall, nil) {
		return fmt.Errorf("%w: statistics overflow float64", ErrData)
	}
	for _, c := range r.Clusters {
		if bad(c.Features, c.Shift) {
			return fmt.Errorf("%w: statistics of cluster %d overflow float64", ErrData, c.Cluster)
		}
	}
	return nil
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
