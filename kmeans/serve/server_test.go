package serve

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"log/slog"
	"math"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
	"github.com/centroidlab/centroid/scale"
)

// testLimits are small so that the size checks are cheap to reach.
var testLimits = Limits{MaxBody: 64 << 10, MaxRows: 200, MaxModelBytes: 64 << 10, MaxModelValues: 1000}

// testToken is the admin token of the tests that swap models.
const testToken = "tok-7d1f0c9e2b5a4368"

// startServer serves the demo model on a loopback listener.
func startServer(t testing.TB, opts *Options) (*Server, *httptest.Server) {
	m, _, _ := demoModel(t, false)
	srv, err := NewServer(m, opts)
	require.NoError(t, err)
	ts := httptest.NewServer(srv.Handler())
	t.Cleanup(ts.Close)
	return srv, ts
}

// assignRequest is the body of POST /v1/assign.
type assignRequest struct {
	Rows []Record `json:"rows"`
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
func stationRows(stations []bikeshare.Station) []Record {
	rows := make([]Record, len(stations))
	for i, s := range stations {
		rows[i] = stationRecord(s)
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

// checkAnswers compares a response with the in-process answers of m
// (Model.Assign on the row in schema order), bit for bit.
func checkAnswers(t testing.TB, m *kmeans.Model, rows []Record, body []byte) {
	var got assignResponse
	require.NoError(t, json.Unmarshal(body, &got), "%s", body)
	sum, err := m.Checksum()
	require.NoError(t, err)
	require.Equal(t, sum, got.Model)
	require.Len(t, got.Assignments, len(rows))
	for i, row := range rows {
		x := make([]float64, m.Dim())
		for _, f := range row {
			j, ok := m.Column(f.Name)
			require.True(t, ok)
			x[j] = f.Value
		}
		want, err := m.Assign(x)
		require.NoError(t, err)
		a := got.Assignments[i]
		require.Equal(t, want.Cluster, a.Cluster, "row %d", i)
		require.Equal(t, math.Float64bits(want.Distance), math.Float64bits(a.Distance), "row %d", i)
		require.NotNil(t, a.Margin)
		require.Equal(t, math.Float64bits(want.Margin), math.Float64bits(*a.Margin), "row %d", i)
	}
}

func TestAssignEndpoint(t *testing.T) {
	srv, ts := startServer(t, &Options{Limits: testLimits})
	rows := stationRows(bikeshare.NewStations(150, 3))
	body, err := json.Marshal(assignRequest{Rows: rows})
	require.NoError(t, err)
	resp, b := do(t, ts.Client(), "POST", ts.URL+"/v1/assign", "application/json; charset=utf-8", body)
	require.Equal(t, http.StatusOK, resp.StatusCode, "%s", b)
	assert.Equal(t, "application/json", resp.Header.Get("Content-Type"))
	checkAnswers(t, srv.Model(), rows, b)

	// Pretty-printed, fields in another order: the same answers.
	for i := range rows {
		for a, z := 0, len(rows[i])-1; a < z; a, z = a+1, z-1 {
			rows[i][a], rows[i][z] = rows[i][z], rows[i][a]
		}
	}
	body, err = json.MarshalIndent(assignRequest{Rows: rows}, "", "\t")
	require.NoError(t, err)
	resp, b = do(t, ts.Client(), "POST", ts.URL+"/v1/assign", "application/json", body)
	require.Equal(t, http.StatusOK, resp.StatusCode, "%s", b)
	checkAnswers(t, srv.Model(), rows, b)

	// An empty batch is answered with no assignments.
	resp, b = do(t, ts.Client(), "POST", ts.URL+"/v1/assign", "application/json", []byte(`{"rows":[]}`))
	require.Equal(t, http.StatusOK, resp.StatusCode)
	assert.JSONEq(t, fmt.Sprintf(`{"model":%q,"assignments":[]}`, srv.Served().Checksum), string(b))

	// The drift monitor saw the rows.
	resp, b = do(t, ts.Client(), "GET", ts.URL+"/v1/drift", "", nil)
	require.Equal(t, http.StatusOK, resp.StatusCode)
	var dr driftBody
	require.NoError(t, json.Unmarshal(b, &dr))
	assert.Equal(t, int64(300), dr.Rows)
	assert.Equal(t, srv.Served().Checksum, dr.Model)
	assert.Len(t, dr.Clusters, 5)
	assert.Equal(t, int64(300), srv.Stats().RowsAssigned)
}

// TestBadRequests sends malformed, mistyped, oversized and misrouted
// requests: each gets its 4xx status and a JSON error body, and the server
// keeps answering.
func TestBadRequests(t *testing.T) {
	srv, ts := startServer(t, &Options{Limits: testLimits})
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
	deep := `{"rows":[` + strings.Repeat("[", 100) + strings.Repeat("]", 100) + `]}`
	deeper := `{"rows":[` + strings.Repeat("[", 20000) + strings.Repeat("]", 20000) + `]}`
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
		{"rows twice", "POST", "/v1/assign", "application/json", `{"rows":[],"rows":[]}`, 400, "", ""},
		{"rows in capitals", "POST", "/v1/assign", "application/json", `{"Rows":[]}`, 400, "", ""},
		{"unknown top-level field", "POST", "/v1/assign", "application/json", `{"rows":[],"limit":3}`, 400, "", ""},
		{"trailing data", "POST", "/v1/assign", "application/json", `{"rows":[]} {}`, 400, "", ""},
		{"byte order mark", "POST", "/v1/assign", "application/json", "\ufeff{\"rows\":[]}", 400, "", ""},
		{"NaN literal", "POST", "/v1/assign", "application/json", `{"rows":[` + strings.Replace(goodRow, `"elevation_m":`, `"elevation_m":NaN,"x":`, 1) + `]}`, 400, "", ""},
		{"number out of range", "POST", "/v1/assign", "application/json", `{"rows":[` + strings.Replace(goodRow, `"elevation_m":`, `"elevation_m":1e999,"x":`, 1) + `]}`, 422, "elevation_m", FieldNotFinite},
		{"wrong field name", "POST", "/v1/assign", "application/json", `{"rows":[` + goodRow + `,` + row(func(f map[string]any) { f["elevation"] = f["elevation_m"]; delete(f, "elevation_m") }) + `]}`, 422, "elevation", FieldUnknown},
		{"missing field", "POST", "/v1/assign", "application/json", `{"rows":[` + row(func(f map[string]any) { delete(f, "weekend_share") }) + `]}`, 422, "weekend_share", FieldMissing},
		{"extra field", "POST", "/v1/assign", "application/json", `{"rows":[` + row(func(f map[string]any) { f["temperature"] = 21.5 }) + `]}`, 422, "temperature", FieldUnknown},
		{"repeated field", "POST", "/v1/assign", "application/json", `{"rows":[{"elevation_m":1,"elevation_m":2}]}`, 422, "elevation_m", FieldRepeated},
		{"string value", "POST", "/v1/assign", "application/json", `{"rows":[` + row(func(f map[string]any) { f["trips_per_day"] = "212" }) + `]}`, 422, "trips_per_day", FieldNotNumber},
		{"null value", "POST", "/v1/assign", "application/json", `{"rows":[` + row(func(f map[string]any) { f["trips_per_day"] = nil }) + `]}`, 422, "trips_per_day", FieldNotNumber},
		{"null row", "POST", "/v1/assign", "application/json", `{"rows":[null]}`, 422, "", ""},
		{"number row", "POST", "/v1/assign", "application/json", `{"rows":[0,0,0]}`, 422, "", ""},
		{"empty rows", "POST", "/v1/assign", "application/json", `{"rows":[{},{}]}`, 422, "trips_per_day", FieldMissing},
		{"nested arrays", "POST", "/v1/assign", "application/json", deep, 422, "", ""},
		{"deep nesting", "POST", "/v1/assign", "application/json", deeper, 422, "", ""},
		{"trailing comma", "POST", "/v1/assign", "application/json", `{"rows":[` + goodRow + `,]}`, 400, "", ""},
		{"leading zero", "POST", "/v1/assign", "application/json", `{"rows":[{"trips_per_day":012}]}`, 400, "", ""},
		{"bad escape", "POST", "/v1/assign", "application/json", `{"rows":[{"trips\x":1}]}`, 400, "", ""},
		{"control character", "POST", "/v1/assign", "application/json", "{\"rows\":[{\"trips\n\":1}]}", 400, "", ""},
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
			if c.status == 422 {
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
	assert.Equal(t, int64(12), srv.Stats().RowsRejected, "one per 422 case")
	snap := srv.Served().Drift.Snapshot()
	assert.Equal(t, int64(11), snap.Rejected)
	assert.Equal(t, int64(1), snap.NonFinite, "the 1e999 row")
	assert.Equal(t, int64(2), snap.Rows)
}

// otherModel fits a different model with the same schema.
func otherModel(t testing.TB) *kmeans.Model {
	_, x := bikeshare.Generate(500, 2)
	res, err := kmeans.Cluster(context.Background(), kmeans.Problem{Data: x, K: 7, Scaler: &scale.ZScore{}}, &kmeans.Settings{Seed: 2, Restarts: 2}, nil)
	require.NoError(t, err)
	m, err := res.Model.WithFeatures(bikeshare.Features())
	require.NoError(t, err)
	return m
}

func TestModelEndpoints(t *testing.T) {
	srv, ts := startServer(t, &Options{Limits: testLimits, AdminToken: testToken})
	auth := []string{"Authorization", "Bearer " + testToken}
	c := ts.Client()
	resp, b := do(t, c, "GET", ts.URL+"/v1/model", "", nil)
	require.Equal(t, http.StatusOK, resp.StatusCode)
	m, err := kmeans.ReadModel(bytes.NewReader(b), nil)
	require.NoError(t, err)
	first, err := m.Checksum()
	require.NoError(t, err)
	assert.Equal(t, `"`+first+`"`, resp.Header.Get("ETag"))
	assert.Equal(t, first, srv.Served().Checksum)

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
			resp, b := do(t, c, "PUT", ts.URL+"/v1/model", bc.ctype, bc.body, auth...)
			require.Equal(t, bc.status, resp.StatusCode, "%s", b)
			var e errorBody
			require.NoError(t, json.Unmarshal(b, &e))
			assert.NotEmpty(t, e.Error)
			// The old model keeps serving.
			assert.Equal(t, first, srv.Served().Checksum)
			resp, b = do(t, c, "GET", ts.URL+"/v1/model", "", nil)
			require.Equal(t, http.StatusOK, resp.StatusCode)
			assert.Equal(t, `"`+first+`"`, resp.Header.Get("ETag"))
			assert.Contains(t, string(b), first, "the document served is the old model's")
		})
	}

	resp, b = do(t, c, "PUT", ts.URL+"/v1/model", "application/json", doc, auth...)
	require.Equal(t, http.StatusOK, resp.StatusCode, "%s", b)
	nextSum, err := next.Checksum()
	require.NoError(t, err)
	var swapped map[string]any
	require.NoError(t, json.Unmarshal(b, &swapped))
	assert.Equal(t, nextSum, swapped["model"])
	assert.Equal(t, first, swapped["previous"])
	assert.EqualValues(t, 7, swapped["k"])

	// The new document is served, and rows get the new model's answers.
	resp, b = do(t, c, "GET", ts.URL+"/v1/model", "", nil)
	require.Equal(t, http.StatusOK, resp.StatusCode)
	assert.Equal(t, `"`+nextSum+`"`, resp.Header.Get("ETag"))
	assert.JSONEq(t, string(doc), string(b))
	rows := stationRows(bikeshare.NewStations(40, 8))
	body, err := json.Marshal(assignRequest{Rows: rows})
	require.NoError(t, err)
	resp, b = do(t, c, "POST", ts.URL+"/v1/assign", "application/json", body)
	require.Equal(t, http.StatusOK, resp.StatusCode)
	checkAnswers(t, next, rows, b)
	st := srv.Stats()
	assert.Equal(t, int64(1), st.Swaps)
	assert.Equal(t, int64(len(bad)), st.SwapsRefused)
	assert.True(t, st.SwapsEnabled)
}

// TestModelValuesLimit refuses a document with more center values than
// the limit, though it is small in bytes.
func TestModelValuesLimit(t *testing.T) {
	lim := testLimits
	lim.MaxModelValues = 40 // the demo model has 5·6 = 30, the other 7·6 = 42
	srv, ts := startServer(t, &Options{Limits: lim, AdminToken: testToken})
	doc, err := json.Marshal(otherModel(t))
	require.NoError(t, err)
	require.Less(t, len(doc), int(lim.MaxModelBytes))
	resp, b := do(t, ts.Client(), "PUT", ts.URL+"/v1/model", "application/json", doc, "Authorization", "Bearer "+testToken)
	require.Equal(t, http.StatusRequestEntityTooLarge, resp.StatusCode, "%s", b)
	assert.Contains(t, string(b), "40 values")
	assert.Equal(t, 5, srv.Model().K())
}

func TestAdminToken(t *testing.T) {
	srv, ts := startServer(t, &Options{Limits: testLimits, AdminToken: testToken})
	doc, err := json.Marshal(otherModel(t))
	require.NoError(t, err)
	for _, auth := range []string{"", "Bearer wrong", testToken, "Basic " + testToken, "Bearer " + testToken + "x", "Bearer " + testToken[:len(testToken)-1], "Bearer  " + testToken} {
		resp, b := do(t, ts.Client(), "PUT", ts.URL+"/v1/model", "application/json", doc, "Authorization", auth)
		require.Equal(t, http.StatusUnauthorized, resp.StatusCode, "%q: %s", auth, b)
		assert.NotEmpty(t, resp.Header.Get("WWW-Authenticate"))
		assert.Equal(t, 5, srv.Model().K())
	}
	// The scheme is case-insensitive (RFC 9110, section 11.1).
	resp, b := do(t, ts.Client(), "PUT", ts.URL+"/v1/model", "application/json", doc, "Authorization", "bearer "+testToken)
	require.Equal(t, http.StatusOK, resp.StatusCode, "%s", b)
	assert.Equal(t, 7, srv.Model().K())
}

// TestSwapsDisabledWithoutToken: with no admin token (the default) there
// is no way to change the model over HTTP.
func TestSwapsDisabledWithoutToken(t *testing.T) {
	srv, ts := startServer(t, nil)
	assert.False(t, srv.SwapsEnabled())
	first := srv.Served().Checksum
	doc, err := json.Marshal(otherModel(t))
	require.NoError(t, err)
	for _, auth := range []string{"", "Bearer ", "Bearer anything"} {
		resp, b := do(t, ts.Client(), "PUT", ts.URL+"/v1/model", "application/json", doc, "Authorization", auth)
		require.Equal(t, http.StatusForbidden, resp.StatusCode, "%s", b)
		assert.Equal(t, "application/json", resp.Header.Get("Content-Type"))
		var e errorBody
		require.NoError(t, json.Unmarshal(b, &e))
		assert.Contains(t, e.Error, "swaps are disabled")
	}
	assert.Equal(t, first, srv.Served().Checksum)
	assert.Zero(t, srv.Stats().Swaps)
	assert.False(t, srv.Stats().SwapsEnabled)
	resp, _ := do(t, ts.Client(), "DELETE", ts.URL+"/v1/model", "", nil)
	require.Equal(t, http.StatusMethodNotAllowed, resp.StatusCode)
	assert.Equal(t, "GET, HEAD", resp.Header.Get("Allow"))

	// The program itself can still swap.
	next := otherModel(t)
	prev, err := srv.Swap(next)
	require.NoError(t, err)
	assert.Equal(t, first, prev.Checksum)
	assert.Same(t, next, srv.Model())
	_, err = srv.Swap(v1Model(t, [][]float64{{0, 0, 0, 0, 0, 0}}))
	require.ErrorIs(t, err, kmeans.ErrSchema)
	assert.Equal(t, int64(1), srv.Stats().SwapsRefused)
}

func TestNewServerRefuses(t *testing.T) {
	m, _, _ := demoModel(t, false)
	plain, err := m.WithFeatures(nil)
	require.NoError(t, err)
	_, err = NewServer(plain, nil)
	require.ErrorIs(t, err, kmeans.ErrSchema)
	assert.Contains(t, err.Error(), "no feature names")
	_, err = NewServer(v1Model(t, [][]float64{{0}, {1}}), nil)
	require.ErrorIs(t, err, kmeans.ErrSchema)
	_, err = NewServer(nil, nil)
	require.ErrorIs(t, err, kmeans.ErrModel)
	_, err = NewServer(&kmeans.Model{}, nil)
	require.ErrorIs(t, err, kmeans.ErrModel)
	for _, lim := range []Limits{{MaxBody: -1}, {MaxRows: -1}, {MaxModelBytes: -1}, {MaxModelValues: -1},
		{MaxHeaderBytes: -1}, {ReadHeaderTimeout: -1}, {ReadTimeout: -1}, {WriteTimeout: -1}, {IdleTimeout: -1}} {
		_, err = NewServer(m, &Options{Limits: lim})
		require.ErrorIs(t, err, ErrLimits, "%+v", lim)
	}
}

func TestHealthAndNoDrift(t *testing.T) {
	// A version 1 model has no training summary, hence no drift monitor.
	m, err := v1Model(t, [][]float64{{0}, {1}}).WithFeatures([]string{"x"})
	require.NoError(t, err)
	srv, err := NewServer(m, &Options{Limits: testLimits})
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
	assert.Equal(t, []any{"x"}, h["features"])
	resp, b = do(t, ts.Client(), "POST", ts.URL+"/v1/assign", "application/json", []byte(`{"rows":[{"x":0.75}]}`))
	require.Equal(t, http.StatusOK, resp.StatusCode, "%s", b)
	checkAnswers(t, m, []Record{{{"x", 0.75}}}, b)
}

// TestDebugVars: the service's own counters and nothing of the process
// (expvar's defaults publish the command line and memory statistics).
func TestDebugVars(t *testing.T) {
	srv, ts := startServer(t, nil)
	do(t, ts.Client(), "GET", ts.URL+"/healthz", "", nil)
	resp, b := do(t, ts.Client(), "GET", ts.URL+"/debug/vars", "", nil)
	require.Equal(t, http.StatusOK, resp.StatusCode)
	var vars map[string]map[string]any
	require.NoError(t, json.Unmarshal(b, &vars), "%s", b)
	require.Len(t, vars, 1)
	svc := vars["service"]
	assert.Equal(t, srv.Served().Checksum, svc["model"])
	assert.EqualValues(t, 1, svc["requests"])
	assert.Equal(t, map[string]any{"200": 1.0}, svc["responses_by_status"])
	assert.NotContains(t, string(b), "cmdline")
	assert.NotContains(t, string(b), "memstats")
}

// TestSecretNeverShown exercises every endpoint of a server with an admin
// token, with right and wrong tokens, and looks for the token in every
// response (status line, headers, body) and every log line.
func TestSecretNeverShown(t *testing.T) {
	var logs bytes.Buffer
	log := slog.New(slog.NewJSONHandler(&logs, nil))
	srv, ts := startServer(t, &Options{Limits: testLimits, AdminToken: testToken, Logger: log})
	doc, err := json.Marshal(otherModel(t))
	require.NoError(t, err)
	rows, err := json.Marshal(assignRequest{Rows: stationRows(bikeshare.NewStations(3, 1))})
	require.NoError(t, err)
	var seen bytes.Buffer
	for _, r := range []struct {
		method, path string
		body         []byte
		auth         string
	}{
		{"GET", "/healthz", nil, ""}, {"GET", "/debug/vars", nil, ""}, {"GET", "/v1/model", nil, ""},
		{"GET", "/v1/drift", nil, ""}, {"POST", "/v1/assign", rows, ""}, {"POST", "/v1/assign", []byte(`{`), ""},
		{"PUT", "/v1/model", doc, ""}, {"PUT", "/v1/model", doc, "Bearer wrong"}, {"PUT", "/v1/model", []byte(`{}`), "Bearer " + testToken},
		{"PUT", "/v1/model", doc, "Bearer " + testToken}, {"GET", "/nowhere", nil, ""}, {"DELETE", "/v1/model", nil, ""},
		{"GET", "/debug/vars", nil, ""},
	} {
		resp, b := do(t, ts.Client(), r.method, ts.URL+r.path, "application/json", r.body, "Authorization", r.auth)
		fmt.Fprintln(&seen, resp.Status)
		require.NoError(t, resp.Header.Write(&seen))
		seen.Write(b)
	}
	assert.Equal(t, 7, srv.Model().K(), "the authorised swap happened")
	assert.NotContains(t, seen.String(), testToken)
	assert.NotContains(t, logs.String(), testToken)
	assert.Contains(t, logs.String(), `"msg":"model swapped"`)
}

func TestPanicBecomes500(t *testing.T) {
	srv, _ := startServer(t, nil)
	h := srv.middleware(http.HandlerFunc(func(http.ResponseWriter, *http.Request) { panic("boom") }))
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, httptest.NewRequest("GET", "/", nil))
	assert.Equal(t, http.StatusInternalServerError, rec.Code)
	assert.JSONEq(t, `{"error":"internal error"}`, rec.Body.String())
	assert.Equal(t, int64(1), srv.Stats().Responses["500"])
}

func TestWriteAssignments(t *testing.T) {
	rec := httptest.NewRecorder()
	writeAssignments(rec, "sha256:x", []kmeans.Assignment{{Cluster: 0, Distance: 0.1, Margin: math.Inf(1)}, {Cluster: 2, Distance: 3e-9, Margin: 0}})
	assert.JSONEq(t, `{"model":"sha256:x","assignments":[{"cluster":0,"distance":0.1,"margin":null},{"cluster":2,"distance":3e-9,"margin":0}]}`, rec.Body.String())

	// A response longer than the write buffer is written in pieces.
	as := make([]kmeans.Assignment, 2000)
	for i := range as {
		as[i] = kmeans.Assignment{Cluster: i % 7, Distance: float64(i) / 3, Margin: float64(i) / 7}
	}
	rec = httptest.NewRecorder()
	writeAssignments(rec, "m", as)
	var got struct {
		Model       string
		Assignments []kmeans.Assignment
	}
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &got))
	assert.Equal(t, as, got.Assignments)
}
