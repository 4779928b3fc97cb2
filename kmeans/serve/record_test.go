package serve

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/internal/data/bikeshare"
	"github.com/centroidlab/centroid/kmeans"
)

// stationRecord returns the features of s as a Record in schema order.
func stationRecord(s bikeshare.Station) Record {
	r := make(Record, len(s.Features))
	for j, name := range bikeshare.Features() {
		r[j] = Field{name, s.Features[j]}
	}
	return r
}

func TestAssignByName(t *testing.T) {
	m, _, _ := demoModel(t, false)
	for _, s := range bikeshare.NewStations(30, 5) {
		want, err := m.Assign(s.Features)
		require.NoError(t, err)
		rec := stationRecord(s)
		// Any field order gives the same answer.
		rev := make(Record, len(rec))
		for i, f := range rec {
			rev[len(rec)-1-i] = f
		}
		fields := map[string]float64{}
		for _, f := range rec {
			fields[f.Name] = f.Value
		}
		for _, got := range []func() (kmeans.Assignment, error){
			func() (kmeans.Assignment, error) { return AssignRecord(m, rec) },
			func() (kmeans.Assignment, error) { return AssignRecord(m, rev) },
			func() (kmeans.Assignment, error) { return AssignMap(m, fields) },
		} {
			a, err := got()
			require.NoError(t, err)
			require.Equal(t, want, a)
		}
		v, err := Vector(m, nil, rev)
		require.NoError(t, err)
		assert.Equal(t, s.Features, v)
	}
}

func TestAssignByNameErrors(t *testing.T) {
	m, _, _ := demoModel(t, false)
	s := bikeshare.NewStations(1, 5)[0]
	base := stationRecord(s)
	with := func(f func(Record) Record) Record { return f(append(Record(nil), base...)) }
	cases := []struct {
		name    string
		rec     Record
		field   string
		problem string
		is      error
	}{
		{"missing", with(func(r Record) Record { return append(r[:2], r[3:]...) }), "peak_hour_ratio", FieldMissing, kmeans.ErrSchema},
		{"empty", Record{}, "trips_per_day", FieldMissing, kmeans.ErrSchema},
		{"unknown", with(func(r Record) Record { return append(r, Field{"temperature", 20}) }), "temperature", FieldUnknown, kmeans.ErrSchema},
		{"wrong name", with(func(r Record) Record { r[5].Name = "elevation"; return r }), "elevation", FieldUnknown, kmeans.ErrSchema},
		{"repeated", with(func(r Record) Record { return append(r, r[1]) }), "weekend_share", FieldRepeated, kmeans.ErrSchema},
		{"NaN", with(func(r Record) Record { r[4].Value = math.NaN(); return r }), "return_imbalance", FieldNotFinite, kmeans.ErrNotFinite},
		{"Inf", with(func(r Record) Record { r[0].Value = math.Inf(1); return r }), "trips_per_day", FieldNotFinite, kmeans.ErrNotFinite},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			a, err := AssignRecord(m, c.rec)
			assert.Equal(t, -1, a.Cluster)
			var fe *FieldError
			require.ErrorAs(t, err, &fe)
			assert.Equal(t, c.field, fe.Field)
			assert.Equal(t, c.problem, fe.Problem)
			require.ErrorIs(t, err, c.is)
			assert.Equal(t, fmt.Sprintf("serve: field %q: %s", c.field, c.problem), err.Error())
			_, err = Vector(m, nil, c.rec)
			require.ErrorIs(t, err, c.is)

			if c.problem == FieldRepeated {
				return // a map cannot repeat a name
			}
			fields := map[string]float64{}
			for _, f := range c.rec {
				fields[f.Name] = f.Value
			}
			_, err = AssignMap(m, fields)
			require.ErrorAs(t, err, &fe)
			assert.Equal(t, c.field, fe.Field)
			assert.Equal(t, c.problem, fe.Problem)
		})
	}
	// The map reports the alphabetically first unknown name.
	fields := map[string]float64{"zeta": 1, "alpha": 2, "": 3}
	for _, f := range base {
		fields[f.Name] = f.Value
	}
	for range 20 {
		_, err := AssignMap(m, fields)
		var fe *FieldError
		require.ErrorAs(t, err, &fe)
		assert.Equal(t, "", fe.Field)
	}

	plain, err := m.WithFeatures(nil)
	require.NoError(t, err)
	_, err = AssignRecord(plain, base)
	require.ErrorIs(t, err, kmeans.ErrSchema)
	_, err = AssignMap(plain, map[string]float64{})
	require.ErrorIs(t, err, kmeans.ErrSchema)
	_, err = Vector(m, make([]float64, 2), base)
	require.ErrorIs(t, err, kmeans.ErrDimension)
	for _, zero := range []*kmeans.Model{nil, {}} {
		_, err = AssignRecord(zero, base)
		require.ErrorIs(t, err, kmeans.ErrModel)
		_, err = AssignMap(zero, map[string]float64{})
		require.ErrorIs(t, err, kmeans.ErrModel)
		_, err = Vector(zero, nil, base)
		require.ErrorIs(t, err, kmeans.ErrModel)
	}
}

// TestAssignByNameWide covers schemas wider than the stack buffers.
func TestAssignByNameWide(t *testing.T) {
	for _, d := range []int{63, 64, 65, 100} {
		k := 3
		c := make([][]float64, k)
		for j := range c {
			c[j] = make([]float64, d)
			for i := range c[j] {
				c[j][i] = float64((j*d + i) % 7)
			}
		}
		names := make([]string, d)
		rec := make(Record, d)
		x := make([]float64, d)
		for j := range names {
			names[j] = fmt.Sprintf("f%d", j)
			x[j] = float64(j % 5)
			rec[j] = Field{names[j], x[j]}
		}
		m, err := v1Model(t, c).WithFeatures(names)
		require.NoError(t, err)
		want, err := m.Assign(x)
		require.NoError(t, err)
		got, err := AssignRecord(m, rec)
		require.NoError(t, err)
		assert.Equal(t, want, got, "d=%d", d)
		_, err = AssignRecord(m, append(rec, rec[d-1]))
		require.ErrorIs(t, err, kmeans.ErrSchema, "d=%d", d)
		_, err = AssignRecord(m, rec[:d-1])
		var fe *FieldError
		require.ErrorAs(t, err, &fe)
		assert.Equal(t, names[d-1], fe.Field)
	}
}

func TestRecordJSON(t *testing.T) {
	r := Record{{"b", 2}, {"a", 0.1}, {"c", -3e-7}}
	b, err := json.Marshal(r)
	require.NoError(t, err)
	assert.Equal(t, `{"b":2,"a":0.1,"c":-3e-7}`, string(b))
	var back Record
	require.NoError(t, json.Unmarshal(b, &back))
	assert.Equal(t, r, back)

	_, err = json.Marshal(Record{{"x", math.NaN()}})
	require.ErrorIs(t, err, kmeans.ErrNotFinite)

	// Many fields switch the repeated-name check to a map.
	long := make(Record, 40)
	for i := range long {
		long[i] = Field{fmt.Sprintf("f%d", i), float64(i)}
	}
	b, err = json.Marshal(long)
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(b, &back))
	assert.Equal(t, long, back)

	bad := []struct {
		doc string
		is  error
	}{
		{`{"a":1,"a":2}`, kmeans.ErrSchema},
		{`{"a":"1"}`, kmeans.ErrSchema},
		{`{"a":null}`, kmeans.ErrSchema},
		{`{"a":{"b":1}}`, kmeans.ErrSchema},
		{`{"a":[1]}`, kmeans.ErrSchema},
		{`{"a":true}`, kmeans.ErrSchema},
		{`{"a":1e999}`, kmeans.ErrNotFinite},
		{`[1,2]`, kmeans.ErrSchema},
		{`3`, kmeans.ErrSchema},
	}
	for _, c := range bad {
		var r Record
		err := json.Unmarshal([]byte(c.doc), &r)
		require.ErrorIs(t, err, c.is, c.doc)
		assert.Nil(t, r, c.doc)
	}
	// Repeats far into a long record are found too.
	b, err = json.Marshal(append(long, Field{"f3", 0}))
	require.NoError(t, err)
	require.ErrorIs(t, json.Unmarshal(b, &back), kmeans.ErrSchema)
	// Syntax errors are reported by encoding/json before UnmarshalJSON runs.
	var se *json.SyntaxError
	require.True(t, errors.As(json.Unmarshal([]byte(`{"a":NaN}`), &back), &se))
	// null leaves the record unchanged.
	keep := Record{{"a", 1}}
	require.NoError(t, json.Unmarshal([]byte(`null`), &keep))
	assert.Equal(t, Record{{"a", 1}}, keep)
}
