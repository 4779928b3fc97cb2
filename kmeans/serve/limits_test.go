package serve

import (
	"bufio"
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/http/httptest"
	"runtime"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
)

// minimalRow is the shortest row the demo schema accepts, every feature 0,
// as encoding/json writes it.
func minimalRow(t testing.TB, names []string) string {
	fields := make(Record, len(names))
	for j, name := range names {
		fields[j] = Field{name, 0}
	}
	b, err := json.Marshal(fields)
	require.NoError(t, err)
	return string(b)
}

// rowsBody is {"rows":[row,row,...]} with n rows.
func rowsBody(row string, n int) []byte {
	var b bytes.Buffer
	b.WriteString(`{"rows":[`)
	for i := range n {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteString(row)
	}
	b.WriteString(`]}`)
	return b.Bytes()
}

func TestLimitDefaults(t *testing.T) {
	srv, _ := startServer(t, nil)
	lim := srv.Limits()
	assert.Equal(t, int64(DefaultMaxBody), lim.MaxBody)
	assert.Equal(t, int64(1<<20), lim.MaxBody)
	assert.Equal(t, int64(DefaultMaxModelBytes), lim.MaxModelBytes)
	assert.Equal(t, DefaultMaxModelValues, lim.MaxModelValues)
	assert.Equal(t, DefaultMaxHeaderBytes, lim.MaxHeaderBytes)
	assert.Equal(t, DefaultReadHeaderTimeout, lim.ReadHeaderTimeout)
	assert.Equal(t, DefaultReadTimeout, lim.ReadTimeout)
	assert.Equal(t, DefaultWriteTimeout, lim.WriteTimeout)
	assert.Equal(t, DefaultIdleTimeout, lim.IdleTimeout)

	// The row rule: (MaxBody − len(`{"rows":[]}`)) / max(RowBytes,
	// shortest + 1), the shortest demo row measured here with
	// encoding/json (116 bytes, under RowBytes).
	short := len(minimalRow(t, bikeshare.Features()))
	assert.Equal(t, short, shortestRow(bikeshare.Features()))
	assert.Equal(t, 116, short)
	assert.Equal(t, (1<<20-11)/128, lim.MaxRows)
	assert.Equal(t, 8191, lim.MaxRows)

	hs := srv.HTTPServer()
	assert.Equal(t, DefaultMaxHeaderBytes, hs.MaxHeaderBytes)
	assert.Equal(t, DefaultReadHeaderTimeout, hs.ReadHeaderTimeout)
	assert.Equal(t, DefaultReadTimeout, hs.ReadTimeout)
	assert.Equal(t, DefaultWriteTimeout, hs.WriteTimeout)
	assert.Equal(t, DefaultIdleTimeout, hs.IdleTimeout)
	assert.NotNil(t, hs.Handler)

	// Explicit limits are kept as given.
	custom := Limits{MaxBody: 5000, MaxRows: 7, MaxModelBytes: 6000, MaxModelValues: 50, MaxHeaderBytes: 3000,
		ReadHeaderTimeout: time.Second, ReadTimeout: 2 * time.Second, WriteTimeout: 3 * time.Second, IdleTimeout: 4 * time.Second}
	srv, _ = startServer(t, &Options{Limits: custom})
	assert.Equal(t, custom, srv.Limits())
	hs = srv.HTTPServer()
	assert.Equal(t, 3*time.Second, hs.WriteTimeout)
}

// TestRowLimitDerived checks the rule for long rows: a schema whose
// shortest row is longer than RowBytes gets as many rows as fit.
func TestRowLimitDerived(t *testing.T) {
	names := make([]string, 12)
	for j := range names {
		names[j] = fmt.Sprintf("feature_with_a_long_name_%02d", j)
	}
	centers := [][]float64{make([]float64, 12), make([]float64, 12)}
	centers[1][0] = 1
	m, err := v1Model(t, centers).WithFeatures(names)
	require.NoError(t, err)
	row := minimalRow(t, names)
	require.Greater(t, len(row), RowBytes)
	srv, err := NewServer(m, &Options{Limits: Limits{MaxBody: 64 << 10}})
	require.NoError(t, err)
	n := srv.Limits().MaxRows
	assert.Equal(t, (64<<10-11)/(len(row)+1), n)
	h := srv.Handler()
	// n minimal rows fit the body limit and are answered; n+1 do not fit.
	body := rowsBody(row, n)
	require.LessOrEqual(t, len(body), 64<<10)
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, jsonRequest("POST", "/v1/assign", body))
	require.Equal(t, http.StatusOK, rec.Code, "%.200s", rec.Body)
	require.Greater(t, len(rowsBody(row, n+1)), 64<<10)
}

func jsonRequest(method, path string, body []byte) *http.Request {
	r := httptest.NewRequest(method, path, bytes.NewReader(body))
	r.Header.Set("Content-Type", "application/json")
	return r
}

// TestDefaultRowAndBodyLimits: under the default limits, the row limit is
// reached by a body under the body limit, and the body limit by one byte.
func TestDefaultRowAndBodyLimits(t *testing.T) {
	srv, _ := startServer(t, nil)
	h := srv.Handler()
	row := minimalRow(t, bikeshare.Features())
	lim := srv.Limits()

	full := rowsBody(row, lim.MaxRows)
	over := rowsBody(row, lim.MaxRows+1)
	require.Less(t, int64(len(over)), lim.MaxBody, "one row more than the limit still fits the body")
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, jsonRequest("POST", "/v1/assign", full))
	require.Equal(t, http.StatusOK, rec.Code, "%.300s", rec.Body)
	var got assignResponse
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &got))
	assert.Len(t, got.Assignments, lim.MaxRows)

	rec = httptest.NewRecorder()
	h.ServeHTTP(rec, jsonRequest("POST", "/v1/assign", over))
	require.Equal(t, http.StatusRequestEntityTooLarge, rec.Code)
	assert.Contains(t, rec.Body.String(), fmt.Sprintf("at most %d per request", lim.MaxRows))

	// The body limit: MaxBody bytes pass, one more is refused, declared
	// or not.
	pad := func(n int64) []byte {
		b := []byte(`{"rows":[]`)
		b = append(b, bytes.Repeat([]byte(" "), int(n)-len(b)-1)...)
		return append(b, '}')
	}
	for _, c := range []struct {
		n       int64
		chunked bool
		status  int
	}{{lim.MaxBody, false, 200}, {lim.MaxBody + 1, false, 413}, {lim.MaxBody, true, 200}, {lim.MaxBody + 1, true, 413}} {
		r := jsonRequest("POST", "/v1/assign", nil)
		r.Body = io.NopCloser(bytes.NewReader(pad(c.n)))
		r.ContentLength = c.n
		if c.chunked {
			r.ContentLength = -1
		}
		rec := httptest.NewRecorder()
		h.ServeHTTP(rec, r)
		assert.Equal(t, c.status, rec.Code, "%d bytes, chunked %v: %s", c.n, c.chunked, rec.Body)
	}
}

// discard is a ResponseWriter that keeps nothing, so that measuring a
// handler's allocations does not count a recorder's buffer.
type discard struct {
	h      http.Header
	status int
}

func (d *discard) Header() http.Header {
	if d.h == nil {
		d.h = http.Header{}
	}
	return d.h
}
func (d *discard) WriteHeader(code int) {
	if d.status == 0 {
		d.status = code
	}
}
func (d *discard) Write(b []byte) (int, error) {
	d.WriteHeader(http.StatusOK)
	return len(b), nil
}

// allocated returns the bytes allocated on the heap while f runs
// (runtime.MemStats.TotalAlloc: every allocation counts, garbage too, so it
// bounds what f can hold at once).
func allocated(f func()) uint64 {
	var a, b runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&a)
	f()
	runtime.ReadMemStats(&b)
	return b.TotalAlloc - a.TotalAlloc
}

// hostileBodies are requests of about limit bytes built to make a decoder
// hold much more than the body: the finding of the security review was
// {"rows":[0,0,…]}, whose rows were all kept before the row limit applied.
func hostileBodies(t testing.TB, limit int64) map[string][]byte {
	fill := func(prefix, unit, suffix string) []byte {
		n := (int(limit) - len(prefix) - len(suffix)) / len(unit)
		return []byte(prefix + strings.TrimSuffix(strings.Repeat(unit, n), ",") + suffix)
	}
	row := minimalRow(t, bikeshare.Features())
	return map[string][]byte{
		"zeros":            fill(`{"rows":[`, `0,`, `]}`),
		"empty objects":    fill(`{"rows":[`, `{},`, `]}`),
		"empty arrays":     fill(`{"rows":[`, `[],`, `]}`),
		"minimal rows":     fill(`{"rows":[`, row+",", `]}`),
		"nesting":          fill(`{"rows":[`, `[`, `]}`),
		"deep objects":     fill(`{"rows":[`, `{"a":`, `]}`),
		"long field name":  fill(`{"rows":[{"`, `a`, `":0}]}`),
		"long key":         fill(`{"`, `r`, `":[]}`),
		"long number":      fill(`{"rows":[{"trips_per_day":1.`, `0`, `1}]}`),
		"white space":      fill(`{"rows":[`, ` `, `]}`),
		"repeated field":   fill(`{"rows":[{`, `"elevation_m":1,`, `}]}`),
		"strings in a row": fill(`{"rows":[`, `"x",`, `]}`),
	}
}

// TestHostileRequestMemory measures the heap allocated while answering
// each hostile body (the whole request: reading, decoding, labelling,
// responding), declared with a Content-Length and sent chunked, and holds
// it under 4 × MaxBody, the promise of Limits.
func TestHostileRequestMemory(t *testing.T) {
	srv, _ := startServer(t, nil)
	h := srv.Handler()
	limit := srv.Limits().MaxBody
	for name, body := range hostileBodies(t, limit) {
		require.LessOrEqual(t, int64(len(body)), limit, name)
		for _, chunked := range []bool{false, true} {
			r := jsonRequest("POST", "/v1/assign", nil)
			r.ContentLength = int64(len(body))
			if chunked {
				r.ContentLength = -1
			}
			w := &discard{}
			n := allocated(func() {
				r.Body = io.NopCloser(bytes.NewReader(body))
				h.ServeHTTP(w, r)
			})
			assert.Less(t, w.status, 500, name)
			assert.Less(t, n, uint64(4*limit), "%s (chunked %v): %d bytes allocated for a body of %d", name, chunked, n, len(body))
			t.Logf("%-16s chunked %-5v status %d: %7d bytes allocated, %.2f × the body", name, chunked, w.status, n, float64(n)/float64(len(body)))
		}
	}
}

// TestLongNamesTruncated: a refused name is echoed at most
// kmeans.MaxFeatureName bytes long.
func TestLongNamesTruncated(t *testing.T) {
	srv, _ := startServer(t, &Options{Limits: testLimits})
	h := srv.Handler()
	for _, body := range []string{
		`{"rows":[{"` + strings.Repeat("é", 5000) + `":0}]}`,
		`{"` + strings.Repeat("é", 5000) + `":[]}`,
	} {
		rec := httptest.NewRecorder()
		h.ServeHTTP(rec, jsonRequest("POST", "/v1/assign", []byte(body)))
		assert.Less(t, rec.Body.Len(), 3*kmeans.MaxFeatureName, "%.100s", rec.Body)
		var e errorBody
		require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &e))
		assert.True(t, strings.HasSuffix(e.Error, `…"`) || strings.HasSuffix(e.Field, "…"), e.Error)
	}
}

// bigModel is a model of k·d = 2048·64 values (a document of about
// 2.5 MB), with feature names.
func bigModel(t testing.TB) *kmeans.Model {
	const k, d = 2048, 64
	centers := make([][]float64, k)
	for j := range centers {
		centers[j] = make([]float64, d)
		for i := range centers[j] {
			centers[j][i] = float64(j) + float64(i)/3
		}
	}
	names := make([]string, d)
	for i := range names {
		names[i] = fmt.Sprintf("f%02d", i)
	}
	m, err := v1Model(t, centers).WithFeatures(names)
	require.NoError(t, err)
	return m
}

// TestModelDocumentCached: GET /v1/model encodes the document once per
// installed model; 16 concurrent GETs of a 2.5 MB document allocate less
// than a tenth of one document (one encoding alone allocates several).
func TestModelDocumentCached(t *testing.T) {
	m := bigModel(t)
	srv, err := NewServer(m, nil)
	require.NoError(t, err)
	h := srv.Handler()
	want, err := json.Marshal(m)
	require.NoError(t, err)
	first := httptest.NewRecorder()
	encode := allocated(func() { h.ServeHTTP(first, httptest.NewRequest("GET", "/v1/model", nil)) })
	require.Equal(t, http.StatusOK, first.Code)
	assert.Equal(t, string(want)+"\n", first.Body.String())
	assert.Greater(t, encode, uint64(len(want)))

	var wg sync.WaitGroup
	ws := make([]*discard, 16)
	n := allocated(func() {
		for i := range ws {
			ws[i] = &discard{}
			wg.Go(func() { h.ServeHTTP(ws[i], httptest.NewRequest("GET", "/v1/model", nil)) })
		}
		wg.Wait()
	})
	for _, w := range ws {
		assert.Equal(t, http.StatusOK, w.status)
	}
	assert.Less(t, n, uint64(len(want)/10), "16 GETs allocated %d bytes; the document has %d", n, len(want))
	t.Logf("document %d bytes; first GET allocated %d bytes, 16 more GETs %d", len(want), encode, n)
}

func TestModelNotModified(t *testing.T) {
	srv, ts := startServer(t, &Options{AdminToken: testToken})
	etag := `"` + srv.Served().Checksum + `"`
	c := ts.Client()
	for _, c2 := range []struct {
		inm    string
		status int
	}{
		{etag, 304}, {"W/" + etag, 304}, {`"sha256:other", ` + etag, 304}, {"*", 304},
		{`"sha256:other"`, 200}, {"", 200}, {strings.Trim(etag, `"`), 200},
	} {
		resp, b := do(t, c, "GET", ts.URL+"/v1/model", "", nil, "If-None-Match", c2.inm)
		require.Equal(t, c2.status, resp.StatusCode, "If-None-Match %q", c2.inm)
		assert.Equal(t, etag, resp.Header.Get("ETag"))
		if c2.status == 304 {
			assert.Empty(t, b)
		} else {
			doc, err := srv.Served().Document()
			require.NoError(t, err)
			assert.Equal(t, string(doc)+"\n", string(b))
		}
	}
	// HEAD: the headers of a GET, no body.
	resp, b := do(t, c, "HEAD", ts.URL+"/v1/model", "", nil)
	require.Equal(t, http.StatusOK, resp.StatusCode)
	assert.Empty(t, b)
	doc, err := srv.Served().Document()
	require.NoError(t, err)
	assert.Equal(t, int64(len(doc)+1), resp.ContentLength)

	// After a swap the old ETag no longer matches.
	next := otherModel(t)
	_, err = srv.Swap(next)
	require.NoError(t, err)
	resp, b = do(t, c, "GET", ts.URL+"/v1/model", "", nil, "If-None-Match", etag)
	require.Equal(t, http.StatusOK, resp.StatusCode)
	sum, err := next.Checksum()
	require.NoError(t, err)
	assert.Equal(t, `"`+sum+`"`, resp.Header.Get("ETag"))
	assert.Contains(t, string(b), sum)
}

// startHTTP serves srv through its HTTPServer on a loopback listener and
// returns the address.
func startHTTP(t testing.TB, srv *Server) string {
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	hs := srv.HTTPServer()
	go hs.Serve(ln)
	t.Cleanup(func() { hs.Close() })
	return ln.Addr().String()
}

func TestHeaderLimit(t *testing.T) {
	srv, _ := startServer(t, nil)
	addr := startHTTP(t, srv)
	for _, c := range []struct {
		pad    int
		status int
	}{{32 << 10, 200}, {2 * DefaultMaxHeaderBytes, http.StatusRequestHeaderFieldsTooLarge}} {
		req, err := http.NewRequest("GET", "http://"+addr+"/healthz", nil)
		require.NoError(t, err)
		req.Header.Set("X-Pad", strings.Repeat("p", c.pad))
		resp, err := http.DefaultClient.Do(req)
		require.NoError(t, err)
		resp.Body.Close()
		assert.Equal(t, c.status, resp.StatusCode, "%d bytes of header", c.pad)
	}
}

// dialRaw opens a connection to addr; reads on it give up after 20 s, far
// beyond the server timeouts under test.
func dialRaw(t *testing.T, addr string) net.Conn {
	c, err := net.Dial("tcp", addr)
	require.NoError(t, err)
	t.Cleanup(func() { c.Close() })
	require.NoError(t, c.SetReadDeadline(time.Now().Add(20*time.Second)))
	return c
}

// closedByServer reports whether the server closed c (EOF or reset), as
// opposed to the client's own read deadline passing.
func closedByServer(t *testing.T, c net.Conn) {
	_, err := io.ReadAll(c)
	if ne, ok := err.(net.Error); ok && ne.Timeout() {
		t.Fatal("the server kept the connection open")
	}
}

func TestTimeouts(t *testing.T) {
	lim := Limits{ReadHeaderTimeout: 200 * time.Millisecond, ReadTimeout: 400 * time.Millisecond, IdleTimeout: 200 * time.Millisecond}
	srv, _ := startServer(t, &Options{Limits: lim})
	addr := startHTTP(t, srv)

	t.Run("headers", func(t *testing.T) {
		c := dialRaw(t, addr)
		_, err := io.WriteString(c, "GET /healthz HTTP/1.1\r\nHost: x\r\n")
		require.NoError(t, err)
		closedByServer(t, c)
	})
	t.Run("body", func(t *testing.T) {
		c := dialRaw(t, addr)
		_, err := io.WriteString(c, "POST /v1/assign HTTP/1.1\r\nHost: x\r\nContent-Type: application/json\r\nContent-Length: 1000\r\n\r\n{\"rows\":[")
		require.NoError(t, err)
		resp, err := http.ReadResponse(bufio.NewReader(c), nil)
		require.NoError(t, err)
		defer resp.Body.Close()
		assert.Equal(t, http.StatusRequestTimeout, resp.StatusCode)
		var e errorBody
		require.NoError(t, json.NewDecoder(resp.Body).Decode(&e))
		assert.Contains(t, e.Error, "in time")
	})
	t.Run("idle", func(t *testing.T) {
		c := dialRaw(t, addr)
		_, err := io.WriteString(c, "GET /healthz HTTP/1.1\r\nHost: x\r\n\r\n")
		require.NoError(t, err)
		br := bufio.NewReader(c)
		resp, err := http.ReadResponse(br, nil)
		require.NoError(t, err)
		_, err = io.Copy(io.Discard, resp.Body)
		require.NoError(t, err)
		resp.Body.Close()
		require.Equal(t, http.StatusOK, resp.StatusCode)
		closedByServer(t, c)
	})
}
