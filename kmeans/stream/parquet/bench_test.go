package parquet_test

import (
	"context"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/internal/data/synth"
	"github.com/centroidlab/centroid/kmeans/stream"
	"github.com/centroidlab/centroid/kmeans/stream/parquet"
)

// BenchmarkPassParquet times one exact pass from a Parquet file, as
// BenchmarkPassCSV and BenchmarkPassMatrix in package stream do (same
// sizes), and reports rows per second.
func BenchmarkPassParquet(b *testing.B) {
	const rows, d, k = 200_000, 8, 8
	X := synth.Blobs(rows, d, k, 1)
	c := mat.NewDense(k, d, nil)
	for j := range k {
		c.SetRow(j, X.RawRowView(j*1000))
	}
	path := filepath.Join(b.TempDir(), "x.parquet")
	names := writeMatrix(b, path, X, 1<<17)
	b.ReportAllocs()
	b.ResetTimer()
	for range b.N {
		src, err := parquet.Open(path, &stream.Options{Columns: names})
		if err != nil {
			b.Fatal(err)
		}
		if _, err := stream.Cluster(context.Background(), stream.Problem{Source: src, K: k, Centers: c}, &stream.Settings{MaxPasses: 1, BlockRows: 8192}, stream.Exact{}); err != nil {
			b.Fatal(err)
		}
		src.Close()
	}
	b.ReportMetric(float64(2*rows*b.N)/b.Elapsed().Seconds(), "rows/s")
}
