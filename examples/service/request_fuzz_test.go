package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"net/http"
	"testing"

	"github.com/stretchr/testify/require"
)

// FuzzDecodeAssign checks that the request decoder never panics, that
// every refusal is a client error (4xx), and that what it accepts holds
// only finite values under distinct names and survives a round trip.
// Seeds: f.Add below and testdata/fuzz/FuzzDecodeAssign.
func FuzzDecodeAssign(f *testing.F) {
	f.Add([]byte(`{"rows":[{"trips_per_day":212,"weekend_share":0.19,"peak_hour_ratio":0.5,"mean_trip_minutes":11,"return_imbalance":3,"elevation_m":20}]}`))
	f.Add([]byte(`{"rows":[]}`))
	f.Add([]byte(`{"rows":[{"a":1,"a":2}]}`))
	f.Add([]byte(`{"rows":[{"a":1e999}]}`))
	f.Add([]byte(`{"rows":[null,{}]}`))
	f.Add([]byte(`{"rows":[{"a":"1"}],"x":1}`))
	f.Add([]byte(`{"rows":[{"\u00e9l\u00e9vation":-0.0}]} `))
	const maxRows = 50
	f.Fuzz(func(t *testing.T, body []byte) {
		rows, err := decodeAssign(bytes.NewReader(body), maxRows)
		if err != nil {
			var re *requestError
			require.True(t, errors.As(err, &re), "%T %v", err, err)
			require.GreaterOrEqual(t, re.status, 400)
			require.Less(t, re.status, 500)
			if re.status == http.StatusUnprocessableEntity {
				require.GreaterOrEqual(t, re.row, 0)
			}
			return
		}
		require.LessOrEqual(t, len(rows), maxRows)
		for _, r := range rows {
			seen := map[string]bool{}
			for _, fld := range r {
				require.False(t, seen[fld.Name], "repeated %q", fld.Name)
				seen[fld.Name] = true
				require.False(t, math.IsNaN(fld.Value) || math.IsInf(fld.Value, 0))
			}
		}
		again, err := json.Marshal(assignRequest{Rows: rows})
		require.NoError(t, err)
		back, err := decodeAssign(bytes.NewReader(again), maxRows)
		require.NoError(t, err, "%s", again)
		require.Equal(t, len(rows), len(back))
		for i := range rows {
			require.Equal(t, len(rows[i]), len(back[i]))
			for j := range rows[i] {
				require.Equal(t, rows[i][j].Name, back[i][j].Name)
				require.Equal(t, math.Float64bits(rows[i][j].Value), math.Float64bits(back[i][j].Value))
			}
		}
	})
}
