package kmeans

import (
	"context"
	"fmt"
	"testing"
)

// Benchmark grid for the driver with Lloyd (the solver report in
// internal/cmd/benchreport covers the other methods and larger shapes).
var clusterGrid = []struct{ n, d, k int }{
	{2000, 2, 8},
	{2000, 16, 8},
	{20000, 2, 16},
	{20000, 16, 16},
	{20000, 16, 64},
}

func BenchmarkCluster(b *testing.B) {
	for _, g := range clusterGrid {
		x := blobs(g.n, g.d, g.k, 1)
		b.Run(fmt.Sprintf("n=%d/d=%d/k=%d", g.n, g.d, g.k), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Cluster(context.Background(), Problem{Data: x, K: g.k}, &Settings{Restarts: 1, MaxIterations: 20, SwapTrials: -1}, Lloyd{}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func benchmarkNearest(b *testing.B, d, k int) {
	x := blobs(1000, d, k, 2)
	res, err := Cluster(context.Background(), Problem{Data: x, K: k}, &Settings{Restarts: 1, MaxIterations: 5}, Lloyd{})
	if err != nil {
		b.Fatal(err)
	}
	row := x.RawRowView(1)
	b.ReportAllocs()
	for b.Loop() {
		if _, _, err := res.Model.Nearest(row); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkNearestD2K8(b *testing.B)   { benchmarkNearest(b, 2, 8) }
func BenchmarkNearestD16K32(b *testing.B) { benchmarkNearest(b, 16, 32) }
func BenchmarkNearestD64K64(b *testing.B) { benchmarkNearest(b, 64, 64) }
