// Command figures measures the streaming figures reported in BENCHMARKS.md
// and draws docs/minibatch.png. Every speed is reported as a ratio of two
// runs made in the same invocation on the same data.
//
//	go run ./examples/batch/internal/figures -minibatch        # 10⁷ × 16 mixture: mini-batch against full Lloyd, cost against time
//	go run ./examples/batch/internal/figures -files            # CSV and Parquet about 10× the memory budget: peak RSS, rows/s
//	go run ./examples/batch/internal/figures -scale            # 10⁸ × 8 Parquet with a 1 GiB budget (needs ~7 GB of disk)
//
// Data is generated into a temporary folder and deleted afterwards; the
// batch command is built there and run as a child process, so that its
// peak RSS (getrusage ru_maxrss) is its own.
package main
