package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/centroidlab/centroid/kmeans/serve"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// TestLoad drives the server on a loopback listener with concurrent
// clients posting batches of proposed stations. Every answer must equal
// the in-process answer bit for bit, no request may fail, and the heap
// must not grow with the traffic. It logs throughput and latency (the
// figures of BENCHMARKS.md come from this log). Under -short or -race it
// runs a tenth of the rows with fewer clients.
func TestLoad(t *testing.T) {
	clients, rows, batch := 64, 100_000, 100
	if testing.Short() || raceEnabled {
		clients, rows = 16, 10_000
	}
	lim := DefaultLimits
	srv, ts := startServer(t, lim, "")
	m := srv.Model()

	// Requests and expected answers, prepared before the clock starts.
	stations := bikeshare.NewStations(rows, 77)
	nreq := rows / batch
	bodies := make([][]byte, nreq)
	want := make([][]kmeans.Assignment, nreq)
	for r := range nreq {
		recs := stationRows(stations[r*batch : (r+1)*batch])
		b, err := json.Marshal(assignRequest{Rows: recs})
		require.NoError(t, err)
		bodies[r] = b
		for _, rec := range recs {
			a, err := serve.AssignRecord(m, rec)
			require.NoError(t, err)
			want[r] = append(want[r], a)
		}
	}
	stations = nil
	client := &http.Client{
		Transport: &http.Transport{MaxIdleConns: clients, MaxIdleConnsPerHost: clients, MaxConnsPerHost: clients},
		Timeout:   30 * time.Second,
	}
	defer client.CloseIdleConnections()
	ctx, cancel := context.WithTimeout(context.Background(), 3*time.Minute)
	defer cancel()

	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)

	var next, failures, mismatches atomic.Int64
	latency := make([]time.Duration, nreq)
	var wg sync.WaitGroup
	start := time.Now()
	for range clients {
		wg.Go(func() {
			for {
				r := int(next.Add(1) - 1)
				if r >= nreq || ctx.Err() != nil {
					return
				}
				t0 := time.Now()
				got, err := post(ctx, client, ts.URL+"/v1/assign", bodies[r])
				latency[r] = time.Since(t0)
				if err != nil {
					if failures.Add(1) == 1 {
						t.Errorf("request %d: %v", r, err)
					}
					continue
				}
				if !sameAnswers(want[r], got) {
					mismatches.Add(1)
				}
			}
		})
	}
	wg.Wait()
	elapsed := time.Since(start)
	client.CloseIdleConnections()
	runtime.GC()
	runtime.ReadMemStats(&after)
	runtime.KeepAlive(bodies) // so that only what the traffic left behind counts
	runtime.KeepAlive(want)

	require.NoError(t, ctx.Err(), "the load test ran out of time")
	assert.Zero(t, failures.Load(), "failed requests")
	assert.Zero(t, mismatches.Load(), "batches whose answers differ from in-process Assign")
	assert.Equal(t, int64(rows), srv.rowsAssigned.Value())
	assert.Equal(t, int64(rows), srv.holder.Load().Drift.Snapshot().Rows)
	growth := int64(after.HeapAlloc) - int64(before.HeapAlloc)
	assert.Less(t, growth, int64(32<<20), "heap grew by %d bytes", growth)

	slices.Sort(latency)
	pct := func(p float64) time.Duration { return latency[min(nreq-1, int(math.Ceil(p*float64(nreq)))-1)] }
	t.Logf("load: %d clients, %d rows in %d requests of %d: %.0f rows/s, %.0f requests/s; latency p50 %v, p99 %v, max %v; heap %.1f → %.1f MiB, %.0f bytes allocated per row (client and server), GOMAXPROCS %d",
		clients, rows, nreq, batch, float64(rows)/elapsed.Seconds(), float64(nreq)/elapsed.Seconds(),
		pct(0.50).Round(time.Microsecond), pct(0.99).Round(time.Microsecond), latency[nreq-1].Round(time.Microsecond),
		float64(before.HeapAlloc)/(1<<20), float64(after.HeapAlloc)/(1<<20),
		float64(after.TotalAlloc-before.TotalAlloc)/float64(rows), runtime.GOMAXPROCS(0))
}

// post sends one assign request and decodes the answer.
func post(ctx context.Context, c *http.Client, url string, body []byte) (*assignResponse, error) {
	req, err := http.NewRequestWithContext(ctx, "POST", url, bytes.NewReader(body))
	if err != nil {
		return nil, err
	}
	req.Header.Set("Content-Type", "application/json")
	resp, err := c.Do(req)
	if err != nil {
		return nil, err
	}
	defer resp.Body.Close()
	b, err := io.ReadAll(resp.Body)
	if err != nil {
		return nil, err
	}
	if resp.StatusCode != http.StatusOK {
		return nil, fmt.Errorf("status %d: %s", resp.StatusCode, b)
	}
	var got assignResponse
	if err := json.Unmarshal(b, &got); err != nil {
		return nil, err
	}
	return &got, nil
}

// sameAnswers compares answers bit for bit.
func sameAnswers(want []kmeans.Assignment, got *assignResponse) bool {
	if len(got.Assignments) != len(want) {
		return false
	}
	for i, w := range want {
		g := got.Assignments[i]
		if g.Cluster != w.Cluster || math.Float64bits(g.Distance) != math.Float64bits(w.Distance) ||
			g.Margin == nil || math.Float64bits(*g.Margin) != math.Float64bits(w.Margin) {
			return false
		}
	}
	return true
}
