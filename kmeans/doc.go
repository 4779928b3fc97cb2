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
// # Determinism
//
// The same data, settings and seed give bit-identical results for any
// Settings.Workers: rows are split into blocks that depend only on the
// number of rows, and per-block statistics (Partial) are merged in block
// order. Restart r seeds its generator with (Settings.Seed, r).
//
// # Choosing k
//
// Sweep scores a range of k (internal indices, the knee of the cost curve,
// the gap statistic and stability under resampling) and recommends one by a
// documented heuristic; MeasureStability and Describe judge and explain a
// single clustering.
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
// is finite and the scaler; any failure wraps ErrModel.
//
// # Serving
//
// Holder keeps the model a service answers with behind an atomic pointer:
// reads never lock and never see a half-loaded model, and Swap validates a
// model before publishing it. Drift counts assignments on sharded atomic
// counters and compares the cluster shares and far-from-center rows with
// the training summary.
package kmeans
