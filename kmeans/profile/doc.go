// Package profile explains the clusters of a clustering in the units of
// the raw data: what sets each cluster apart from everyone, and its typical
// values.
//
// [Explain] needs only the raw rows (a mat.Matrix) and one cluster per row,
// so it profiles the result of any clustering, not only this module's. Its
// [Report] leads, for every cluster, with the features whose mean lies
// furthest from the overall mean, measured in overall standard deviations
// (the shift), then gives each feature's median and middle half. Name the
// columns with [Options].Names: a caller holding a kmeans.Model passes
// Model.Features(), the model's schema, so that the report speaks the
// names the model is served with.
//
// # Statistics
//
// All statistics are weighted (nil weights = all ones) and leave out rows
// of weight zero, which still count in [Cluster].Rows. For the values
// x₁ … xₘ of positive weight w₁ … wₘ in a set of rows, with W = Σ wᵢ:
//
//	mean         Σ wᵢ xᵢ / W
//	sd           √(Σ wᵢ (xᵢ − mean)² / W)           (population form, as gonum's stat.PopMeanStdDev)
//	median       Q(½)
//	middle half  Q(¼) to Q(¾)
//	shift        (cluster mean − overall mean) / overall sd   (0 for a constant feature)
//
// Q is the module's one quantile definition, the inverse of the weighted
// empirical distribution function: Q(p) is the smallest value whose
// cumulative weight reaches p·W. Unweighted, it is the ⌈p·n⌉-th smallest
// value (Hyndman and Fan 1996, definition 1), as gonum's stat.Quantile
// with stat.Empirical: the median of 1, 2, 3, 4 is 2 and its middle half
// runs from 1 to 3. (Releases before Explain averaged the two middle
// values, 2.5.) Every median and quartile is one of the data values.
//
// A feature sets a cluster apart when |shift| ≥ [Options].MinShift
// (default 0.5 standard deviations); [Cluster].Standouts lists those
// features by decreasing |shift|, ties by column.
//
// # Text
//
// [Report.WriteTo] prints, with the row noun of [Options].Noun:
//
//	200 stations · 5 clusters · 6 features, in original units
//	shift = (cluster mean − overall mean) / overall sd; a feature sets a cluster apart when |shift| ≥ 0.5
//
//	all 200 stations
//	  feature            median    middle half   mean     sd
//	  trips_per_day         165     92 –   263    188    114  trips/day
//	  weekend_share       0.279  0.159 – 0.398  0.286  0.138  fraction
//	  …
//
//	cluster 0 · 50 stations (25.0%)
//	  set apart by (mean vs overall mean)
//	    elevation_m       137.9  m          vs   55.7  overall  (+1.5 sd)
//	    return_imbalance  -9.98  bikes/day  vs  -0.51  overall  (-1.3 sd)
//	    …
//	  feature            median     middle half
//	  trips_per_day          60      47 –    76  trips/day
//	  …
//
// With weights the headline gives the share of the total weight ("(25.0%
// of the weight)"); a cluster without rows prints "empty", one whose rows
// all have weight zero "no statistics". [Report.Gist] gives the standouts
// of one cluster in a line, such as "high elevation_m (+1.5 sd), low
// return_imbalance (-1.3 sd)".
//
// Numbers are rounded per feature to about three significant digits of its
// overall standard deviation.
//
// # JSON
//
// A Report encodes with encoding/json to a document whose field names are
// stable (new fields may be added; none is renamed or removed):
//
//	names      []string   column names
//	units      []string   column units (omitted when none were given)
//	noun       string     plural noun of a row
//	rows       int        number of rows
//	weight     number     total weight
//	weighted   bool       whether weights were given
//	min_shift  number     |shift| from which a feature sets a cluster apart
//	overall    []summary  one per column, over all rows
//	clusters   []cluster  one per cluster, by cluster index
//
//	summary:   mean, sd, median, middle_half ([Q(¼), Q(¾)])
//	cluster:   cluster (index), rows, weight, share (of the total weight),
//	           features ([]summary), shift ([]number, one per column),
//	           standouts ([]int, columns by decreasing |shift|)
//
// features, shift and standouts are omitted for a cluster without weight;
// standouts also when no feature sets the cluster apart. Every number is
// finite.
//
// # Invariants
//
// Explain never modifies X, the assignments or the options, and the Report
// shares no memory with them. A Report is plain data, safe for concurrent
// reads.
package profile
