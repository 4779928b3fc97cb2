package kmeans

import (
	"context"
	"fmt"
	"testing"
	"time"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/data/reference"
	"github.com/centroidlab/centroid/internal/data/synth"
	"github.com/centroidlab/centroid/seeding"
)

// benchMethods are the solvers every benchmark compares.
var benchMethods = []Method{Lloyd{}, Elkan{}, Hamerly{}, Yinyang{}}

// benchmarkCluster times one Cluster call per iteration (one restart, seed
// 1) and reports the passes and row–center distance evaluations per call.
func benchmarkCluster(b *testing.B, x *mat.Dense, k, maxIter, workers int, m Method) {
	p := Problem{Data: x, K: k}
	s := &Settings{Restarts: 1, Seed: 1, MaxIterations: maxIter, Workers: workers, SwapTrials: -1}
	b.ReportAllocs()
	var res *Result
	for b.Loop() {
		var err error
		if res, err = Cluster(context.Background(), p, s, m); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(res.Iterations), "passes")
	b.ReportMetric(float64(res.Stats.Distances), "distances")
}

// BenchmarkSolversDatasets runs every solver on the shared sets (see the
// shared PROVENANCE.md) with their published k; select with e.g.
// -bench 'SolversDatasets/a3/'.
func BenchmarkSolversDatasets(b *testing.B) {
	sets := []struct {
		name string
		k    int
	}{{"s1", 15}, {"s2", 15}, {"s3", 15}, {"s4", 15}, {"a1", 20}, {"a2", 35}, {"a3", 50}, {"unbalance", 8}, {"letter", 26}}
	for _, set := range sets {
		b.Run(set.name, func(b *testing.B) {
			s := reference.LoadOrSkip(b, set.name)
			for _, m := range benchMethods {
				b.Run(methodName(m), func(b *testing.B) { benchmarkCluster(b, s.X, set.k, 0, 0, m) })
			}
		})
	}
}

// Grid of the synthetic benchmarks: rows, dimensions and clusters.
var (
	gridN = []int{1e4, 1e5, 1e6}
	gridD = []int{2, 16, 64, 256}
	gridK = []int{8, 64, 256}
)

// gridIterations caps the passes of the grid benchmarks so that the large
// cells finish; every solver is exact, so all run the same passes.
const gridIterations = 30

// BenchmarkSolversGrid runs every solver on seeded blobs (internal/synth,
// 50 true clusters) over the grid n × d × k. Data is generated only for the
// cells that -bench selects, e.g. -bench 'SolversGrid/n=1e4/d=16/'; the
// n=1e6, d=256 cells take minutes per call.
func BenchmarkSolversGrid(b *testing.B) {
	for _, n := range gridN {
		b.Run(fmt.Sprintf("n=1e%d", digits(n)), func(b *testing.B) {
			for _, d := range gridD {
				b.Run(fmt.Sprintf("d=%d", d), func(b *testing.B) {
					x := synth.Blobs(n, d, synth.GridClusters, 1)
					for _, k := range gridK {
						b.Run(fmt.Sprintf("k=%d", k), func(b *testing.B) {
							for _, m := range benchMethods {
								b.Run(methodName(m), func(b *testing.B) { benchmarkCluster(b, x, k, gridIterations, 0, m) })
							}
						})
					}
				})
			}
		})
	}
}

// BenchmarkWorkers compares one and two workers on n = 10⁵ rows.
func BenchmarkWorkers(b *testing.B) {
	x := synth.Blobs(1e5, 16, synth.GridClusters, 1)
	for _, m := range benchMethods {
		for _, w := range []int{1, 2} {
			b.Run(fmt.Sprintf("%s/workers=%d", methodName(m), w), func(b *testing.B) { benchmarkCluster(b, x, 64, gridIterations, w, m) })
		}
	}
}

// digits returns log10(n) for a power of ten.
func digits(n int) int {
	e := 0
	for ; n >= 10; n /= 10 {
		e++
	}
	return e
}

// BenchmarkLloydPass times Lloyd passes from one fixed start on n = 10⁵
// rows of the 50-blob mixture, one worker: the time of a 20-pass Cluster
// call minus that of a 10-pass call, divided by 10, so that seeding, the
// final cost and the training summary cancel out. It reports that pass
// time and the rate in GFLOP/s-equivalent (2·n·d·k per pass, the products
// the assignment needs).
func BenchmarkLloydPass(b *testing.B) {
	for _, s := range []struct{ d, k int }{{16, 64}, {32, 64}, {64, 256}} {
		b.Run(fmt.Sprintf("d=%d/k=%d", s.d, s.k), func(b *testing.B) {
			const n = 100000
			x := synth.Blobs(n, s.d, synth.GridClusters, 1)
			start := mat.NewDense(s.k, s.d, nil)
			for j := range s.k {
				start.SetRow(j, x.RawRowView(j*(n/s.k)))
			}
			run := func(passes int) time.Duration {
				t0 := time.Now()
				res, err := Cluster(context.Background(), Problem{Data: x, K: s.k, Seeder: seeding.Given{Centers: start}},
					&Settings{Restarts: 1, MaxIterations: passes, Workers: 1, SwapTrials: -1}, Lloyd{})
				if err != nil {
					b.Fatal(err)
				}
				if res.Iterations != passes {
					b.Fatalf("converged after %d passes", res.Iterations)
				}
				return time.Since(t0)
			}
			var pass time.Duration
			for b.Loop() {
				pass += (run(20) - run(10)) / 10
			}
			secs := pass.Seconds() / float64(b.N)
			b.ReportMetric(secs*1e3, "ms/pass")
			b.ReportMetric(2*float64(n*s.d*s.k)/secs/1e9, "GFLOP/s")
		})
	}
}
