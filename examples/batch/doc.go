// Command batch clusters CSV and Parquet files that may be larger than
// memory, labels rows with the model, profiles the clusters and scores a
// labelling against a ground truth. It is also meant as a template for a
// data engineer's own job: every verb is a short function over the
// library (kmeans, kmeans/stream, kmeans/stream/parquet, validate).
//
// Install it with
//
//	go install github.com/centroidlab/centroid/examples/batch@latest
//
// # Verbs
//
//	batch cluster -in FILE -columns A,B,... -k K -seed S -model MODEL.json [-memory 16MiB] [-method exact|minibatch]
//	batch label   -model MODEL.json -in FILE -out LABELS.csv [-id COLUMN]
//	batch profile -model MODEL.json -in FILE -labels LABELS.csv
//	batch score   -in FILE -truth COLUMN -found COLUMN [-labels LABELS.csv] [-json] [-min-ari X] [-max-ci N]
//
// cluster reads the columns named by -columns (all columns by default),
// scales them (-scaler none, zscore, minmax or median-iqr; none by default,
// since scaling changes what "near" means) and writes the model document
// (json.Marshal of *kmeans.Model, with the feature names) to -model. -k
// takes one number or a range such as 2..8: a range first runs the
// choose-k sweep on a uniform sample of -sample rows, prints its report
// and clusters all rows with the recommended k.
//
// label writes one row per input row, in input order: a header, then
// [id,]cluster,distance,margin, where distance is the distance to the
// cluster's center in the scaled space and margin the distance to the
// runner-up minus it. The output is CSV or Parquet by the extension of
// -out. The input columns are found by the model's feature names.
//
// profile joins a labels file to its input by row order and prints each
// cluster in the units of the data (on a uniform sample of at most -sample
// rows).
//
// score compares a found labelling with a ground truth: the truth column
// of -in (any text) against the found column of -in itself or of a labels
// file (-labels, joined by row order or by an -id column of both), and,
// with -centers (published centers, one per row) and -model, the centroid
// index between them. It prints every external index (validate.Compare)
// as text, or as the versioned JSON report with -json (keys "ari", "nmi",
// "ami", "v_measure", "homogeneity", "completeness", "fowlkes_mallows",
// "purity", "inverse_purity", "centroid_index"). Thresholds make it a CI
// check: -min-ari, -min-nmi, -min-ami, -min-v, -min-purity, -min-fm and
// -max-ci exit with code 3, naming each bar not met. Rows labelled -1 (bad
// rows) are left out and counted.
//
//	batch cluster -in s1.csv -columns x,y -k 15 -seed 1 -model s1.json
//	batch label -model s1.json -in s1.csv -out s1-labels.csv
//	batch score -in s1.csv -truth label -labels s1-labels.csv -centers s1-cb.csv -model s1.json -min-ari 0.95 -max-ci 0
//
// # Memory
//
// -memory sets a budget such as 32MiB or 2GiB (default 256MiB) for the
// peak resident memory of the process. The command itself (Go runtime,
// binary, parsers) needs about 20 MiB whatever the data, so budgets below
// that cannot be met (a warning says so). The runtime's soft memory limit
// is set to the budget less 8 MiB (the part the runtime does not manage)
// unless GOMEMLIMIT is set. cluster loads the rows when about 16·(2d+8)
// bytes per row fit in what the command leaves; otherwise it streams the
// file in blocks, keeping only the blocks, the samples and the centers. -method chooses: exact (Lloyd:
// in memory with restarts, or streamed one pass per iteration), minibatch
// (always streamed; mini-batch k-means), or auto (the default: exact in
// memory when the rows fit, else mini-batch followed by one exact pass).
// Streamed runs seed with k-means‖.
//
// # Bad rows
//
// A value that is not a number, NaN or ±Inf, an empty value, a short row
// or a null stops the verb with an error naming the file, the line (or
// Parquet row) and the column, exit code 1, and nothing written. With
// -skip, bad rows are skipped, counted in the summary and logged (the
// first ten, then every thousandth); label writes cluster -1 with empty
// distance and margin for them, so that its output keeps one row per
// input row.
//
// # Progress, interruption, output
//
// On a terminal a progress bar shows each pass (rows/s, pass, cost); when
// stderr is not a terminal, log/slog lines report every pass. Ctrl-C (or
// SIGTERM) stops at the next block: every file is written to a temporary
// file renamed into place at the end, so nothing half-done is left.
//
// Exit codes: 0 done, 1 bad input or a failed run, 2 usage error, 3 a
// score threshold not met, 130 interrupted.
package main
