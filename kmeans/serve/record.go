package serve

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/centroidlab/centroid/kmeans"
)

// Problems reported by FieldError.
const (
	FieldMissing   = "missing"
	FieldUnknown   = "unknown"
	FieldRepeated  = "repeated"
	FieldNotFinite = "not finite"
	FieldNotNumber = "not a number"
)

// FieldError reports one field of a record that the model cannot use. It
// unwraps to [kmeans.ErrNotFinite] for FieldNotFinite and to
// [kmeans.ErrSchema] otherwise.
type FieldError struct {
	// Field is the field's name.
	Field string
	// Problem is FieldMissing, FieldUnknown, FieldRepeated, FieldNotFinite
	// or FieldNotNumber.
	Problem string
}

// Error returns a message such as `serve: field "elevation_m": missing`.
func (e *FieldError) Error() string {
	return fmt.Sprintf("serve: field %s: %s", strconv.Quote(e.Field), e.Problem)
}

// Unwrap returns [kmeans.ErrNotFinite] or [kmeans.ErrSchema].
func (e *FieldError) Unwrap() error {
	if e.Problem == FieldNotFinite {
		return kmeans.ErrNotFinite
	}
	return kmeans.ErrSchema
}

// Field is one named value of a Record.
type Field struct {
	Name  string
	Value float64
}

// Record is a row given by feature name, the fields in any order. Its JSON
// form is an object of numbers, {"trips_per_day": 212, "elevation_m": 35};
// decoding keeps the order of the fields and rejects repeated names,
// values that are not numbers and numbers beyond the float64 range.
type Record []Field

// MarshalJSON encodes r as a JSON object with its fields in order. It
// returns an error wrapping [kmeans.ErrNotFinite] for NaN or ±Inf values.
func (r Record) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('{')
	for i, f := range r {
		if math.IsNaN(f.Value) || math.IsInf(f.Value, 0) {
			return nil, &FieldError{Field: f.Name, Problem: FieldNotFinite}
		}
		if i > 0 {
			b.WriteByte(',')
		}
		name, err := json.Marshal(f.Name)
		if err != nil {
			return nil, err
		}
		b.Write(name)
		b.WriteByte(':')
		v, err := json.Marshal(f.Value)
		if err != nil {
			return nil, err
		}
		b.Write(v)
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

// UnmarshalJSON decodes a JSON object of numbers into r, keeping the order
// of the fields. A repeated name or a value that is not a number returns a
// *FieldError ([kmeans.ErrSchema]); a number beyond the float64 range one
// with FieldNotFinite ([kmeans.ErrNotFinite]). JSON null leaves r unchanged.
func (r *Record) UnmarshalJSON(b []byte) error {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	tok, err := dec.Token()
	if err != nil {
		return err
	}
	if tok == nil {
		return nil
	}
	if d, ok := tok.(json.Delim); !ok || d != '{' {
		return fmt.Errorf("%w: a record must be a JSON object, not %v", kmeans.ErrSchema, tok)
	}
	out := make(Record, 0, 8)
	var names map[string]bool // for long records; short ones are scanned
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			return err
		}
		name := tok.(string) // object keys are strings
		if repeatedName(out, &names, name) {
			return &FieldError{Field: name, Problem: FieldRepeated}
		}
		tok, err = dec.Token()
		if err != nil {
			return err
		}
		num, ok := tok.(json.Number)
		if !ok {
			return &FieldError{Field: name, Problem: FieldNotNumber}
		}
		v, err := strconv.ParseFloat(string(num), 64)
		if err != nil || math.IsInf(v, 0) {
			return &FieldError{Field: name, Problem: FieldNotFinite}
		}
		out = append(out, Field{Name: name, Value: v})
	}
	if _, err := dec.Token(); err != nil { // closing brace
		return err
	}
	if _, err := dec.Token(); err != io.EOF {
		return fmt.Errorf("%w: data after the record", kmeans.ErrSchema)
	}
	*r = out
	return nil
}

// repeatedName reports whether name is already in r, switching from a
// scan to the map *names once r is long.
func repeatedName(r Record, names *map[string]bool, name string) bool {
	const scan = 16
	if len(r) < scan {
		for _, f := range r {
			if f.Name == name {
				return true
			}
		}
		return false
	}
	if *names == nil {
		*names = make(map[string]bool, 2*len(r))
		for _, f := range r {
			(*names)[f.Name] = true
		}
	}
	if (*names)[name] {
		return true
	}
	(*names)[name] = true
	return false
}

// Vector writes the values of r into dst (len m.Dim(); nil allocates) in
// the column order of the model's schema and returns it. It returns a
// *FieldError for the first unknown, repeated or non-finite field of r (in
// r's order), else for the first missing feature (in schema order); an
// error wrapping [kmeans.ErrSchema] if the model has no feature names;
// [kmeans.ErrDimension] if len(dst) is wrong.
func Vector(m *kmeans.Model, dst []float64, r Record) ([]float64, error) {
	if err := checkSchema(m); err != nil {
		return nil, err
	}
	d := m.Dim()
	if dst == nil {
		dst = make([]float64, d)
	}
	if len(dst) != d {
		return nil, fmt.Errorf("%w: len(dst) = %d, model has %d features", kmeans.ErrDimension, len(dst), d)
	}
	if err := fillRecord(m, dst, r); err != nil {
		return nil, err
	}
	return dst, nil
}

// AssignRecord is m.Assign for a row given by feature name. Field errors
// are reported as by Vector. It allocates nothing when m.Dim() ≤ 64.
func AssignRecord(m *kmeans.Model, r Record) (kmeans.Assignment, error) {
	return assignNamed(m, r, nil)
}

// AssignMap is m.Assign for a row given as a map from feature name to
// value. It returns a *FieldError for the alphabetically first unknown
// name, else for the first non-finite value, else for the first missing
// feature (both in schema order); an error wrapping [kmeans.ErrSchema] if the
// model has no feature names. It allocates nothing when m.Dim() ≤ 64.
func AssignMap(m *kmeans.Model, fields map[string]float64) (kmeans.Assignment, error) {
	return assignNamed(m, nil, fields)
}

func checkSchema(m *kmeans.Model) error {
	if m == nil || m.K() == 0 {
		return fmt.Errorf("%w: model has no centers", kmeans.ErrModel)
	}
	if !m.HasSchema() {
		return fmt.Errorf("%w: the model has no feature names", kmeans.ErrSchema)
	}
	return nil
}

// stackRow is the largest dimension whose raw row is assembled on the
// stack.
const stackRow = 64

// assignNamed fills a raw row from r or fields and assigns it, on the stack
// when possible (Model.Assign does not retain its argument).
func assignNamed(m *kmeans.Model, r Record, fields map[string]float64) (kmeans.Assignment, error) {
	fail := kmeans.Assignment{Cluster: -1}
	if err := checkSchema(m); err != nil {
		return fail, err
	}
	d := m.Dim()
	var buf [stackRow]float64
	var raw []float64
	if d <= stackRow {
		raw = buf[:d]
	} else {
		raw = make([]float64, d)
	}
	var err error
	if fields != nil || r == nil {
		err = fillMap(m, raw, fields)
	} else {
		err = fillRecord(m, raw, r)
	}
	if err != nil {
		return fail, err
	}
	return m.Assign(raw)
}

// fillRecord writes the fields of r into raw (len d) by schema column.
func fillRecord(m *kmeans.Model, raw []float64, r Record) error {
	var f rowFill
	f.start(len(raw))
	for _, fld := range r {
		j, ok := m.Column(fld.Name)
		if !ok {
			return &FieldError{Field: fld.Name, Problem: FieldUnknown}
		}
		if p := f.set(raw, j, fld.Value); p != "" {
			return &FieldError{Field: fld.Name, Problem: p}
		}
	}
	if j := f.missing(); j >= 0 {
		return &FieldError{Field: m.Features()[j], Problem: FieldMissing}
	}
	return nil
}

// rowFill tracks the columns of a raw row written from fields given in
// any order, and reports the first problem. It allocates nothing for rows
// of up to 64 columns. (It does not hold the row, so that a row on the
// caller's stack stays there.)
type rowFill struct {
	d     int
	mask  uint64 // columns set, when d ≤ 64
	seen  []bool // columns set, when d > 64
	count int
}

// start prepares f for a row of d columns, forgetting earlier fields.
func (f *rowFill) start(d int) {
	f.d, f.mask, f.count = d, 0, 0
	if d > 64 {
		if cap(f.seen) < d {
			f.seen = make([]bool, d)
		}
		f.seen = f.seen[:d]
		clear(f.seen)
	}
}

// has reports whether column j is set.
func (f *rowFill) has(j int) bool {
	if f.d > 64 {
		return f.seen[j]
	}
	return f.mask&(1<<j) != 0
}

// set writes v into column j of raw and returns "" or the problem:
// FieldRepeated for a column already set, FieldNotFinite for NaN or ±Inf.
func (f *rowFill) set(raw []float64, j int, v float64) string {
	if f.has(j) {
		return FieldRepeated
	}
	if f.d > 64 {
		f.seen[j] = true
	} else {
		f.mask |= 1 << j
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return FieldNotFinite
	}
	raw[j] = v
	f.count++
	return ""
}

// missing returns the first column not set, or -1 if every column is.
func (f *rowFill) missing() int {
	if f.count == f.d {
		return -1
	}
	for j := range f.d {
		if !f.has(j) {
			return j
		}
	}
	return -1
}

// fillMap writes fields into raw (len d) by schema column.
func fillMap(m *kmeans.Model, raw []float64, fields map[string]float64) error {
	d := len(raw)
	unknown, hasUnknown, known := "", false, 0
	bad := -1 // first non-finite column
	for name, v := range fields {
		j, ok := m.Column(name)
		if !ok {
			if !hasUnknown || name < unknown {
				unknown, hasUnknown = name, true
			}
			continue
		}
		known++
		if (math.IsNaN(v) || math.IsInf(v, 0)) && (bad < 0 || j < bad) {
			bad = j
		}
		raw[j] = v
	}
	switch {
	case hasUnknown:
		return &FieldError{Field: unknown, Problem: FieldUnknown}
	case bad >= 0:
		return &FieldError{Field: m.Features()[bad], Problem: FieldNotFinite}
	case known < d:
		for _, name := range m.Features() {
			if _, ok := fields[name]; !ok {
				return &FieldError{Field: name, Problem: FieldMissing}
			}
		}
	}
	return nil
}
