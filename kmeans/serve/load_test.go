package serve

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"runtime"
	"runtime/debug"
	"runtime/metrics"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
)

// TestLoad drives a Server through its HTTPServer on a loopback listener
// with concurrent clients posting batches of proposed stations. Every
// answer must equal the in-process Model.Assign bit for bit and no request
// may fail. The hostile run adds clients that send, at the same time,
// bodies over the limit (declared and chunked), bodies of many tiny rows,
// one row more than the row limit, deep nesting and bodies that trickle
// in; each must get its 4xx, and the heap must stay within a bound that
// the rows the review found kept in memory would have exceeded many times.
// Both runs log throughput (rows/s) and latency. Under -short or -race
// they run a tenth of the rows with fewer clients.
func TestLoad(t *testing.T) {
	t.Run("normal", func(t *testing.T) { runLoad(t, false) })
	t.Run("hostile", func(t *testing.T) { runLoad(t, true) })
}

// hostileKind is one kind of hostile request of the load test.
type hostileKind struct {
	name    string
	body    []byte
	chunked bool // sent without a Content-Length
	slow    bool // trickles in, a byte every 50 ms
	status  int  // the answer it must get
	gone    bool // the server may close the connection instead of answering
	times   int  // how many are sent
}

func runLoad(t *testing.T, hostile bool) {
	clients, rows, batch := 64, 100_000, 100
	if testing.Short() || raceEnabled {
		clients, rows = 16, 10_000
	}
	m, _, _ := demoModel(t, false)
	srv, err := NewServer(m, &Options{Limits: Limits{ReadTimeout: 2 * time.Second}})
	require.NoError(t, err)
	url := "http://" + startHTTP(t, srv)
	lim := srv.Limits()

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
		for _, s := range stations[r*batch : (r+1)*batch] {
			a, err := m.Assign(s.Features)
			require.NoError(t, err)
			want[r] = append(want[r], a)
		}
	}
	stations = nil
	var kinds []hostileKind
	if hostile {
		row := minimalRow(t, bikeshare.Features())
		over := bytes.Repeat([]byte(" "), int(lim.MaxBody)+1)
		kinds = []hostileKind{
			{name: "oversized, declared", body: over, status: 413, gone: true, times: 20},
			{name: "oversized, chunked", body: over, chunked: true, status: 413, gone: true, times: 20},
			{name: "many tiny rows", body: hostileBodies(t, lim.MaxBody)["empty objects"], status: 422, times: 20},
			{name: "zeros", body: hostileBodies(t, lim.MaxBody)["zeros"], chunked: true, status: 422, times: 20},
			{name: "one row too many", body: rowsBody(row, lim.MaxRows+1), status: 413, times: 20},
			{name: "deep nesting", body: []byte(`{"rows":[` + strings.Repeat("[", int(lim.MaxBody)-12) + `]}`), status: 422, times: 20},
			{name: "slow body", body: []byte(`{"rows":[` + row + `]}`), slow: true, status: 408, times: 2},
		}
	}
	client := &http.Client{
		Transport: &http.Transport{MaxIdleConns: clients, MaxIdleConnsPerHost: clients, MaxConnsPerHost: clients + len(kinds)},
		Timeout:   30 * time.Second,
	}
	defer client.CloseIdleConnections()
	ctx, cancel := context.WithTimeout(context.Background(), 3*time.Minute)
	defer cancel()

	// A low GC target keeps the heap close to what is live, so that the
	// peak measures what requests hold rather than when the collector
	// ran.
	defer debug.SetGCPercent(debug.SetGCPercent(25))
	runtime.GC()
	base := heapObjects()
	var peak atomic.Uint64
	peak.Store(base)
	sampling := make(chan struct{})
	var sampler sync.WaitGroup
	sampler.Go(func() {
		for {
			select {
			case <-sampling:
				return
			case <-time.After(2 * time.Millisecond):
			}
			if h := heapObjects(); h > peak.Load() {
				peak.Store(h)
			}
		}
	})

	var next, failures, mismatches, hostileWrong atomic.Int64
	latency := make([]time.Duration, nreq)
	var wg sync.WaitGroup
	start := time.Now()
	for _, k := range kinds {
		wg.Go(func() {
			for range k.times {
				if ctx.Err() != nil {
					return
				}
				status, err := sendHostile(ctx, client, url+"/v1/assign", k)
				if status != k.status && !(k.gone && err != nil) {
					if hostileWrong.Add(1) == 1 {
						t.Errorf("%s: status %d (%v), want %d", k.name, status, err, k.status)
					}
				}
			}
		})
	}
	var normal sync.WaitGroup
	for range clients {
		normal.Go(func() {
			for {
				r := int(next.Add(1) - 1)
				if r >= nreq || ctx.Err() != nil {
					return
				}
				t0 := time.Now()
				got, err := post(ctx, client, url+"/v1/assign", bodies[r])
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
	normal.Wait()
	elapsed := time.Since(start)
	wg.Wait()
	close(sampling)
	sampler.Wait()
	client.CloseIdleConnections()
	runtime.GC()
	after := heapObjects()
	runtime.KeepAlive(bodies) // so that only what the traffic left behind counts
	runtime.KeepAlive(want)
	runtime.KeepAlive(kinds)

	require.NoError(t, ctx.Err(), "the load test ran out of time")
	assert.Zero(t, failures.Load(), "failed requests")
	assert.Zero(t, mismatches.Load(), "batches whose answers differ from in-process Assign")
	assert.Zero(t, hostileWrong.Load(), "hostile requests with the wrong answer")
	st := srv.Stats()
	assert.Equal(t, int64(rows), st.RowsAssigned)
	assert.Equal(t, int64(rows), srv.Served().Drift.Snapshot().Rows)
	growth := int64(after) - int64(base)
	assert.Less(t, growth, int64(16<<20), "heap grew by %d bytes", growth)
	// Each hostile request in flight may allocate up to 4 × MaxBody (the
	// promise of Limits); with one client per kind, at most len(kinds) are
	// in flight, plus what the normal traffic holds.
	bound := uint64(len(kinds))*4*uint64(lim.MaxBody) + 48<<20
	assert.Less(t, peak.Load()-base, bound, "peak heap %d bytes above the start", peak.Load()-base)

	slices.Sort(latency)
	pct := func(p float64) time.Duration { return latency[min(nreq-1, int(math.Ceil(p*float64(nreq)))-1)] }
	t.Logf("load (hostile %v): %d clients, %d rows in %d requests of %d: %.0f rows/s, %.0f requests/s; latency p50 %v, p99 %v, max %v; heap %.1f MiB at the start, peak +%.1f MiB, after +%.1f MiB; responses %v; GOMAXPROCS %d",
		hostile, clients, rows, nreq, batch, float64(rows)/elapsed.Seconds(), float64(nreq)/elapsed.Seconds(),
		pct(0.50).Round(time.Microsecond), pct(0.99).Round(time.Microsecond), latency[nreq-1].Round(time.Microsecond),
		float64(base)/(1<<20), float64(peak.Load()-base)/(1<<20), float64(growth)/(1<<20), st.Responses, runtime.GOMAXPROCS(0))
}

// heapObjects returns the bytes of heap objects, live or not yet swept.
func heapObjects() uint64 {
	s := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	metrics.Read(s)
	return s[0].Value.Uint64()
}

// sendHostile sends one hostile request and returns its status.
func sendHostile(ctx context.Context, c *http.Client, url string, k hostileKind) (int, error) {
	var body io.Reader = bytes.NewReader(k.body)
	if k.chunked {
		body = io.MultiReader(body) // hides the length
	}
	if k.slow {
		pr, pw := io.Pipe()
		defer pw.Close()
		go func() {
			for _, b := range k.body {
				select {
				case <-ctx.Done():
					return
				case <-time.After(50 * time.Millisecond):
				}
				if _, err := pw.Write([]byte{b}); err != nil {
					return
				}
			}
			pw.Close()
		}()
		body = pr
	}
	req, err := http.NewRequestWithContext(ctx, "POST", url, body)
	if err != nil {
		return 0, err
	}
	if k.slow {
		req.ContentLength = int64(len(k.body))
	}
	req.Header.Set("Content-Type", "application/json")
	resp, err := c.Do(req)
	if err != nil {
		return 0, err
	}
	defer resp.Body.Close()
	var e errorBody
	if err := json.NewDecoder(resp.Body).Decode(&e); err != nil || e.Error == "" {
		return resp.StatusCode, fmt.Errorf("not a JSON error: %v", err)
	}
	return resp.StatusCode, nil
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
