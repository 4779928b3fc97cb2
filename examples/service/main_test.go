package main

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"net/http"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// startRun runs the command in the background on a free loopback port and
// returns its address, its logs and a function that stops it (as SIGTERM
// would) and returns run's error.
func startRun(t *testing.T, args ...string) (string, *syncBuffer, func() error) {
	ctx, cancel := context.WithCancel(context.Background())
	logs := &syncBuffer{}
	ready := make(chan string, 1)
	done := make(chan error, 1)
	go func() {
		done <- run(ctx, append([]string{"-addr", "127.0.0.1:0"}, args...), logs, func(addr string) { ready <- addr })
	}()
	select {
	case addr := <-ready:
		return addr, logs, func() error {
			cancel()
			select {
			case err := <-done:
				return err
			case <-time.After(30 * time.Second):
				t.Fatal("run did not return after cancel")
				return nil
			}
		}
	case err := <-done:
		cancel()
		t.Fatalf("run: %v", err)
	case <-time.After(60 * time.Second):
		cancel()
		t.Fatal("run did not start")
	}
	return "", nil, nil
}

func getJSON(t *testing.T, url string) map[string]any {
	resp, err := http.Get(url)
	require.NoError(t, err)
	defer resp.Body.Close()
	require.Equal(t, http.StatusOK, resp.StatusCode)
	var v map[string]any
	require.NoError(t, json.NewDecoder(resp.Body).Decode(&v))
	return v
}

func TestRunServesAndShutsDown(t *testing.T) {
	addr, logs, stop := startRun(t)
	h := getJSON(t, "http://"+addr+"/healthz")
	assert.Equal(t, "ok", h["status"])
	assert.EqualValues(t, 5, h["k"])
	vars := getJSON(t, "http://"+addr+"/debug/vars")
	svc, ok := vars["service"].(map[string]any)
	require.True(t, ok, "expvar publishes the service counters")
	assert.Contains(t, svc, "rows_assigned")

	// Save the served model; a second run serves it from the file.
	resp, err := http.Get("http://" + addr + "/v1/model")
	require.NoError(t, err)
	doc, err := io.ReadAll(resp.Body)
	resp.Body.Close()
	require.NoError(t, err)
	require.NoError(t, stop())
	assert.Contains(t, logs.String(), `"msg":"stopped"`)
	assert.Contains(t, logs.String(), `"path":"/healthz"`)

	path := filepath.Join(t.TempDir(), "model.json")
	require.NoError(t, os.WriteFile(path, doc, 0o644))
	addr, _, stop = startRun(t, "-model", path)
	h2 := getJSON(t, "http://"+addr+"/healthz")
	assert.Equal(t, h["model"], h2["model"])
	require.NoError(t, stop())
}

// TestShutdownWaitsForRequests starts a slow upload, cancels the run and
// checks that the request in flight still completes.
func TestShutdownWaitsForRequests(t *testing.T) {
	addr, _, stop := startRun(t)
	pr, pw := io.Pipe()
	req, err := http.NewRequest("POST", "http://"+addr+"/v1/assign", pr)
	require.NoError(t, err)
	req.Header.Set("Content-Type", "application/json")
	got := make(chan int, 1)
	go func() {
		resp, err := http.DefaultClient.Do(req)
		if err != nil {
			got <- -1
			return
		}
		resp.Body.Close()
		got <- resp.StatusCode
	}()
	_, err = pw.Write([]byte(`{"rows":[`))
	require.NoError(t, err)
	time.Sleep(100 * time.Millisecond) // the request is now in flight
	stopped := make(chan error, 1)
	go func() { stopped <- stop() }()
	time.Sleep(100 * time.Millisecond)
	_, err = pw.Write([]byte(`]}`))
	require.NoError(t, err)
	require.NoError(t, pw.Close())
	assert.Equal(t, http.StatusOK, <-got)
	require.NoError(t, <-stopped)
}

func TestRunErrors(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.json")
	require.NoError(t, os.WriteFile(bad, []byte(`{"format":"centroid/kmeans-model","version":9}`), 0o644))
	for _, args := range [][]string{
		{"-nosuchflag"},
		{"-model", filepath.Join(dir, "missing.json")},
		{"-model", bad},
		{"-max-rows", "0"},
		{"-k", "0"},
		{"-addr", "127.0.0.1:-1"},
	} {
		var logs bytes.Buffer
		err := run(context.Background(), args, &logs, nil)
		require.Error(t, err, strings.Join(args, " "))
	}
}
