// Package validate scores clusterings: internal validity indices judge a
// clustering of data by itself, external indices compare it with another
// labelling such as a ground truth.
//
// Internal indices take the data X (a mat.Matrix, n×d) and the assignments
// (one cluster label per row). External indices take two labellings of the
// same rows, truth first where the index is asymmetric; CentroidIndex takes
// two sets of centers. The package never depends on how the clustering was
// made, so it scores the output of any algorithm.
//
// # Indices
//
//	index              kind      better  range       degenerate cases (details in the function's doc)
//	Silhouette         internal  higher  [−1, 1]     K < 2 or K = n: ErrClusters; a singleton's row has s(i) = 0
//	SilhouetteValues   internal  higher  [−1, 1]     per row, as Silhouette
//	ClusterSilhouettes internal  higher  [−1, 1]     per cluster, as Silhouette; an empty cluster gets 0
//	SampledSilhouette  internal  higher  [−1, 1]     as Silhouette; an estimate with a 95% interval
//	DaviesBouldin      internal  lower   [0, ∞)      K < 2 or two equal cluster means: ErrClusters; a singleton has scatter 0
//	CalinskiHarabasz   internal  higher  [0, +Inf]   K < 2, K = n or all rows equal: ErrClusters; W = 0 gives +Inf
//	Dunn               internal  higher  [0, +Inf]   K < 2: ErrClusters; all diameters 0 (e.g. all singletons) gives +Inf
//	WithinSS           internal  lower   [0, ∞)      per cluster, any K; singletons and empty clusters have 0
//	Gap                internal  higher  (−∞, ∞)     chooses k among 1 ≤ k ≤ n
//	AdjustedRand       external  higher  ≤ 1         any labellings; ≈ 0 by chance, 1 for identical partitions
//	NMI                external  higher  [0, 1]      any labellings; 1 for identical partitions, even if both have one cluster
//	AMI                external  higher  ≤ 1         any labellings; ≈ 0 by chance, 1 for identical partitions
//	VMeasure           external  higher  [0, 1]      any labellings; 1 for identical partitions
//	FowlkesMallows     external  higher  [0, 1]      any labellings; all-singleton labellings have no pairs
//	Purity             external  higher  (0, 1]      any labellings; all singletons score 1
//	CentroidIndex      external  lower   0, 1, 2, …  two center sets; 0 means they match cluster for cluster
//
// K is the number of non-empty clusters and n the number of rows. The
// internal indices need no ground truth; the external ones need a second
// labelling (or set of centers) to compare with. Contingency, NMIWith,
// AMIWith, VMeasureParts and ClusterJaccard are building blocks and variants
// of the external indices; see their documentation.
//
// Knee finds the elbow of a falling cost curve (cost against k) with
// Kneedle, and KneeCurve gives every point's bend below the chord; with Gap
// and the internal indices they help choose the number of clusters.
// ClusterJaccard compares a clustering with a refit on resampled rows,
// cluster by cluster, and ReadJaccard reads the mean over many refits as
// Reproduced, PartlyReproduced or NotReproduced (Hennig 2007).
// The function documentation gives each index's formula, source and its
// exact conventions for degenerate input.
//
// # Labels
//
// Assignments are cluster labels ≥ 0. For the internal indices the number
// of clusters k is max(assign)+1, but clusters with no rows are ignored: K,
// the number of non-empty clusters, is what the formulas use, and labels
// need not be contiguous. Functions that return one value per cluster
// (WithinSS, ClusterSilhouettes) return a slice of length k with 0 for
// empty clusters; they reject with ErrLabel a label that would make that
// slice longer than max(n, 2^20). External indices accept any non-negative
// labels (see Contingency).
//
// # Errors
//
// Bad input returns an error wrapping one of the package's sentinel errors,
// to be tested with errors.Is; it never panics. The internal indices check,
// in this order: nil or empty X (ErrEmpty), len(assign) != n (ErrLength),
// NaN or ±Inf in X (ErrNotFinite), a negative label (ErrLabel), then the
// number of clusters the index needs (ErrClusters). No internal index
// returns NaN.
//
// # Invariants
//
// Inputs are never modified. A *mat.Dense (or any mat.RawMatrixer) is read
// in place, honouring its stride; other matrices are copied once. Data
// whose magnitude would overflow or underflow squared distances (largest
// absolute value beyond 2^±400) is rescaled by a power of two internally,
// which leaves the scale-invariant indices unchanged (WithinSS is scaled
// back).
//
// # Concurrency
//
// All functions are safe for concurrent use. Silhouette, its variants and
// Dunn spread their O(n²) work over runtime.GOMAXPROCS(0) goroutines with a
// fixed split of the rows and a fixed order of reduction, so their results
// are bit-identical for any number of goroutines. Gap gives the same result
// for a given Seed whatever its Workers, provided its ClusterFunc is
// deterministic for the seed it is given.
package validate
