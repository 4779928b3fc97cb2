// Package kmeans partitions rows into k clusters by k-means and serves the
// fitted model.
//
// Cluster is the one entry point, shaped like gonum's optimize.Minimize: a
// Problem says what to cluster (data, k, weights, metric, seeder, scaler),
// Settings set the limits (restarts, iterations, tolerance, seed, workers,
// progress) and a Method does the assignment passes (Lloyd, Elkan, Hamerly,
// Yinyang; nil chooses one from n, d, k and the metric). Every Method gives
// exactly Lloyd's assignments and cost from the same seed.
// The driver owns scaling, seeding, restarts, the center update,
// convergence, cancellation and the choice of the best restart.
//
//	res, err := kmeans.Cluster(ctx, kmeans.Problem{Data: X, K: 4, Scaler: &scale.ZScore{}}, nil, nil)
//	c, dist, err := res.Model.Nearest(row)
//
// # Center rule and cost
//
// The center update follows the metric (see package distance): the weighted
// mean for Euclidean (cost: within-cluster sum of squares), the
// coordinate-wise weighted median for Manhattan (k-medians; cost: sum of
// distances), and the renormalised mean of unit rows for Cosine (spherical
// k-means; cost: Σ w(1−cos)). Cost is always measured in the clustering
// (scaled) space.
//
// # Convergence and empty clusters
//
// A restart stops when a pass moves no row (Converged: a fixed point), when
// Settings.Tolerance > 0 and a pass improves the cost by no more than that
// fraction (CostTolerance), after Settings.MaxIterations passes
// (IterationLimit), or when the context ends (Canceled). The returned
// assignments are always the nearest returned centers. A cluster that loses
// all its rows gets a new center at the row contributing most to the cost
// (ties to the lowest row, never a row equal to another repaired center);
// Stats.EmptyRepairs counts these repairs.
//
// # Refinement
//
// k-means stops at a local optimum, and with many clusters restarts rarely
// escape it: a true cluster keeps two centers while two others share one.
// So Cluster refines the best restart by random swap (P. Fränti,
// "Efficiency of random swap clustering", Journal of Big Data 5:13, 2018):
// a trial moves a center, chosen at random, to a row drawn with
// probability proportional to its share of the cost, runs two local
// k-means iterations and keeps the result if the cost drops; after the
// last trial the Method runs from the kept centers to a fixed point. The
// automatic rule (Settings.SwapTrials zero) refines Euclidean problems with
// k ≥ MinSwapK and d ≤ MaxSwapDim, stops after DefaultSwapPatience·k
// trials in a row without an accepted swap or DefaultSwapTrialsPerK·k
// trials, and then runs DefaultRefinedRestarts restarts instead of
// DefaultRestarts. Stats.SwapTrials and SwapsAccepted report the work.
// The refined cost never exceeds that of the restart it refines.
//
// # Float32 data
//
// Data stored as float32 (Dense32, or any matrix implementing
// RawMatrixer32) takes half the memory and bandwidth. Without a scaler it
// is clustered in place: no float64 copy of the rows is made, Lloyd runs
// the float32 kernel (float32 products, rounding bound derived in
// internal/nearest, near ties rechecked in float64 on the exact float64
// values), and sums, costs and centers accumulate in float64. The result
// is that of clustering the float64 conversion of the data,
// mat.DenseCopyOf(data), bit for bit: the same assignments, cost and
// centers, for every Method and any number of workers. Memory beyond the
// caller's n·d float32: per running restart the assignments (n ints, twice
// when ctx can end) and what the Method keeps per row (none for Lloyd; see
// each solver), k-means++'s n float64 of nearest losses, O(k·d) of centers
// and statistics per block, and per worker a tile of shifted float32 rows
// (at most 32 KiB). A seeder that does not implement
// seeding.Float32Seeder (all of package seeding's do) receives one float64
// copy of the rows, made once per call. With a scaler the scaled space is
// float64, as for any data.
//
// # Determinism
//
// The same data, settings and seed give bit-identical results for any
// Settings.Workers: rows are split into blocks that depend only on the
// number of rows, and per-block statistics (Partial) are merged in block
// order. Restart r seeds its generator with (Settings.Seed, r); the swap
// trials use their own stream and run in a fixed order.
//
// # Packages below kmeans
//
// This package is the core; the packages that build on it live below it
// and are imported by it never:
//
//	kmeans/choosek   choosing k: Sweep over a range of k, stability under resampling
//	kmeans/profile   each cluster explained in the units of the raw data
//	kmeans/serve     Holder, Drift, rows given by name, an http.Handler
//	kmeans/stream    row sources, streaming Lloyd, mini-batch, k-means‖
//	kmeans/plot      figures of a sweep, silhouettes, principal components
//	kmeans           Cluster, Problem, Settings, Method, Result, Model, Partial
//	validate, scale, seeding, distance, internal/...
//
// Code outside this package makes a Model from centers with NewModel, seeds
// from given centers with seeding.Given, turns merged Partial statistics
// into centers with Partial.Centers and reads the clustering space with
// NewSpace.
//
// # Invariants
//
// Cluster never modifies Problem.Data, Problem.Weights or Problem.Scaler.
// Bad input returns an error wrapping one of the exported Err values, never
// a panic. A Model is immutable and safe for concurrent use; Nearest
// allocates nothing.
//
// # Encoding
//
// A Model encodes to a versioned JSON document with encoding/json
// (MarshalJSON/UnmarshalJSON) or ReadModel, which also enforces size
// limits (DecodeLimits). Version 2, the one written, carries a SHA-256
// checksum over its canonical encoding, the feature names, the scaler, the
// metric, k, d, the creation time, the library version and a training
// summary; version 1 documents stay readable. Decoding checks the format
// name, the version, the checksum, the metric, the shapes, that every value
// is finite and the scaler; any failure wraps ErrModel. Decoding holds every
// array to the declared k and dim as it reads, refuses duplicate or
// case-folded member names, and costs memory and time in proportion to the
// document.
//
// # Serving
//
// Model.Nearest and Model.Assign label raw rows without allocating and are
// safe for concurrent use; package kmeans/serve adds hot swapping, drift
// monitoring, rows given by feature name and an HTTP handler.
package kmeans
