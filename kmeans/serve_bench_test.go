package kmeans

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"testing"

	"github.com/centroidlab/centroid/internal/bikeshare"
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

// benchmarkServeNamed labels demo stations given by feature name.
func benchmarkServeNamed(b *testing.B, byMap bool) {
	_, x := bikeshare.Generate(500, 1)
	res, err := Cluster(context.Background(), Problem{Data: x, K: 5, Scaler: &scale.ZScore{}}, &Settings{Seed: 1}, nil)
	if err != nil {
		b.Fatal(err)
	}
	m, err := res.Model.WithFeatures(bikeshare.Features())
	if err != nil {
		b.Fatal(err)
	}
	stations := bikeshare.NewStations(256, 2)
	recs := make([]Record, len(stations))
	maps := make([]map[string]float64, len(stations))
	for i, s := range stations {
		maps[i] = map[string]float64{}
		for j, name := range bikeshare.Features() {
			recs[i] = append(recs[i], Field{name, s.Features[j]})
			maps[i][name] = s.Features[j]
		}
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; b.Loop(); i++ {
		if byMap {
			_, err = m.AssignMap(maps[i%len(maps)])
		} else {
			_, err = m.AssignRecord(recs[i%len(recs)])
		}
		if err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkServeAssignRecord(b *testing.B) { benchmarkServeNamed(b, false) }
func BenchmarkServeAssignMap(b *testing.B)    { benchmarkServeNamed(b, true) }

func BenchmarkServeDriftObserve(b *testing.B) {
	m, x := serveModel(b, 6, 5, nil)
	m.training = &Training{Rows: 1, Clusters: make([]ClusterSummary, 5)}
	m.training.Clusters[0] = ClusterSummary{Size: 1, Weight: 1}
	dr, err := NewDrift(m)
	if err != nil {
		b.Fatal(err)
	}
	as := make([]Assignment, 64)
	if err := m.AssignBatch(as, x.Slice(0, 64, 0, 6)); err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	b.RunParallel(func(pb *testing.PB) {
		for i := 0; pb.Next(); i++ {
			dr.Observe(as[i&63])
		}
	})
}

func BenchmarkServeHolderLoad(b *testing.B) {
	m, x := serveModel(b, 16, 32, &scale.ZScore{})
	var h Holder
	if _, err := h.Swap(m); err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	b.RunParallel(func(pb *testing.PB) {
		for i := 0; pb.Next(); i++ {
			if _, _, err := h.Load().Model.Nearest(x.RawRowView(i % serveRows)); err != nil {
				b.Error(err)
				return
			}
		}
	})
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
