package serve

import (
	"encoding/json"
	"errors"
	"math"
	"net/http"
	"net/http/httptest"
	"strconv"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
)

// TestFiniteness: every serving call refuses what Model.Assign refuses —
// non-finite values, values that become infinite after scaling, rows whose
// distances overflow — with an error wrapping kmeans.ErrNotFinite, and no
// answer holds NaN or ±Inf.
func TestFiniteness(t *testing.T) {
	m, _, _ := demoModel(t, false)
	base := stationRecord(bikeshare.NewStations(1, 5)[0])
	with := func(field int, v float64) Record {
		r := append(Record(nil), base...)
		r[field].Value = v
		return r
	}
	fieldsOf := func(r Record) map[string]float64 {
		f := map[string]float64{}
		for _, fld := range r {
			f[fld.Name] = fld.Value
		}
		return f
	}
	for _, c := range []struct {
		name  string
		rec   Record
		field string // the field a FieldError names; "" for an error of the model
	}{
		{"NaN", with(bikeshare.WeekendShare, math.NaN()), "weekend_share"},
		{"+Inf", with(bikeshare.TripsPerDay, math.Inf(1)), "trips_per_day"},
		{"-Inf", with(bikeshare.ElevationM, math.Inf(-1)), "elevation_m"},
		// A share of 1e308 divided by its training spread (about 0.1)
		// overflows after scaling.
		{"infinite after scaling", with(bikeshare.WeekendShare, 1e308), ""},
	} {
		t.Run(c.name, func(t *testing.T) {
			x := make([]float64, m.Dim())
			for _, f := range c.rec {
				j, _ := m.Column(f.Name)
				x[j] = f.Value
			}
			_, errAssign := m.Assign(x)
			require.ErrorIs(t, errAssign, kmeans.ErrNotFinite, "the reference refuses it")
			for name, call := range map[string]func() (kmeans.Assignment, error){
				"AssignRecord": func() (kmeans.Assignment, error) { return AssignRecord(m, c.rec) },
				"AssignMap":    func() (kmeans.Assignment, error) { return AssignMap(m, fieldsOf(c.rec)) },
			} {
				a, err := call()
				require.ErrorIs(t, err, kmeans.ErrNotFinite, name)
				assert.Equal(t, -1, a.Cluster, name)
				var fe *FieldError
				if c.field != "" {
					require.ErrorAs(t, err, &fe, name)
					assert.Equal(t, c.field, fe.Field)
					assert.Equal(t, FieldNotFinite, fe.Problem)
					_, err = Vector(m, nil, c.rec)
					require.ErrorIs(t, err, kmeans.ErrNotFinite)
				} else {
					assert.False(t, errorsAsField(err), name)
				}
			}
		})
	}

	// Over HTTP a non-finite number cannot be written; 1e999 parses to
	// +Inf and 1e308 overflows after scaling.
	srv, ts := startServer(t, nil)
	for _, c := range []struct{ value, field string }{{"1e999", "weekend_share"}, {"1e308", ""}} {
		body := `{"rows":[` + recordJSON(t, base) + `,` + rowWith(t, base, "weekend_share", c.value) + `]}`
		resp, b := do(t, ts.Client(), "POST", ts.URL+"/v1/assign", "application/json", []byte(body))
		require.Equal(t, http.StatusUnprocessableEntity, resp.StatusCode, "%s", b)
		assert.Contains(t, string(b), `"row":1`)
		var e errorBody
		require.NoError(t, json.Unmarshal(b, &e))
		assert.Equal(t, FieldNotFinite, e.Problem, "%s", b)
		assert.Equal(t, c.field, e.Field)
	}
	assert.Equal(t, int64(2), srv.Served().Drift.Snapshot().NonFinite)
}

func errorsAsField(err error) bool {
	var fe *FieldError
	return errors.As(err, &fe)
}

// TestOverflowingDistances uses centers 0 and 1e300: a row at 1e200 is
// finite but its squared distance to both centers overflows, so it is
// refused; rows at 0 and 1e154 have a runner-up whose distance
// overflows, so their margin is +Inf, written as null.
func TestOverflowingDistances(t *testing.T) {
	m, err := v1Model(t, [][]float64{{0}, {1e300}}).WithFeatures([]string{"x"})
	require.NoError(t, err)
	_, err = AssignRecord(m, Record{{"x", 1e200}})
	require.ErrorIs(t, err, kmeans.ErrNotFinite)
	_, err = AssignMap(m, map[string]float64{"x": 1e200})
	require.ErrorIs(t, err, kmeans.ErrNotFinite)
	a, err := AssignRecord(m, Record{{"x", 0}})
	require.NoError(t, err)
	assert.Equal(t, 0, a.Cluster)
	assert.True(t, math.IsInf(a.Margin, 1))

	srv, err := NewServer(m, nil)
	require.NoError(t, err)
	h := srv.Handler()
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, jsonRequest("POST", "/v1/assign", []byte(`{"rows":[{"x":1e200}]}`)))
	require.Equal(t, http.StatusUnprocessableEntity, rec.Code)
	var e errorBody
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &e))
	assert.Equal(t, FieldNotFinite, e.Problem)
	require.NotNil(t, e.Row)
	assert.Zero(t, *e.Row)

	rec = httptest.NewRecorder()
	h.ServeHTTP(rec, jsonRequest("POST", "/v1/assign", []byte(`{"rows":[{"x":0},{"x":1e154}]}`)))
	require.Equal(t, http.StatusOK, rec.Code, "%s", rec.Body)
	require.True(t, json.Valid(rec.Body.Bytes()), "%s", rec.Body)
	var got assignResponse
	require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &got))
	for i, x := range []float64{0, 1e154} {
		want, err := m.Assign([]float64{x})
		require.NoError(t, err)
		assert.True(t, math.IsInf(want.Margin, 1))
		assert.Nil(t, got.Assignments[i].Margin)
		assert.Equal(t, want.Distance, got.Assignments[i].Distance)
		assert.Equal(t, 0, got.Assignments[i].Cluster)
	}
}

// recordJSON encodes a record.
func recordJSON(t *testing.T, r Record) string {
	b, err := json.Marshal(r)
	require.NoError(t, err)
	return string(b)
}

// rowWith writes r as a JSON object with the value of field spelt as given.
func rowWith(t *testing.T, r Record, field, value string) string {
	s := "{"
	for i, f := range r {
		if i > 0 {
			s += ","
		}
		v := strconv.FormatFloat(f.Value, 'g', -1, 64)
		if f.Name == field {
			v = value
		}
		s += strconv.Quote(f.Name) + ":" + v
	}
	return s + "}"
}
