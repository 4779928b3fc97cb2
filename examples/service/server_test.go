package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"

	"github.com/centroidlab/centroid/kmeans/serve"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// testLimits are small so that the size checks are cheap to reach.
var testLimits = Limits{MaxBody: 64 << 10, MaxRows: 200, MaxModelBytes: 64 << 10, MaxModelValues: 1000}

// startServer serves the demo model on a loopback listener.
func startServer(t testing.TB, lim Limits, token string) (*Server, *httptest.Server) {
	m, err := demoModel(context.Background(), 1, 5)
	require.NoError(t, err)
	srv, err := NewServer(m, lim, token, nil)
	require.NoError(t, err)
	ts := httptest.NewServer(srv.Handler())
	t.Cleanup(ts.Close)
	return srv, ts
}

// assignResponse is the decoded /v1/assign response.
type assignResponse struct {
	Model       string `json:"model"`
	Assignments []struct {
		Cluster  int      `json:"cluster"`
		Distance float64  `json:"distance"`
		Margin   *float64 `json:"margin"`
	} `json:"assignments"`
}

// stationRows returns the stations as request rows.
func stationRows(stations []bikeshare.Station) []serve.Record {
	names := bikeshare.Features()
	rows := make([]serve.Record, len(stations))
	for i, s := range stations {
		rows[i] = make(serve.Record, len(names))
		for j, name := range names {
			rows[i][j] = serve.Field{Name: name, Value: s.Features[j]}
		}
	}
	return rows
}

func do(t testing.TB, c *http.Client, method, url, ctype string, body []byte, header ...string) (*http.Response, []byte) {
	req, err := http.NewRequest(method, url, bytes.NewReader(body))
	require.NoError(t, err)
	if ctype != "" {
		req.Header.Set("Content-Type", ctype)
	}
	for i := 0; i+1 < len(header); i += 2 {
		req.Header.Set(header[i], header[i+1])
	}
	resp, err := c.Do(req)
	require.NoError(t, err)
	defer resp.Body.Close()
	b, err := io.ReadAll(resp.Body)
	require.NoError(t, err)
	return resp, b
}

// checkAnswers compares a response with the in-process answers of m, bit
// for bit.
func checkAnswers(t testing.TB, m *kmeans.Model, rows []serve.Record, body []byte) {
	var got assignResponse
	require.NoError(t, json.Unmarshal(body, &got), "%s", body)
	sum, err := m.Checksum()
	require.NoError(t, err)
	require.Equal(t, sum, got.Model)
	require.Len(t, got.Assignments, len(rows))
	for i, row := range rows {
		want, err := serve.AssignRecord(m, row)
		require.NoError(t, err)
		a := got.Assignments[i]
		require.Equal(t, want.Cluster, a.Cluster, "row %d", i)
		require.Equal(t, math.Float64bits(want.Distance), math.Float64bits(a.Distance), "row %d", i)
		require.NotNil(t, a.Margin)
		require.Equal(t, math.Float64bits(want.Margin), math.Float64bits(*a.Margin), "row %d", i)
	}
}

func TestAssignEndpoint(t *testing.T) {
	srv, ts := startServer(t, testLimits, "")
	rows := stationRows(bikeshare.NewStations(150, 3))
	body, err := json.Marshal(assignRequest{Rows: rows})
	require.NoError(t, err)
	resp, b := do(t, ts.Client(), "POST", ts.URL+"/v1/assign", "application/json; charset=utf-8", body)
	require.Equal(t, http.StatusOK, resp.StatusCode, "%s", b)
	assert.Equal(t, "application/json", resp.Header.Get("Content-Type"))
	checkAnswers(t, srv.Model(), rows, b)

	// An empty batch is answered with no assignments.
	resp, b = do(t, ts.Client(), "POST", ts.URL+"/v1/assign", "application/json", []byte(`{"rows":[]}`))
	require.Equal(t, http.StatusOK, resp.StatusCode)
	assert.JSONEq(t, fmt.Sprintf(`{"model":%q,"assignments":[]}`, srv.holder.Load().Checksum), string(b))

	// The drift monitor saw the rows.
	resp, b = do(t, ts.Client(), "GET", ts.URL+"/v1/drift", "", nil)
	require.Equal(t, http.StatusOK, resp.StatusCode)
	var dr driftBody
	require.NoError(t, json.Unmarshal(b, &dr))
	assert.Equal(t, int64(150), dr.Rows)
	assert.Equal(t, srv.holder.Load().Checksum, dr.Model)
	assert.Len(t, dr.Clusters, 5)
	assert.Equal(t, int64(150), srv.rowsAssigned.Value())
}

// TestBadRequests sends malformed, mistyped, oversized and misrouted
// requests: each gets its 4xx status and a JSON error body, and the server
// keeps answering.
func TestBadRequests(t *testing.T) {
	srv, ts := startServer(t, testLimits, "")
	good := stationRows(bikeshare.NewStations(2, 3))
	row := func(edit func(map[string]any)) string {
		fields := map[string]any{}
		for _, f := range good[0] {
			fields[f.Name] = f.Value
		}
		edit(fields)
		b, err := json.Marshal(fields)
		require.NoError(t, err)
		return string(b)
	}
	goodRow := row(func(map[string]any) {})
	many := `{"rows":[` + strings.Repeat(goodRow+",", testLimits.MaxRows) + goodRow + `]}`
	huge := `{"rows":[` + strings.Repeat(" ", int(testLimits.MaxBody)) + `]}`
	cases := []struct {
		name, method, path, ctype, body string
		status                          int
		field, problem                  string
	}{
		{"malformed JSON", "POST", "/v1/assign", "application/json", `{"rows":[`, 400, "", ""},
		{"empty body", "POST", "/v1/assign", "application/json", ``, 400, "", ""},
		{"not an object", "POST", "/v1/assign", "application/json", `[]`, 400, "", ""},
		{"rows not an array", "POST", "/v1/assign", "application/json", `{"rows":{}}`, 400, "", ""},
		{"rows null", "POST", "/v1/assign", "application/json", `{"rows":null}`, 400, "", ""},
		{"no rows", "POST", "/v1/assign", "application/json", `{}`, 400, "", ""},
		{"unknown top-level field", "POST", "/v1/assign", "application/json", `{"rows":[],"limit":3}`, 400, "", ""},
		{"trailing data", "POST", "/v1/assign", "application/json", `{"rows":[]} {}`, 400, "", ""},
		{"NaN literal", "POST", "/v1/assign", "application/json", `{"rows":[` + strings.Replace(goodRow, `"elevation_m":`, `"elevation_m":NaN,"x":`, 1) + `]}`, 400, "", ""},
		{"number out of range", "POST", "/v1/assign", "application/json", `{"rows":[` + strings.Replace(goodRow, `"elevation_m":`, `"elevation_m":1e999,"x":`, 1) + `]}`, 422, "elevation_m", serve.FieldNotFinite},
		{"wrong field name", "POST", "/v1/assign", "application/json", `{"rows":[` + goodRow + `,` + row(func(f map[string]any) { f["elevation"] = f["elevation_m"]; delete(f, "elevation_m") }) + `]}`, 422, "elevation", serve.FieldUnknown},
		{"missing field", "POST", "/v1/assign", "application/json", `{"rows":[` + row(func(f map[string]any) { delete(f, "weekend_share") }) + `]}`, 422, "weekend_share", serve.FieldMissing},
		{"extra field", "POST", "/v1/assign", "application/json", `{"rows":[` + row(func(f map[string]any) { f["temperature"] = 21.5 }) + `]}`, 422, "temperature", serve.FieldUnknown},
		{"repeated field", "POST", "/v1/assign", "application/json", `{"rows":[{"elevation_m":1,"elevation_m":2}]}`, 422, "elevation_m", serve.FieldRepeated},
		{"string value", "POST", "/v1/assign", "application/json", `{"rows":[` + row(func(f map[string]any) { f["trips_per_day"] = "212" }) + `]}`, 422, "trips_per_day", serve.FieldNotNumber},
		{"null row", "POST", "/v1/assign", "application/json", `{"rows":[null]}`, 422, "", ""},
		{"too many rows", "POST", "/v1/assign", "application/json", many, 413, "", ""},
		{"oversized body", "POST", "/v1/assign", "application/json", huge, 413, "", ""},
		{"wrong content type", "POST", "/v1/assign", "text/plain", `{"rows":[]}`, 415, "", ""},
		{"no content type", "POST", "/v1/assign", "", `{"rows":[]}`, 415, "", ""},
		{"form content type", "POST", "/v1/assign", "application/x-www-form-urlencoded", `rows=1`, 415, "", ""},
		{"wrong method", "GET", "/v1/assign", "", ``, 405, "", ""},
		{"delete model", "DELETE", "/v1/model", "", ``, 405, "", ""},
		{"post drift", "POST", "/v1/drift", "application/json", `{}`, 405, "", ""},
		{"unknown path", "GET", "/v2/assign", "", ``, 404, "", ""},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			resp, b := do(t, ts.Client(), c.method, ts.URL+c.path, c.ctype, []byte(c.body))
			require.Equal(t, c.status, resp.StatusCode, "%s", b)
			assert.Equal(t, "application/json", resp.Header.Get("Content-Type"))
			var e errorBody
			require.NoError(t, json.Unmarshal(b, &e), "%s", b)
			assert.NotEmpty(t, e.Error)
			assert.Equal(t, c.field, e.Field, "%s", b)
			assert.Equal(t, c.problem, e.Problem)
			if c.field != "" {
				require.NotNil(t, e.Row)
			}
		})
	}
	// The server still answers, and counted the refused rows.
	body, err := json.Marshal(assignRequest{Rows: good})
	require.NoError(t, err)
	resp, b := do(t, ts.Client(), "POST", ts.URL+"/v1/assign", "application/json", body)
	require.Equal(t, http.StatusOK, resp.StatusCode)
	checkAnswers(t, srv.Model(), good, b)
	assert.Positive(t, srv.rowsRejected.Value())
	snap := srv.holder.Load().Drift.Snapshot()
	assert.Positive(t, snap.Rejected)
	assert.Equal(t, int64(1), snap.NonFinite, "the 1e999 row")
}

// otherModel fits a different model with the same schema.
func otherModel(t *testing.T) *kmeans.Model {
	m, err := demoModel(context.Background(), 2, 7)
	require.NoError(t, err)
	return m
}

func TestModelEndpoints(t *testing.T) {
	srv, ts := startServer(t, testLimits, "")
	c := ts.Client()
	resp, b := do(t, c, "GET", ts.URL+"/v1/model", "", nil)
	require.Equal(t, http.StatusOK, resp.StatusCode)
	m, err := kmeans.ReadModel(bytes.NewReader(b), nil)
	require.NoError(t, err)
	first, err := m.Checksum()
	require.NoError(t, err)
	assert.Equal(t, `"`+first+`"`, resp.Header.Get("ETag"))
	assert.Equal(t, first, srv.holder.Load().Checksum)

	next := otherModel(t)
	doc, err := json.Marshal(next)
	require.NoError(t, err)
	renamed, err := next.WithFeatures([]string{"a", "b", "c", "d", "e", "f"})
	require.NoError(t, err)
	renamedDoc, err := json.Marshal(renamed)
	require.NoError(t, err)
	var generic map[string]any
	require.NoError(t, json.Unmarshal(doc, &generic))
	generic["centers"].([]any)[0].([]any)[0] = 0.123
	tampered, err := json.Marshal(generic)
	require.NoError(t, err)
	v1, err := json.Marshal(map[string]any{"format": "centroid/kmeans-model", "version": 1, "metric": "euclidean", "k": 1, "dim": 6,
		"centers": [][]float64{{0, 0, 0, 0, 0, 0}}, "scaler": nil})
	require.NoError(t, err)

	bad := []struct {
		name   string
		ctype  string
		body   []byte
		status int
	}{
		{"garbage", "application/json", []byte(`{"format":`), 422},
		{"not a model", "application/json", []byte(`{"rows":[]}`), 422},
		{"tampered", "application/json", tampered, 422},
		{"other features", "application/json", renamedDoc, 409},
		{"no features (v1)", "application/json", v1, 409},
		{"too large", "application/json", append(doc, bytes.Repeat([]byte(" "), int(testLimits.MaxModelBytes))...), 413},
		{"wrong content type", "text/plain", doc, 415},
	}
	for _, bc := range bad {
		t.Run(bc.name, func(t *testing.T) {
			resp, b := do(t, c, "PUT", ts.URL+"/v1/model", bc.ctype, bc.body)
			require.Equal(t, bc.status, resp.StatusCode, "%s", b)
			var e errorBody
			require.NoError(t, json.Unmarshal(b, &e))
			assert.NotEmpty(t, e.Error)
			// The old model keeps serving.
			assert.Equal(t, first, srv.holder.Load().Checksum)
			resp, b = do(t, c, "GET", ts.URL+"/v1/model", "", nil)
			require.Equal(t, http.StatusOK, resp.StatusCode)
			assert.Equal(t, `"`+first+`"`, resp.Header.Get("ETag"))
			assert.Contains(t, string(b), first, "the document served is the old model's")
		})
	}

	resp, b = do(t, c, "PUT", ts.URL+"/v1/model", "application/json", doc)
	require.Equal(t, http.StatusOK, resp.StatusCode, "%s", b)
	nextSum, err := next.Checksum()
	require.NoError(t, err)
	var swapped map[string]any
	require.NoError(t, json.Unmarshal(b, &swapped))
	assert.Equal(t, nextSum, swapped["model"])
	assert.Equal(t, first, swapped["previous"])
	assert.EqualValues(t, 7, swapped["k"])

	rows := stationRows(bikeshare.NewStations(40, 8))
	body, err := json.Marshal(assignRequest{Rows: rows})
	require.NoError(t, err)
	resp, b = do(t, c, "POST", ts.URL+"/v1/assign", "application/json", body)
	require.Equal(t, http.StatusOK, resp.StatusCode)
	checkAnswers(t, next, rows, b)
	assert.Equal(t, int64(1), srv.swaps.Value())
	assert.Equal(t, int64(len(bad)), srv.swapsRefused.Value())
}

func TestAdminToken(t *testing.T) {
	_, ts := startServer(t, testLimits, "s3cret")
	doc, err := json.Marshal(otherModel(t))
	require.NoError(t, err)
	for _, auth := range []string{"", "Bearer wrong", "s3cret", "Basic s3cret"} {
		resp, b := do(t, ts.Client(), "PUT", ts.URL+"/v1/model", "application/json", doc, "Authorization", auth)
		require.Equal(t, http.StatusUnauthorized, resp.StatusCode, "%q: %s", auth, b)
		assert.NotEmpty(t, resp.Header.Get("WWW-Authenticate"))
	}
	resp, b := do(t, ts.Client(), "PUT", ts.URL+"/v1/model", "application/json", doc, "Authorization", "Bearer s3cret")
	require.Equal(t, http.StatusOK, resp.StatusCode, "%s", b)
}

func TestHealthAndNoDrift(t *testing.T) {
	// A version 1 model has no training summary, hence no drift monitor.
	v1 := []byte(`{"format":"centroid/kmeans-model","version":1,"metric":"euclidean","k":2,"dim":1,"centers":[[0],[1]],"scaler":null}`)
	m, err := kmeans.ReadModel(bytes.NewReader(v1), nil)
	require.NoError(t, err)
	srv, err := NewServer(m, testLimits, "", nil)
	require.NoError(t, err)
	ts := httptest.NewServer(srv.Handler())
	defer ts.Close()
	resp, b := do(t, ts.Client(), "GET", ts.URL+"/v1/drift", "", nil)
	require.Equal(t, http.StatusNotFound, resp.StatusCode, "%s", b)
	resp, b = do(t, ts.Client(), "GET", ts.URL+"/healthz", "", nil)
	require.Equal(t, http.StatusOK, resp.StatusCode)
	var h map[string]any
	require.NoError(t, json.Unmarshal(b, &h))
	assert.Equal(t, "ok", h["status"])
	assert.EqualValues(t, 2, h["k"])
	// Without feature names, rows by name are refused.
	resp, b = do(t, ts.Client(), "POST", ts.URL+"/v1/assign", "application/json", []byte(`{"rows":[{"x":1}]}`))
	require.Equal(t, http.StatusUnprocessableEntity, resp.StatusCode, "%s", b)

	_, err = NewServer(&kmeans.Model{}, testLimits, "", nil)
	require.ErrorIs(t, err, kmeans.ErrModel)
}

func TestPanicBecomes500(t *testing.T) {
	srv, _ := startServer(t, testLimits, "")
	h := srv.middleware(http.HandlerFunc(func(http.ResponseWriter, *http.Request) { panic("boom") }))
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, httptest.NewRequest("GET", "/", nil))
	assert.Equal(t, http.StatusInternalServerError, rec.Code)
	assert.JSONEq(t, `{"error":"internal error"}`, rec.Body.String())
}

func TestEncodeAssignments(t *testing.T) {
	b := encodeAssignments("sha256:x", []kmeans.Assignment{{Cluster: 0, Distance: 0.1, Margin: math.Inf(1)}, {Cluster: 2, Distance: 3e-9, Margin: 0}})
	assert.JSONEq(t, `{"model":"sha256:x","assignments":[{"cluster":0,"distance":0.1,"margin":null},{"cluster":2,"distance":3e-9,"margin":0}]}`, string(b))
}
