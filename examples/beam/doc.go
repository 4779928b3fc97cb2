// Command beam clusters a table that outgrows one machine on an Apache
// Beam runner: it reads CSV files, seeds with k-means‖ and runs Lloyd
// passes as pipelines (package kbeam), then writes the model document
// that package kmeans reads and, if asked, the labelled rows.
//
// Locally it runs on the prism runner inside this process, without any
// service or network:
//
//	go run . -in 'stations-*.csv' -columns trips_per_day,weekend_share -k 5 -model model.json
//
// The same binary submits the pipelines to Flink, Spark or Dataflow with
// Beam's own flags (-runner, -endpoint, -environment_type, ...); the
// module's README shows how.
//
// Flags of its own:
//
//	-in GLOB          CSV files with a header line (any Beam filesystem)
//	-columns A,B      columns to cluster on (default: every column)
//	-k K              number of clusters
//	-passes P         largest number of Lloyd passes (0: 300 driven; unrolled needs 1..100)
//	-seed S           seed of the k-means‖ draws
//	-metric M         euclidean (default) or cosine
//	-rounds R         k-means‖ sampling rounds (0: 5)
//	-iterate I        driven (one pipeline per pass, default) or unrolled (one pipeline)
//	-model PATH       where to write the model document
//	-labels-out PATH  where to write the labelled rows (optional)
//	-label-by COL     a column to name the labelled rows by (default: the row index)
//	-skip             skip bad rows instead of failing
//	-block-rows N     rows per pipeline element (default 1000)
//	-workdir DIR      where pipelines leave their state (default: a temporary directory)
package main
