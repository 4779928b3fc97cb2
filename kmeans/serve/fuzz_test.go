package serve

import (
	"bytes"
	"encoding/json"
	"errors"
	"io"
	"math"
	"net/http"
	"runtime"
	"slices"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
)

// Budgets of one fuzz input: the request decoder may allocate at most
// fuzzAllocPerByte bytes per body byte plus fuzzAllocSlack (its error
// messages and a row buffer), and take at most fuzzTimeLimit, a bound far
// above the microseconds a body of the fuzzer's sizes takes; it is there
// to catch work that grows faster than the body.
const (
	fuzzAllocPerByte = 2
	fuzzAllocSlack   = 16 << 10
	fuzzTimeLimit    = 2 * time.Second
	fuzzMaxRows      = 50
)

// fuzzModels are the schemas the fuzzers decode against: the demo
// stations, and four short names, one of them not ASCII, one written with
// an escape and one that is also the name of the request's field.
func fuzzModels(t testing.TB) []*kmeans.Model {
	demo, _, _ := demoModel(t, false)
	short, err := v1Model(t, [][]float64{{0, 0, 0, 0}, {1, 2, 3, 4}, {-5, 0, 5, 1e6}}).WithFeatures([]string{"a", "é", `q"x`, "rows"})
	require.NoError(t, err)
	return []*kmeans.Model{demo, short}
}

// oracleRows decodes body as the request decoder must, written again with
// encoding/json (the Decoder's tokens, Record.UnmarshalJSON) and Vector:
// the rows in schema order, or false if the request must be refused.
func oracleRows(m *kmeans.Model, body []byte, maxRows int) ([][]float64, bool) {
	if !json.Valid(body) {
		return nil, false
	}
	dec := json.NewDecoder(bytes.NewReader(body))
	if tok, err := dec.Token(); err != nil || tok != json.Delim('{') {
		return nil, false
	}
	var rows [][]float64
	seen := false
	for dec.More() {
		if tok, err := dec.Token(); err != nil || tok != "rows" || seen {
			return nil, false
		}
		seen = true
		var raw []json.RawMessage
		if err := dec.Decode(&raw); err != nil || raw == nil || len(raw) > maxRows {
			return nil, false
		}
		for _, r := range raw {
			var rec Record
			if err := json.Unmarshal(r, &rec); err != nil {
				return nil, false
			}
			x, err := Vector(m, nil, rec)
			if err != nil {
				return nil, false
			}
			rows = append(rows, x)
		}
	}
	if _, err := dec.Token(); err != nil {
		return nil, false
	}
	if _, err := dec.Token(); err != io.EOF {
		return nil, false
	}
	return rows, seen
}

// measure runs f and returns the bytes it allocated (without a collection
// first, which would make each input cost milliseconds) and its duration.
func measure(f func()) (uint64, time.Duration) {
	var a, b runtime.MemStats
	runtime.ReadMemStats(&a)
	start := time.Now()
	f()
	elapsed := time.Since(start)
	runtime.ReadMemStats(&b)
	return b.TotalAlloc - a.TotalAlloc, elapsed
}

// FuzzDecodeAssign checks the request decoder against oracleRows: it
// never panics, accepts exactly what the oracle accepts with the same
// rows bit for bit (and then the body is valid JSON), refuses with a
// client error (4xx; 422 names a row, 413 none), and stays within the
// memory and time budgets above. Seeds: f.Add below and
// testdata/fuzz/FuzzDecodeAssign.
func FuzzDecodeAssign(f *testing.F) {
	f.Add([]byte(`{"rows":[{"trips_per_day":212,"weekend_share":0.19,"peak_hour_ratio":0.5,"mean_trip_minutes":11,"return_imbalance":3,"elevation_m":20}]}`))
	f.Add([]byte(`{"rows":[]}`))
	f.Add([]byte(`{"rows":[{"a":1,"a":2}]}`))
	f.Add([]byte(`{"rows":[{"a":1e999}]}`))
	f.Add([]byte(`{"rows":[null,{}]}`))
	f.Add([]byte(`{"rows":[{"a":"1"}],"x":1}`))
	f.Add([]byte(`{"rows":[{"\u00e9l\u00e9vation":-0.0}]} `))
	f.Add([]byte(`{"rows":[{"a":1,"é":-2.5e-3,"q\"x":0,"rows":7}, {"rows":1,"q\u0022x":2,"\u00e9":3,"a":4}]}`))
	f.Add([]byte(`{"\u0072ows":[{"a":0,"\u00e9":0,"q\"x":0,"rows":0}]}`))
	f.Add([]byte("{\"rows\":[{\"a\":1,\"\xff\":2}]}"))
	f.Add([]byte(`{"rows":[{"a":1,"\ud83d\udeb2":2,"\ud800":3}]}`))
	models := fuzzModels(f)
	schemas := make([]*schema, len(models))
	for i, m := range models {
		schemas[i] = newSchema(m.Features())
	}
	f.Fuzz(func(t *testing.T, body []byte) {
		for mi, m := range models {
			var n int
			var err error
			alloc, elapsed := measure(func() {
				n, err = decodeAssign(body, schemas[mi], fuzzMaxRows, func(int, []float64) error { return nil })
			})
			require.LessOrEqual(t, alloc, uint64(fuzzAllocPerByte*len(body)+fuzzAllocSlack), "%d bytes allocated for a body of %d", alloc, len(body))
			require.Less(t, elapsed, fuzzTimeLimit)

			want, ok := oracleRows(m, body, fuzzMaxRows)
			if err != nil {
				var re *requestError
				require.True(t, errors.As(err, &re), "%T %v", err, err)
				require.GreaterOrEqual(t, re.status, 400)
				require.Less(t, re.status, 500)
				switch re.status {
				case http.StatusUnprocessableEntity:
					require.GreaterOrEqual(t, re.row, 0)
				case http.StatusRequestEntityTooLarge:
					require.Equal(t, -1, re.row)
				}
				require.False(t, ok, "refused what encoding/json accepts: %v", err)
				continue
			}
			require.True(t, ok, "accepted what encoding/json refuses")
			require.True(t, json.Valid(body))
			require.Equal(t, len(want), n)
			var got [][]float64
			_, err = decodeAssign(body, schemas[mi], fuzzMaxRows, func(_ int, row []float64) error {
				got = append(got, slices.Clone(row))
				return nil
			})
			require.NoError(t, err)
			for i := range want {
				for j := range want[i] {
					require.Equal(t, math.Float64bits(want[i][j]), math.Float64bits(got[i][j]), "row %d column %d", i, j)
				}
			}
		}
	})
}

// FuzzRecord decodes a record with Record.UnmarshalJSON and checks that a
// record it accepts has distinct names and finite values, survives a round
// trip through MarshalJSON, and is labelled alike by AssignRecord,
// AssignMap and Model.Assign on Vector (or refused by all three), within
// the memory and time budgets of FuzzDecodeAssign.
func FuzzRecord(f *testing.F) {
	f.Add([]byte(`{"a":1,"é":2,"q\"x":3,"rows":4}`))
	f.Add([]byte(`{"rows":4,"a":1,"q\u0022x":3,"\u00e9":2}`))
	f.Add([]byte(`{"trips_per_day":212,"weekend_share":0.19,"peak_hour_ratio":0.5,"mean_trip_minutes":11,"return_imbalance":3,"elevation_m":20}`))
	f.Add([]byte(`{"a":1,"a":2}`))
	f.Add([]byte(`{"a":1e999}`))
	f.Add([]byte(`{"a":null}`))
	f.Add([]byte(`null`))
	models := fuzzModels(f)
	f.Fuzz(func(t *testing.T, doc []byte) {
		var r Record
		var err error
		alloc, elapsed := measure(func() { err = json.Unmarshal(doc, &r) })
		// encoding/json's decoder state and a Record of 32-byte fields:
		// a larger budget than the request decoder's.
		require.LessOrEqual(t, alloc, uint64(64*len(doc)+fuzzAllocSlack), "%d bytes allocated for %d", alloc, len(doc))
		require.Less(t, elapsed, fuzzTimeLimit)
		if err != nil {
			require.Nil(t, r)
			return
		}
		seen := map[string]bool{}
		fields := map[string]float64{}
		for _, fld := range r {
			require.False(t, seen[fld.Name], "repeated %q", fld.Name)
			seen[fld.Name] = true
			require.False(t, math.IsNaN(fld.Value) || math.IsInf(fld.Value, 0))
			fields[fld.Name] = fld.Value
		}
		b, err := json.Marshal(r)
		require.NoError(t, err)
		var back Record
		require.NoError(t, json.Unmarshal(b, &back), "%s", b)
		require.Equal(t, len(r), len(back))
		for i := range r {
			require.Equal(t, r[i].Name, back[i].Name)
			require.Equal(t, math.Float64bits(r[i].Value), math.Float64bits(back[i].Value))
		}
		for _, m := range models {
			byRecord, errRecord := AssignRecord(m, r)
			byMap, errMap := AssignMap(m, fields)
			x, errVector := Vector(m, nil, r)
			require.Equal(t, errRecord == nil, errVector == nil, "%v / %v", errRecord, errVector)
			if r != nil { // a nil record (null) is refused as empty by both
				require.Equal(t, errRecord == nil, errMap == nil, "%v / %v", errRecord, errMap)
			}
			if errRecord != nil {
				require.Equal(t, -1, byRecord.Cluster)
				continue
			}
			want, err := m.Assign(x)
			require.NoError(t, err)
			require.Equal(t, want, byRecord)
			require.Equal(t, want, byMap)
		}
	})
}

// TestDecodeAssignStations decodes real request bodies (the demo stations,
// compact and indented) against the oracle: a seed-independent check of
// the accepting path.
func TestDecodeAssignStations(t *testing.T) {
	m, _, _ := demoModel(t, false)
	sc := newSchema(m.Features())
	rows := stationRows(bikeshare.NewStations(40, 12))
	compact, err := json.Marshal(assignRequest{Rows: rows})
	require.NoError(t, err)
	indented, err := json.MarshalIndent(assignRequest{Rows: rows}, " ", "\t")
	require.NoError(t, err)
	for _, body := range [][]byte{compact, indented} {
		want, ok := oracleRows(m, body, 100)
		require.True(t, ok)
		var got [][]float64
		n, err := decodeAssign(body, sc, 100, func(_ int, row []float64) error {
			got = append(got, slices.Clone(row))
			return nil
		})
		require.NoError(t, err)
		require.Equal(t, 40, n)
		require.Equal(t, want, got)
		// Allocation-free per row: the same allocations for 40 rows as
		// for one.
		one, err := json.Marshal(assignRequest{Rows: rows[:1]})
		require.NoError(t, err)
		per := func(b []byte) float64 {
			return testing.AllocsPerRun(20, func() { decodeAssign(b, sc, 100, func(int, []float64) error { return nil }) })
		}
		require.Equal(t, per(one), per(body))
	}
}
