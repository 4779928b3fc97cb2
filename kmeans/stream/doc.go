// Package stream clusters rows that need not fit in memory: it reads them
// from a Source a block at a time (a CSV file, a Parquet file through
// package kmeans/stream/parquet, a matrix, an iterator or a channel) and
// keeps only the centers, per-block statistics (kmeans.Partial) and one
// block in memory, O(k·d + block), whatever the number of rows.
//
//	src, err := stream.OpenCSV("stations.csv", &stream.Options{Columns: []string{"trips_per_day", "weekend_share"}})
//	res, err := stream.Cluster(ctx, stream.Problem{Source: src, K: 5, Scaler: scale.ZScore{}}, nil, nil)
//	doc, err := json.Marshal(res.Model) // the usual model document, with the feature names
//
// # Methods
//
// Exact is Lloyd's algorithm, one pass over the source per iteration; it
// needs a source that can be reopened (Reopener). MiniBatch is Sculley's
// mini-batch k-means; it works on a source read once and, on a reopenable
// one, can end with exact passes. Seeds come from k-means‖
// (seeding.Parallel) driven pass by pass, from given centers, or (read
// once) from k-means++ on the first rows.
//
// # Equality with kmeans.Cluster
//
// From the same initial centers (Problem.Centers, and seeding.Given with
// Restarts 1 in memory), Exact gives the centers, cost, per-cluster costs,
// sizes, passes and status of kmeans.Cluster with kmeans.Lloyd bit for bit,
// and its model assigns every row as the in-memory one does. This holds
// because every pass accumulates per fixed block of internal/blocks (a
// split that depends only on the number of rows n) in row order and merges
// the blocks in block order, with the arithmetic of kmeans.Space.Add; the
// nearest center comes from the same exact kernel; empty clusters are
// repaired with the same rule (a further pass finds the rows); and ZScore
// and MinMax scalers are learned with scale's own sums in row order. It
// holds for any Settings.Workers and BlockRows. The conditions:
//
//   - n must be known before the first Lloyd pass: Cluster counts the rows
//     in a first pass when no earlier pass (scaler, seeding) has.
//   - Rows are unweighted: a stream has no weights.
//   - Other scalers (MedianIQR, custom) are learned on a uniform sample and
//     so differ from Learn on all rows.
//   - Convergence is detected by a 128-bit fingerprint of the pass's
//     assignments instead of comparing labels row by row; a false "no row
//     moved" has probability about 2⁻¹²⁸.
//   - The training quantiles (kmeans.Quantiles) come from a sample of
//     Settings.SampleRows/K rows per cluster; they are exact for clusters no
//     larger, and the maxima always are.
//
// Manhattan is refused (kmeans.ErrMetric): its center rule, the
// coordinate-wise median, cannot be merged from sums.
//
// # Bad rows
//
// Sources return a *RowError for a bad row (a value that is not a number,
// NaN or ±Inf, a missing value, a short row), naming the file, the line
// (or Parquet row) and the column; Options.Skip skips and counts such rows
// instead (Rejecter, Result.Rejected). Input is never modified.
//
// # Determinism
//
// The same rows, settings and seed give bit-identical results for any
// number of workers and any block size: work is split by row index, sums
// run in row order within fixed blocks, and random draws come from
// counter-based hashes of the seed and the row index or from generators
// seeded by Settings.Seed.
package stream
