package stream_test

import (
	"context"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/data/synth"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/seeding"
)

// Sizes of the pass benchmarks: one Lloyd pass over benchRows rows of
// benchDim columns against benchK centers.
const (
	benchRows = 200_000
	benchDim  = 8
	benchK    = 8
)

func benchData(b *testing.B) (*mat.Dense, *mat.Dense) {
	b.Helper()
	X := synth.Blobs(benchRows, benchDim, benchK, 1)
	c := mat.NewDense(benchK, benchDim, nil)
	for j := range benchK {
		c.SetRow(j, X.RawRowView(j*1000))
	}
	return X, c
}

// benchmarkPass times one exact pass (Settings.MaxPasses = 1: assign and
// score) from a source made by open, and reports rows per second.
func benchmarkPass(b *testing.B, open func() stream.Source) {
	_, c := benchData(b)
	b.ReportAllocs()
	b.ResetTimer()
	for range b.N {
		src := open()
		if _, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: benchK, Centers: c}, &stream.Settings{MaxPasses: 1, BlockRows: 8192}, stream.Exact{}); err != nil {
			b.Fatal(err)
		}
	}
	// Two passes per run: counting the rows, then the Lloyd pass.
	b.ReportMetric(float64(2*benchRows*b.N)/b.Elapsed().Seconds(), "rows/s")
}

func BenchmarkPassMatrix(b *testing.B) {
	X, _ := benchData(b)
	benchmarkPass(b, func() stream.Source {
		src, err := stream.NewMatrix(X, nil)
		if err != nil {
			b.Fatal(err)
		}
		return src
	})
}

func BenchmarkPassCSV(b *testing.B) {
	X, _ := benchData(b)
	path := filepath.Join(b.TempDir(), "x.csv")
	writeCSV(b, path, X, names(benchDim))
	benchmarkPass(b, func() stream.Source {
		src, err := stream.OpenCSV(path, nil)
		if err != nil {
			b.Fatal(err)
		}
		b.Cleanup(func() { src.Close() })
		return src
	})
}

// BenchmarkPassInMemory is the in-memory reference: one kmeans.Cluster
// with kmeans.Lloyd and MaxIterations 1 (one pass and the scoring pass).
func BenchmarkPassInMemory(b *testing.B) {
	X, c := benchData(b)
	b.ReportAllocs()
	b.ResetTimer()
	for range b.N {
		if _, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: X, K: benchK, Seeder: seeding.Given{Centers: c}},
			&kmeans.Settings{Restarts: 1, MaxIterations: 1, SwapTrials: -1}, kmeans.Lloyd{}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(2*benchRows*b.N)/b.Elapsed().Seconds(), "rows/s")
}
