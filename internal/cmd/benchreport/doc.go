// Command benchreport measures centroid's k-means solvers and its
// assignment kernel and prints Markdown tables for BENCHMARKS.md.
//
// It first measures the one-thread peak of the kernel's vectors
// (internal/asm/f64.PeakLoop: twelve independent chains of fused
// multiply-adds) and, for the -pass shapes, the time of one Lloyd pass
// (a 20-pass run minus a 10-pass run from one fixed start, over 10) on 1
// and 2 workers, its rate as a share of the peak, and whole Cluster calls.
//
// For the -f32 shapes it compares float32 rows (kmeans.Dense32Of of the
// same blobs) with their float64 conversion: one Lloyd pass on one worker
// (as above) and whole Cluster calls (automatic choice, k-means++) on 1
// and 2 workers, both widths measured alternately in the same run and
// required to give the same cost and passes (-f32-only prints just this
// table).
//
// For every shared dataset and every cell of the grid (n rows, d
// dimensions, k clusters, on seeded blobs from internal/synth) it runs
// kmeans.Cluster once per solver with one restart, seed 1 and the same pass
// limit, and prints the wall time and the row–center distance evaluations
// of each solver relative to Lloyd (in brackets: the time ratio after
// subtracting the k-means++ seeding time, measured alone on the same
// number of workers), plus the solver
// the automatic choice picked and its time relative to the fastest. It then
// times the assignment kernel of internal/nearest, gonum's blas64 Dgemm and
// a naive triple loop on the same rows×d×k shape (1 and 2 threads), and
// every solver with 1 and 2 workers on the cells the -workers flags select.
//
//	go run ./internal/cmd/benchreport -n 1e4,1e5 -d 2,16,32,64,256 -k 8,64,256 -iters 30 -reps 1 -rows 100000
//
// Every solver is exact, so all of them run the same passes (the command
// stops if a solver's passes or cost differ from Lloyd's); wall times
// include k-means++ seeding, which runs on the same workers and costs
// several Lloyd passes. Run it on an otherwise idle machine: other load distorts both the
// times and the 1-vs-2-thread ratios.
package main
