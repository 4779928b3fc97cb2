// Package distance provides the dissimilarities centroid clusters with and the
// center rule that pairs with each of them in k-means.
//
// A Metric measures how far apart two rows are. Metrics that k-means can
// optimise also implement Objective, which names the per-row loss summed into
// a clustering's cost and the rule that moves a center to the best position
// for its members:
//
//	metric     assignment          center update                         cost (loss per row)      triangle inequality
//	Euclidean  ‖x−c‖               weighted mean                         ‖x−c‖² (within-cluster   yes
//	                                                                     sum of squares)
//	Manhattan  Σ|x_j−c_j|          coordinate-wise weighted median        Σ|x_j−c_j|              yes
//	                               (k-medians)
//	Cosine     1 − cos(x, c)       mean of unit rows renormalised to     1 − cos(x, c)            no
//	                               unit length (spherical k-means,
//	                               Dhillon & Modha 2001)
//	Chebyshev  max|x_j−c_j|        none (not an Objective)               –                        yes
//	Minkowski  (Σ|x_j−c_j|^p)^1/p  none (not an Objective)               –                        yes for p ≥ 1
//
// Metrics that satisfy the triangle inequality implement Triangle, which
// bound-based solvers test for.
//
// # Invariants
//
// The methods on metrics are low-level helpers on the hot path: they do not
// allocate, never modify their arguments, and panic when the two slices have
// different lengths (programmer misuse). Between is the checked form that
// returns an error instead.
//
// # Concurrency
//
// All metrics are plain values with no state; they are safe for concurrent
// use by multiple goroutines.
package distance
