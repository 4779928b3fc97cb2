// Package kbeam runs k-means on Apache Beam pipelines, so that a table too
// large for one machine is clustered by the engine a team already runs
// (Flink, Spark, Dataflow) or, with the prism runner, in-process on a
// laptop and in CI, offline. It gives the answer one machine gives.
//
// # Pieces
//
// Rows travel as Block elements of about a thousand rows (DefaultBlockRows;
// one row per element pays the per-element cost of the engine on every
// row). CSV reads CSV files with Beam's filesystems and the CSV reader of
// package kmeans/stream; any Source that emits Blocks works.
//
// A Lloyd pass (Pass) reads the current State as a side input, sums each
// block's rows per nearest center into one kmeans.Partial, combines the
// partials with a CombineFn and applies the metric's center rule. Seed
// runs k-means‖ (seeding.Parallel) as passes of the same shape over
// seeding.ParallelPart values. Cluster drives it all and returns a
// kmeans.Model, whose json.Marshal is the usual model document.
//
// # Iteration
//
// Beam pipelines are acyclic, so Cluster either drives one pipeline per
// pass from Go (Driven, the default: the state of the previous pipeline
// is the side input of the next, it stops at convergence and runs exactly
// the k-means‖ passes needed) or unrolls a fixed number of passes into one
// pipeline (Unrolled, which reads the rows once). The module's README
// compares them on prism.
//
// # Same answer as one machine
//
// Sums are merged in a fixed binary tree over the blocks' Seq numbers
// whatever order the runner delivers them in, so a run is bit-identical
// for any parallelism and bundle split; they differ from kmeans.Cluster
// (which merges its own fixed blocks in order) only in floating-point
// rounding, about 1e-15 relative. Assignments use the direct loss with
// ties to the lower index, as kmeans.Lloyd does. The k-means‖ draws depend
// only on the seed and row indices, so Seed returns the centers that
// kmeans/stream returns for the same seed.
//
// Two documented differences: a cluster that gets no rows keeps its
// center (a combine only sees clusters that received rows;
// kmeans.Cluster moves such a center to a costly row), and convergence
// means no center moved, where kmeans.Cluster stops when no row moved
// (they differ only when rows of zero weight move).
//
// # Metrics
//
// Euclidean (weighted mean) and Cosine (spherical k-means: the sums are of
// unit rows). Manhattan is refused with an error wrapping
// kmeans.ErrMetric: its coordinate-wise median is not a function of sums
// and cannot be combined.
//
// # Not included
//
// The model carries no training summary (kmeans.Model.WithTraining needs
// per-cluster distance quantiles, which need a sketch or a sample that
// merges; see the README), and rows are not scaled (learn a scaler
// elsewhere, or add a pass).
package kbeam
