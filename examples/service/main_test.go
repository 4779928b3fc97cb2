package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net"
	"net/http"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/kmeans/serve"
)

// testToken is the admin token of the tests; it must never be seen.
const testToken = "svc-tok-51c2a7e09f3b4d86"

// envOf returns a getenv that sees only the given variables.
func envOf(kv ...string) func(string) string {
	return func(name string) string {
		for i := 0; i+1 < len(kv); i += 2 {
			if kv[i] == name {
				return kv[i+1]
			}
		}
		return ""
	}
}

// startRun runs the command in the background on a free loopback port and
// returns its address, its logs and a function that stops it (as SIGTERM
// would) and returns run's error.
func startRun(t *testing.T, getenv func(string) string, args ...string) (string, *syncBuffer, func() error) {
	ctx, cancel := context.WithCancel(context.Background())
	logs := &syncBuffer{}
	ready := make(chan string, 1)
	done := make(chan error, 1)
	go func() {
		done <- run(ctx, append([]string{"-addr", "127.0.0.1:0"}, args...), getenv, logs, func(addr string) { ready <- addr })
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

// request sends one request and returns the status and the whole
// response as text (status line, headers, body).
func request(t *testing.T, method, url, auth string, body []byte) (int, string) {
	req, err := http.NewRequest(method, url, bytes.NewReader(body))
	require.NoError(t, err)
	req.Header.Set("Content-Type", "application/json")
	if auth != "" {
		req.Header.Set("Authorization", auth)
	}
	resp, err := http.DefaultClient.Do(req)
	require.NoError(t, err)
	defer resp.Body.Close()
	var all bytes.Buffer
	fmt.Fprintln(&all, resp.Status)
	require.NoError(t, resp.Header.Write(&all))
	_, err = io.Copy(&all, resp.Body)
	require.NoError(t, err)
	return resp.StatusCode, all.String()
}

func TestRunServesAndShutsDown(t *testing.T) {
	addr, logs, stop := startRun(t, envOf())
	h := getJSON(t, "http://"+addr+"/healthz")
	assert.Equal(t, "ok", h["status"])
	assert.EqualValues(t, 5, h["k"])
	vars := getJSON(t, "http://"+addr+"/debug/vars")
	svc, ok := vars["service"].(map[string]any)
	require.True(t, ok, "the service counters")
	assert.Contains(t, svc, "rows_assigned")
	assert.NotContains(t, vars, "cmdline")
	assert.NotContains(t, vars, "memstats")

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
	addr, _, stop = startRun(t, envOf(), "-model", path)
	h2 := getJSON(t, "http://"+addr+"/healthz")
	assert.Equal(t, h["model"], h2["model"])
	require.NoError(t, stop())
}

// TestDefaultAddress: by default the service listens on loopback only.
func TestDefaultAddress(t *testing.T) {
	c, err := parseFlags(nil, io.Discard)
	require.NoError(t, err)
	assert.Equal(t, "127.0.0.1:8080", c.addr)
	host, _, err := net.SplitHostPort(c.addr)
	require.NoError(t, err)
	assert.True(t, net.ParseIP(host).IsLoopback())
	assert.Equal(t, serve.Limits{MaxBody: serve.DefaultMaxBody, MaxModelBytes: serve.DefaultMaxModelBytes, MaxModelValues: serve.DefaultMaxModelValues}, c.limits)
}

// TestSwapModes: without a token the service says at startup that swaps
// are disabled and refuses every PUT; with one (from the environment or a
// file) it says they are enabled, and where the token came from.
func TestSwapModes(t *testing.T) {
	modelDoc := func(t *testing.T, addr string) []byte {
		resp, err := http.Get("http://" + addr + "/v1/model")
		require.NoError(t, err)
		defer resp.Body.Close()
		b, err := io.ReadAll(resp.Body)
		require.NoError(t, err)
		return b
	}
	t.Run("no token", func(t *testing.T) {
		addr, logs, stop := startRun(t, envOf())
		status, body := request(t, "PUT", "http://"+addr+"/v1/model", "Bearer "+testToken, modelDoc(t, addr))
		assert.Equal(t, http.StatusForbidden, status, body)
		assert.Contains(t, body, "swaps are disabled")
		require.NoError(t, stop())
		assert.Contains(t, logs.String(), `"swaps":"disabled: no admin token, PUT /v1/model answers 403"`)
	})
	file := filepath.Join(t.TempDir(), "token")
	require.NoError(t, os.WriteFile(file, []byte(testToken+"\n"), 0o600))
	for _, c := range []struct {
		name, source string
		env          func(string) string
		args         []string
	}{
		{"environment", "$SERVICE_ADMIN_TOKEN", envOf(tokenEnv, testToken), nil},
		{"file", "file " + file, envOf(), []string{"-admin-token-file", file}},
	} {
		t.Run(c.name, func(t *testing.T) {
			addr, logs, stop := startRun(t, c.env, c.args...)
			doc := modelDoc(t, addr)
			status, body := request(t, "PUT", "http://"+addr+"/v1/model", "Bearer wrong", doc)
			assert.Equal(t, http.StatusUnauthorized, status, body)
			status, body = request(t, "PUT", "http://"+addr+"/v1/model", "Bearer "+testToken, doc)
			assert.Equal(t, http.StatusOK, status, body)
			require.NoError(t, stop())
			assert.Contains(t, logs.String(), `"swaps":"enabled: PUT /v1/model with the admin token from `+c.source+`"`)
			assert.NotContains(t, logs.String(), "beyond this machine")
		})
	}
}

// TestSecretNeverShown starts the service with an admin token, from the
// environment and from a file, calls every endpoint with right, wrong and
// no tokens, and looks for the token in every response and log line.
func TestSecretNeverShown(t *testing.T) {
	file := filepath.Join(t.TempDir(), "token")
	require.NoError(t, os.WriteFile(file, []byte("  "+testToken+"\r\n"), 0o644)) // readable by others: a warning
	for name, start := range map[string]func() (string, *syncBuffer, func() error){
		"environment": func() (string, *syncBuffer, func() error) { return startRun(t, envOf(tokenEnv, testToken)) },
		"file":        func() (string, *syncBuffer, func() error) { return startRun(t, envOf(), "-admin-token-file", file) },
	} {
		t.Run(name, func(t *testing.T) {
			addr, logs, stop := start()
			base := "http://" + addr
			_, doc := request(t, "GET", base+"/v1/model", "", nil)
			doc = doc[strings.Index(doc, "{"):]
			var seen strings.Builder
			for _, r := range []struct {
				method, path, auth string
				body               []byte
			}{
				{"GET", "/healthz", "", nil}, {"GET", "/debug/vars", "", nil}, {"GET", "/v1/drift", "", nil},
				{"GET", "/v1/model", "Bearer " + testToken, nil},
				{"POST", "/v1/assign", "", []byte(`{"rows":[{"x":1}]}`)},
				{"PUT", "/v1/model", "", []byte(doc)}, {"PUT", "/v1/model", "Bearer nope", []byte(doc)},
				{"PUT", "/v1/model", "Bearer " + testToken, []byte(`{"format":1}`)},
				{"PUT", "/v1/model", "Bearer " + testToken, []byte(doc)},
				{"GET", "/" + testToken, "", nil}, {"DELETE", "/v1/model", "Bearer " + testToken, nil},
				{"GET", "/debug/vars", "", nil},
			} {
				_, all := request(t, r.method, base+r.path, r.auth, r.body)
				if r.path != "/"+testToken { // a 404 may name the path the client chose
					seen.WriteString(all)
				}
			}
			require.NoError(t, stop())
			assert.NotContains(t, seen.String(), testToken)
			assert.NotContains(t, strings.ReplaceAll(logs.String(), `"path":"/`+testToken+`"`, ""), testToken)
			assert.Contains(t, logs.String(), `"msg":"model swapped"`)
			if name == "file" {
				assert.Contains(t, logs.String(), "can be read by other users")
			}
		})
	}
}

// TestShutdownWaitsForRequests starts a slow upload, cancels the run and
// checks that the request in flight still completes.
func TestShutdownWaitsForRequests(t *testing.T) {
	addr, _, stop := startRun(t, envOf())
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
	write := func(name, content string) string {
		p := filepath.Join(dir, name)
		require.NoError(t, os.WriteFile(p, []byte(content), 0o600))
		return p
	}
	bad := write("bad.json", `{"format":"centroid/kmeans-model","version":9}`)
	unnamed := write("unnamed.json", `{"format":"centroid/kmeans-model","version":1,"metric":"euclidean","k":2,"dim":1,"centers":[[0],[1]],"scaler":null}`)
	empty := write("empty-token", " \n")
	spaced := write("spaced-token", "two words\n")
	long := write("long-token", strings.Repeat("t", maxTokenFile+1))
	for _, c := range []struct {
		args []string
		env  func(string) string
		is   error
		says string
	}{
		{args: []string{"-nosuchflag"}},
		{args: []string{"-admin-token", testToken}, says: "flag provided but not defined"},
		{args: []string{"extra"}},
		{args: []string{"-model", filepath.Join(dir, "missing.json")}},
		{args: []string{"-model", bad}, is: kmeans.ErrModel},
		{args: []string{"-model", unnamed}, is: kmeans.ErrSchema, says: "no feature names"},
		{args: []string{"-max-rows", "-1"}, is: serve.ErrLimits},
		{args: []string{"-max-body", "-5"}, is: serve.ErrLimits},
		{args: []string{"-k", "0"}, is: kmeans.ErrK},
		{args: []string{"-addr", "127.0.0.1:-1"}},
		{args: []string{"-admin-token-file", filepath.Join(dir, "missing-token")}},
		{args: []string{"-admin-token-file", empty}, says: "empty"},
		{args: []string{"-admin-token-file", spaced}, says: "white space"},
		{args: []string{"-admin-token-file", long}, says: "longer than"},
		{args: []string{"-admin-token-file", write("token", testToken)}, env: envOf(tokenEnv, testToken), says: "given twice"},
	} {
		if c.env == nil {
			c.env = envOf()
		}
		var logs bytes.Buffer
		err := run(context.Background(), c.args, c.env, &logs, nil)
		require.Error(t, err, strings.Join(c.args, " "))
		if c.is != nil {
			require.ErrorIs(t, err, c.is, strings.Join(c.args, " "))
		}
		assert.Contains(t, err.Error()+logs.String(), c.says)
		assert.NotContains(t, err.Error()+logs.String(), testToken)
	}
}

func TestLoopback(t *testing.T) {
	for addr, want := range map[string]bool{"127.0.0.1:80": true, "[::1]:80": true, "127.8.9.10:1": true, "0.0.0.0:80": false, "[::]:80": false, "192.0.2.7:80": false} {
		a, err := net.ResolveTCPAddr("tcp", addr)
		require.NoError(t, err)
		assert.Equal(t, want, loopback(a), addr)
	}
}
