package serve_test

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"net/http/httptest"
	"strings"
	"time"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/serve"
	"github.com/centroidlab/centroid/scale"
)

// demo clusters the Riverton demo stations and names the features.
func demo() *kmeans.Model {
	_, x := bikeshare.Generate(300, 1)
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: 4, Scaler: &scale.ZScore{}}, &kmeans.Settings{Seed: 1}, nil)
	if err != nil {
		panic(err)
	}
	m, err := res.Model.WithFeatures(bikeshare.Features())
	if err != nil {
		panic(err)
	}
	return m.WithCreated(time.Date(2025, 3, 1, 9, 30, 0, 0, time.UTC))
}

// A proposed station given by feature name gets a cluster (here the busy
// weekday cluster of commuter hubs), the distance to its center and the
// margin to the runner-up; a misspelt field is named in the error.
func ExampleAssignRecord() {
	m := demo()
	station := serve.Record{
		{Name: "trips_per_day", Value: 310}, {Name: "weekend_share", Value: 0.12},
		{Name: "peak_hour_ratio", Value: 0.58}, {Name: "mean_trip_minutes", Value: 11.5},
		{Name: "return_imbalance", Value: 5}, {Name: "elevation_m", Value: 18},
	}
	a, err := serve.AssignRecord(m, station)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("cluster %d, distance %.2f, margin %.2f\n", a.Cluster, a.Distance, a.Margin)
	byVector, _ := m.Assign([]float64{310, 0.12, 0.58, 11.5, 5, 18})
	fmt.Println("same as by vector:", byVector == a)

	station[5].Name = "elevation"
	_, err = serve.AssignRecord(m, station)
	fmt.Println(err)
	var fe *serve.FieldError
	fmt.Println(errors.As(err, &fe), errors.Is(err, kmeans.ErrSchema))
	// Output:
	// cluster 1, distance 0.30, margin 1.97
	// same as by vector: true
	// serve: field "elevation": unknown
	// true true
}

// A Holder serves one model to many goroutines and replaces it atomically;
// a replacement with other feature names is refused and the old model
// keeps serving.
func ExampleHolder() {
	m := demo()
	h := serve.Holder{Accept: serve.SameSchema}
	if _, err := h.Swap(m); err != nil {
		fmt.Println(err)
		return
	}
	other, _ := m.WithFeatures([]string{"a", "b", "c", "d", "e", "f"})
	_, err := h.Swap(other)
	fmt.Println(errors.Is(err, kmeans.ErrSchema), h.Model() == m)

	served := h.Load() // one atomic load per request
	c, _, _ := served.Model.Nearest([]float64{60, 0.3, 0.45, 16, -4, 140})
	fmt.Println("hillside station in cluster", c)
	// Output:
	// true true
	// hillside station in cluster 0
}

// Drift compares the clusters of live traffic with the training shares.
// Traffic made only of hillside stations is a major shift.
func ExampleDrift() {
	m := demo()
	d, err := serve.NewDrift(m)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, s := range bikeshare.NewStations(400, 2) {
		if s.Kind != bikeshare.Hillside {
			continue
		}
		a, err := m.Assign(s.Features)
		if err != nil {
			d.ObserveError(err)
			continue
		}
		d.Observe(a)
	}
	s := d.Snapshot()
	fmt.Printf("%d rows, PSI %.1f: %s\n", s.Rows, s.PSI, s.Reading)
	// Output:
	// 112 rows, PSI 6.9: major shift
}

// A Server answers the HTTP API for a model with feature names. Without an
// admin token it refuses to swap the model; the model document is served
// with its checksum as ETag, and a client that has it gets 304.
func ExampleServer() {
	srv, err := serve.NewServer(demo(), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	ts := httptest.NewServer(srv.Handler()) // or srv.HTTPServer(), with its timeouts
	defer ts.Close()

	body := `{"rows":[{"trips_per_day":310,"weekend_share":0.12,"peak_hour_ratio":0.58,
		"mean_trip_minutes":11.5,"return_imbalance":5,"elevation_m":18}]}`
	resp, err := http.Post(ts.URL+"/v1/assign", "application/json", strings.NewReader(body))
	if err != nil {
		fmt.Println(err)
		return
	}
	var answer struct {
		Assignments []struct{ Cluster int }
	}
	json.NewDecoder(resp.Body).Decode(&answer)
	resp.Body.Close()
	fmt.Println(resp.StatusCode, "cluster", answer.Assignments[0].Cluster)

	req, _ := http.NewRequest("PUT", ts.URL+"/v1/model", strings.NewReader(`{}`))
	req.Header.Set("Content-Type", "application/json")
	resp, _ = http.DefaultClient.Do(req)
	resp.Body.Close()
	fmt.Println("PUT without a token:", resp.StatusCode)

	req, _ = http.NewRequest("GET", ts.URL+"/v1/model", nil)
	req.Header.Set("If-None-Match", `"`+srv.Served().Checksum+`"`)
	resp, _ = http.DefaultClient.Do(req)
	resp.Body.Close()
	fmt.Println("GET with the ETag:", resp.StatusCode)
	fmt.Println("rows per request:", srv.Limits().MaxRows)
	// Output:
	// 200 cluster 1
	// PUT without a token: 403
	// GET with the ETag: 304
	// rows per request: 8191
}
