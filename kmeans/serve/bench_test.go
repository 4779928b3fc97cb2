package serve

import (
	"bytes"
	"context"
	"encoding/json"
	"net/http"
	"net/http/httptest"
	"testing"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
)

// benchmarkServeNamed labels demo stations given by feature name.
func benchmarkServeNamed(b *testing.B, byMap bool) {
	_, x := bikeshare.Generate(500, 1)
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: 5, Scaler: &scale.ZScore{}}, &kmeans.Settings{Seed: 1}, nil)
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
			_, err = AssignMap(m, maps[i%len(maps)])
		} else {
			_, err = AssignRecord(m, recs[i%len(recs)])
		}
		if err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkServeAssignRecord(b *testing.B) { benchmarkServeNamed(b, false) }

func BenchmarkServeAssignMap(b *testing.B) { benchmarkServeNamed(b, true) }

func BenchmarkServeDriftObserve(b *testing.B) {
	m, x := serveModel(b, 6, 5, nil)
	dr, err := NewDrift(m)
	if err != nil {
		b.Fatal(err)
	}
	as := make([]kmeans.Assignment, 64)
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

// BenchmarkServeAssignRequest answers POST /v1/assign in process (no
// network) for a batch of 100 demo stations and reports rows per second.
func BenchmarkServeAssignRequest(b *testing.B) {
	m, _, _ := demoModel(b, false)
	srv, err := NewServer(m, nil)
	if err != nil {
		b.Fatal(err)
	}
	h := srv.Handler()
	body, err := json.Marshal(assignRequest{Rows: stationRows(bikeshare.NewStations(100, 4))})
	if err != nil {
		b.Fatal(err)
	}
	b.SetBytes(int64(len(body)))
	b.ReportAllocs()
	for b.Loop() {
		r := httptest.NewRequest("POST", "/v1/assign", bytes.NewReader(body))
		r.Header.Set("Content-Type", "application/json")
		w := &discard{}
		h.ServeHTTP(w, r)
		if w.status != http.StatusOK {
			b.Fatal(w.status)
		}
	}
	b.ReportMetric(100*float64(b.N)/b.Elapsed().Seconds(), "rows/s")
}
