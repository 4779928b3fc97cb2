package kmeans

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"testing"

	"github.com/centroidlab/centroid/scale"
	"gonum.org/v1/gonum/mat"
)

// Serving benchmarks. Rows rotate through 4096 distinct training rows so
// that branch predictors cannot learn one answer.
const serveRows = 4096

func serveModel(b *testing.B, d, k int, sc scale.Scaler) (*Model, *mat.Dense) {
	x := blobs(serveRows, d, k, 21)
	res, err := Cluster(context.Background(), Problem{Data: x, K: k, Scaler: sc}, &Settings{Restarts: 1, Seed: 1}, nil)
	if err != nil {
		b.Fatal(err)
	}
	return res.Model, x
}

func benchmarkServeNearest(b *testing.B, d, k int, sc scale.Scaler, margin bool) {
	m, x := serveModel(b, d, k, sc)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; b.Loop(); i++ {
		row := x.RawRowView(i % serveRows)
		var err error
		if margin {
			_, err = m.Assign(row)
		} else {
			_, _, err = m.Nearest(row)
		}
		if err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkServeNearestD16K32(b *testing.B) { benchmarkServeNearest(b, 16, 32, nil, false) }
func BenchmarkServeNearestD16K32ZScore(b *testing.B) {
	benchmarkServeNearest(b, 16, 32, &scale.ZScore{}, false)
}
func BenchmarkServeAssignD16K32ZScore(b *testing.B) {
	benchmarkServeNearest(b, 16, 32, &scale.ZScore{}, true)
}
func BenchmarkServeNearestD64K256(b *testing.B) { benchmarkServeNearest(b, 64, 256, nil, false) }

// BenchmarkServeAssignBatch labels 4096 rows per operation and reports
// rows per second.
func BenchmarkServeAssignBatch(b *testing.B) {
	for _, s := range []struct{ d, k int }{{6, 5}, {16, 32}} {
		b.Run(fmt.Sprintf("d=%d/k=%d", s.d, s.k), func(b *testing.B) {
			m, x := serveModel(b, s.d, s.k, &scale.ZScore{})
			dst := make([]Assignment, serveRows)
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				if err := m.AssignBatch(dst, x); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(serveRows)*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
		})
	}
}

func BenchmarkServeReadModel(b *testing.B) {
	m, _ := serveModel(b, 16, 32, &scale.ZScore{})
	doc, err := json.Marshal(m)
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(len(doc)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := ReadModel(bytes.NewReader(doc), nil); err != nil {
			b.Fatal(err)
		}
	}
}
