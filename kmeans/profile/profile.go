package profile

import (
	"cmp"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
	"text/tabwriter"
	"unicode/utf8"

	"github.com/centroidlab/centroid/internal/check"
	"github.com/centroidlab/centroid/kmeans"

	"gonum.org/v1/gonum/mat"
)

// DefaultApartThreshold is the default ProfileOptions.Threshold: a feature
// sets a cluster apart when the cluster mean is at least half an overall
// standard deviation from the overall mean ("medium" standardised
// difference, J. Cohen, Statistical Power Analysis for the Behavioral
// Sciences, 1988; common practice).
const DefaultApartThreshold = 0.5

// ProfileOptions tunes Describe. A nil *ProfileOptions and the zero value
// mean the defaults.
type ProfileOptions struct {
	// Features names the columns; nil means "x0", "x1", ….
	Features []string
	// Units gives each column's unit for printing; nil means none.
	Units []string
	// Weights holds one non-negative weight per row, as given to Cluster;
	// nil means all ones. Statistics are weighted: rows of weight zero
	// count in Size but not in the statistics.
	Weights []float64
	// Threshold is the |Z| at which a feature sets a cluster apart. Zero
	// means DefaultApartThreshold (0.5); negative is invalid.
	Threshold float64
}

// FeatureSummary describes one feature over a set of rows, in the units of the
// raw data. Statistics are weighted when weights are given.
type FeatureSummary struct {
	// Mean is the weighted mean Σwx/Σw.
	Mean float64 `json:"mean"`
	// StdDev is the weighted population standard deviation
	// √(Σw(x−Mean)²/Σw).
	StdDev float64 `json:"sd"`
	// Min and Max are the smallest and largest values.
	Min float64 `json:"min"`
	Max float64 `json:"max"`
	// Q1, Median and Q3 are the weighted 25%, 50% and 75% quantiles: with
	// W the total weight and C(v) the weight of the values ≤ v, the
	// p-quantile is the smallest value v with C(v) ≥ p·W, or the midpoint
	// between v and the next value when C(v) = p·W exactly. Unweighted,
	// this is definition 2 of Hyndman and Fan (1996): the median of 1, 2,
	// 3, 4 is 2.5 and its first quartile 1.5.
	Q1     float64 `json:"q1"`
	Median float64 `json:"median"`
	Q3     float64 `json:"q3"`
}

// Contrast is a feature that sets a cluster apart.
type Contrast struct {
	// Feature is the column index and Name its name.
	Feature int    `json:"feature"`
	Name    string `json:"name"`
	// Z is the standardised difference (cluster mean − overall mean) /
	// overall standard deviation: positive means higher than overall.
	Z float64 `json:"z"`
}

// ClusterProfile describes one cluster.
type ClusterProfile struct {
	// Cluster is the cluster index.
	Cluster int `json:"cluster"`
	// Size is the number of rows and Weight their total weight.
	Size   int     `json:"size"`
	Weight float64 `json:"weight"`
	// Share is Weight divided by the total weight of all rows.
	Share float64 `json:"share"`
	// Features holds one FeatureSummary per column.
	Features []FeatureSummary `json:"features"`
	// Z holds the standardised difference of every column's mean from the
	// overall mean, in overall standard deviations (0 for a constant
	// column).
	Z []float64 `json:"z"`
	// Apart lists the columns with |Z| ≥ the threshold, by decreasing |Z|
	// (ties by column order).
	Apart []Contrast `json:"apart"`
}

// Profile describes every cluster of a clustering in the units of the raw
// data, next to the whole data set. It encodes to JSON with the field
// names of its struct tags; WriteTo prints it as text tables.
type Profile struct {
	// Features and Units name the columns (Units may be nil).
	Features []string `json:"features"`
	Units    []string `json:"units,omitempty"`
	// Rows is the number of rows and Weight their total weight.
	Rows   int     `json:"rows"`
	Weight float64 `json:"weight"`
	// Threshold is the |Z| used for Apart.
	Threshold float64 `json:"threshold"`
	// Overall summarises every column over all rows.
	Overall []FeatureSummary `json:"overall"`
	// Clusters holds one profile per cluster, by cluster index.
	Clusters []ClusterProfile `json:"clusters"`
}

// Describe profiles the clustering res of the raw rows X (the data given
// to Cluster, in its own units): per cluster the size and share, the mean,
// standard deviation, minimum, quartiles and maximum of every feature, and
// the features that set it apart (standardised difference of the cluster
// mean from the overall mean, |Z| ≥ Threshold).
//
// A cluster with no rows has zero statistics; a cluster whose rows all have
// weight zero is summarised unweighted (Share stays 0). X, res and the
// options are not modified.
//
// It returns an error wrapping ErrData if X is nil, empty or not finite, if
// res or res.Model is nil, or if res.Assignments does not hold one label in
// [0, K) per row; ErrDimension if the model, Features or Units do not match
// the columns of X; ErrWeights for bad weights; and ErrSettings for a
// negative Threshold.
func Describe(X mat.Matrix, res *kmeans.Result, o *ProfileOptions) (*Profile, error) {
	var opt ProfileOptions
	if o != nil {
		opt = *o
	}
	if X == nil {
		return nil, fmt.Errorf("%w: nil matrix", kmeans.ErrData)
	}
	n, d := X.Dims()
	if n == 0 || d == 0 {
		return nil, fmt.Errorf("%w: %d×%d matrix", kmeans.ErrData, n, d)
	}
	if res == nil || res.Model == nil {
		return nil, fmt.Errorf("%w: nil result or model", kmeans.ErrData)
	}
	k := res.Model.K()
	switch {
	case res.Model.Dim() != d:
		return nil, fmt.Errorf("%w: model has %d features, data has %d columns", kmeans.ErrDimension, res.Model.Dim(), d)
	case len(res.Assignments) != n:
		return nil, fmt.Errorf("%w: %d assignments for %d rows", kmeans.ErrData, len(res.Assignments), n)
	case opt.Features != nil && len(opt.Features) != d:
		return nil, fmt.Errorf("%w: %d feature names for %d columns", kmeans.ErrDimension, len(opt.Features), d)
	case opt.Units != nil && len(opt.Units) != d:
		return nil, fmt.Errorf("%w: %d units for %d columns", kmeans.ErrDimension, len(opt.Units), d)
	case !(opt.Threshold >= 0) || math.IsInf(opt.Threshold, 1):
		return nil, fmt.Errorf("%w: Threshold = %v", kmeans.ErrSettings, opt.Threshold)
	}
	for i, a := range res.Assignments {
		if a < 0 || a >= k {
			return nil, fmt.Errorf("%w: assignment %d is %d, want 0 ≤ a < %d", kmeans.ErrData, i, a, k)
		}
	}
	if _, err := check.Weights(opt.Weights, n, kmeans.ErrWeights); err != nil {
		return nil, err
	}
	x, _ := check.RowMajor(X)
	if err := check.Finite(x, d, kmeans.ErrData); err != nil {
		return nil, err
	}
	if opt.Threshold == 0 {
		opt.Threshold = DefaultApartThreshold
	}
	names := opt.Features
	if names == nil {
		names = make([]string, d)
		for j := range names {
			names[j] = fmt.Sprintf("x%d", j)
		}
	}
	pf := &Profile{
		Features:  slices.Clone(names),
		Units:     slices.Clone(opt.Units),
		Rows:      n,
		Threshold: opt.Threshold,
		Clusters:  make([]ClusterProfile, k),
	}
	all := make([]int, n)
	members := make([][]int, k)
	for i, a := range res.Assignments {
		all[i] = i
		members[a] = append(members[a], i)
	}
	pf.Overall, pf.Weight = summarise(x, d, all, opt.Weights)
	for c := range k {
		cp := ClusterProfile{Cluster: c, Size: len(members[c]), Z: make([]float64, d)}
		cp.Features, cp.Weight = summarise(x, d, members[c], opt.Weights)
		cp.Share = cp.Weight / pf.Weight
		for j := range d {
			if sd := pf.Overall[j].StdDev; sd > 0 && cp.Size > 0 {
				cp.Z[j] = (cp.Features[j].Mean - pf.Overall[j].Mean) / sd
			}
			if math.Abs(cp.Z[j]) >= opt.Threshold {
				cp.Apart = append(cp.Apart, Contrast{Feature: j, Name: names[j], Z: cp.Z[j]})
			}
		}
		slices.SortStableFunc(cp.Apart, func(a, b Contrast) int { return cmp.Compare(math.Abs(b.Z), math.Abs(a.Z)) })
		pf.Clusters[c] = cp
	}
	return pf, nil
}

// summarise returns the summary of every column over the given rows of the
// row-major x (d columns) and their total weight. Rows of weight zero are
// left out unless all are zero, when the rows are summarised unweighted
// (the returned weight is then 0).
func summarise(x []float64, d int, rows []int, w []float64) ([]FeatureSummary, float64) {
	out := make([]FeatureSummary, d)
	if len(rows) == 0 {
		return out, 0
	}
	var total float64
	use := rows
	if w != nil {
		use = nil
		for _, i := range rows {
			if w[i] > 0 {
				use = append(use, i)
				total += w[i]
			}
		}
		if len(use) == 0 {
			use, w = rows, nil
		}
	} else {
		total = float64(len(rows))
	}
	vals := make([]float64, len(use))
	ws := make([]float64, len(use))
	for j := range d {
		for t, i := range use {
			vals[t] = x[i*d+j]
			ws[t] = 1
			if w != nil {
				ws[t] = w[i]
			}
		}
		out[j] = summary(vals, ws)
	}
	return out, total
}

// summary returns the weighted summary of vals (ws > 0, same length),
// reordering both.
func summary(vals, ws []float64) FeatureSummary {
	var sw, s float64
	for t, v := range vals {
		sw += ws[t]
		s += ws[t] * v
	}
	mean := s / sw
	var ss float64
	for t, v := range vals {
		ss += ws[t] * (v - mean) * (v - mean)
	}
	sortTogether(vals, ws)
	return FeatureSummary{
		Mean:   mean,
		StdDev: math.Sqrt(ss / sw),
		Min:    vals[0],
		Max:    vals[len(vals)-1],
		Q1:     quantile(0.25, vals, ws),
		Median: quantile(0.5, vals, ws),
		Q3:     quantile(0.75, vals, ws),
	}
}

// sortTogether sorts vals ascending, moving ws along.
func sortTogether(vals, ws []float64) {
	idx := make([]int, len(vals))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(a, b int) int { return cmp.Compare(vals[a], vals[b]) })
	v2 := make([]float64, len(vals))
	w2 := make([]float64, len(ws))
	for t, i := range idx {
		v2[t], w2[t] = vals[i], ws[i]
	}
	copy(vals, v2)
	copy(ws, w2)
}

// quantile returns the weighted p-quantile of the ascending values vals
// with positive weights ws (nil means all ones): with W the total weight
// and C_i the cumulative weight of vals[0..i], the smallest vals[i] with
// C_i ≥ p·W, or the midpoint of vals[i] and vals[i+1] when C_i equals p·W
// exactly. With unit weights this is definition 2 of R. J. Hyndman and Y.
// Fan, "Sample quantiles in statistical packages", The American
// Statistician 50(4), 1996 (the inverse of the empirical distribution
// function, averaging at its jumps): the median of 1, 2, 3, 4 is 2.5.
//
// It panics if vals is empty, p is outside [0, 1], the lengths differ or
// vals is not sorted (programmer misuse of a low-level helper).
func quantile(p float64, vals, ws []float64) float64 {
	switch {
	case len(vals) == 0:
		panic("kmeans: quantile of no values")
	case !(p >= 0 && p <= 1):
		panic("kmeans: quantile p outside [0, 1]")
	case ws != nil && len(ws) != len(vals):
		panic("kmeans: quantile length mismatch")
	case !slices.IsSorted(vals):
		panic("kmeans: quantile values not sorted")
	}
	weight := func(i int) float64 {
		if ws == nil {
			return 1
		}
		return ws[i]
	}
	var total float64
	for i := range vals {
		total += weight(i)
	}
	target := p * total
	var cum float64
	for i, v := range vals {
		cum += weight(i)
		if cum < target && i < len(vals)-1 {
			continue
		}
		if cum == target && i < len(vals)-1 {
			return v + (vals[i+1]-v)/2
		}
		return v
	}
	return vals[len(vals)-1]
}

// String returns the profile as printed by WriteTo.
func (pf *Profile) String() string {
	var b strings.Builder
	pf.WriteTo(&b)
	return b.String()
}

// WriteTo prints the profile as text: a line on the whole data, then for
// every cluster its size and share, the features that set it apart, and a
// table of the statistics of every feature with its Z. Numbers are printed
// with a precision chosen from each feature's overall standard deviation.
// It returns the number of bytes written.
func (pf *Profile) WriteTo(w io.Writer) (int64, error) {
	cw := &tallyWriter{w: w}
	fmt.Fprintf(cw, "%d rows, total weight %.6g, %d clusters, %d features\n", pf.Rows, pf.Weight, len(pf.Clusters), len(pf.Features))
	dec := make([]int, len(pf.Features))
	for j := range dec {
		dec[j] = decimalsFor(pf.Overall[j].StdDev)
	}
	// Names and units are padded here so that they read left-aligned in
	// the right-aligned table.
	nameW, unitW := len("feature"), len("unit")
	for j, f := range pf.Features {
		nameW = max(nameW, utf8.RuneCountInString(f))
		if pf.Units != nil {
			unitW = max(unitW, utf8.RuneCountInString(pf.Units[j]))
		}
	}
	pad := func(s string, w int) string { return s + strings.Repeat(" ", w-utf8.RuneCountInString(s)) }
	table := func(stats []FeatureSummary, z []float64) {
		tw := tabwriter.NewWriter(cw, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintf(tw, "  %s\t", pad("feature", nameW))
		if pf.Units != nil {
			fmt.Fprintf(tw, "%s\t", pad("unit", unitW))
		}
		fmt.Fprint(tw, "mean\tsd\tmin\tq1\tmedian\tq3\tmax\t")
		if z != nil {
			fmt.Fprint(tw, "z\t")
		}
		fmt.Fprintln(tw)
		for j, s := range stats {
			fmt.Fprintf(tw, "  %s\t", pad(pf.Features[j], nameW))
			if pf.Units != nil {
				fmt.Fprintf(tw, "%s\t", pad(pf.Units[j], unitW))
			}
			for _, v := range []float64{s.Mean, s.StdDev, s.Min, s.Q1, s.Median, s.Q3, s.Max} {
				fmt.Fprintf(tw, "%.*f\t", dec[j], v)
			}
			if z != nil {
				fmt.Fprintf(tw, "%+.2f\t", z[j])
			}
			fmt.Fprintln(tw)
		}
		tw.Flush()
	}
	fmt.Fprintln(cw, "\nall rows")
	table(pf.Overall, nil)
	for _, c := range pf.Clusters {
		fmt.Fprintf(cw, "\ncluster %d: %d rows, %.1f%% of the weight\n", c.Cluster, c.Size, 100*c.Share)
		fmt.Fprintf(cw, "  sets it apart (|z| ≥ %.2g): %s\n", pf.Threshold, apartText(c.Apart))
		table(c.Features, c.Z)
	}
	return cw.n, cw.err
}

// Apart returns, for every cluster, a one-line description of the features
// that set it apart, such as "high trips_per_day (+1.8 sd), low
// weekend_share (−1.2 sd)".
func (pf *Profile) Apart() []string {
	out := make([]string, len(pf.Clusters))
	for c, cp := range pf.Clusters {
		out[c] = apartText(cp.Apart)
	}
	return out
}

func apartText(cs []Contrast) string {
	if len(cs) == 0 {
		return "nothing: close to the overall mean on every feature"
	}
	parts := make([]string, len(cs))
	for i, c := range cs {
		dir := "high"
		if c.Z < 0 {
			dir = "low"
		}
		parts[i] = fmt.Sprintf("%s %s (%+.1f sd)", dir, c.Name, c.Z)
	}
	return strings.Join(parts, ", ")
}

// decimalsFor picks a print precision that shows about three significant
// digits of a spread.
func decimalsFor(sd float64) int {
	if !(sd > 0) || math.IsInf(sd, 0) {
		return 2
	}
	return min(8, max(0, 2-int(math.Floor(math.Log10(sd)))))
}
