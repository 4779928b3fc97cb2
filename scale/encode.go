package scale

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
)

// documentVersion is the version of the encoded form written by this
// package. Decode rejects any other version.
const documentVersion = 1

// document is the encoded form of every scaler; see the package
// documentation.
type document struct {
	Kind    string  `json:"kind"`
	Version int     `json:"version"`
	Dim     int     `json:"dim"`
	Offset  numbers `json:"offset,omitempty"`
	Divisor numbers `json:"divisor,omitempty"`
}

// numbers is a JSON array of numbers that, unlike []float64, rejects null
// entries (which encoding/json would silently decode as 0).
type numbers []float64

// UnmarshalJSON decodes an array of numbers, or null as nil.
func (n *numbers) UnmarshalJSON(b []byte) error {
	var entries []*float64
	if err := json.Unmarshal(b, &entries); err != nil {
		return err
	}
	if entries == nil {
		*n = nil
		return nil
	}
	out := make([]float64, len(entries))
	for i, e := range entries {
		if e == nil {
			return fmt.Errorf("entry %d is null", i)
		}
		out[i] = *e
	}
	*n = out
	return nil
}

// Encode returns the JSON document of s (see the package documentation). A
// nil s, or a nil pointer to one of this package's scaler types, encodes as
// null. It returns an error wrapping ErrNotLearned if s has not learned and
// ErrUnsupported if s is not of a type of this package.
func Encode(s Scaler) ([]byte, error) {
	if s == nil || s == (*ZScore)(nil) || s == (*MinMax)(nil) || s == (*MedianIQR)(nil) || s == (*UnitLength)(nil) {
		return []byte("null"), nil
	}
	switch s.(type) {
	case ZScore, *ZScore, MinMax, *MinMax, MedianIQR, *MedianIQR, UnitLength, *UnitLength:
		return s.(json.Marshaler).MarshalJSON()
	}
	return nil, fmt.Errorf("%w: %T", ErrUnsupported, s)
}

// Decode returns the learned scaler encoded in b by Encode or by a
// scaler's MarshalJSON: a *ZScore, *MinMax, *MedianIQR or *UnitLength.
// Documents of the kind "robust", written by earlier releases, decode to a
// *MedianIQR. The document null decodes to (nil, nil). Any malformed,
// incomplete or inconsistent document returns an error wrapping ErrDecode.
func Decode(b []byte) (Scaler, error) {
	return decodeKind(b, "")
}

// decodeKind decodes b and, if want is not empty, requires that kind (or
// an earlier name of it, see currentKind). It returns (nil, nil) for null.
func decodeKind(b []byte, want string) (Scaler, error) {
	trimmed := bytes.TrimSpace(b)
	if string(trimmed) == "null" {
		return nil, nil
	}
	dec := json.NewDecoder(bytes.NewReader(trimmed))
	dec.DisallowUnknownFields()
	var doc document
	if err := dec.Decode(&doc); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrDecode, err)
	}
	if _, err := dec.Token(); err != io.EOF {
		return nil, fmt.Errorf("%w: data after the document", ErrDecode)
	}
	kind := currentKind(doc.Kind)
	switch {
	case want != "" && kind != want:
		return nil, fmt.Errorf("%w: kind %q, want %q", ErrDecode, doc.Kind, want)
	case kind != kindZScore && kind != kindMinMax && kind != kindMedianIQR && kind != kindUnitLength:
		return nil, fmt.Errorf("%w: unknown kind %q", ErrDecode, doc.Kind)
	}
	if doc.Version != documentVersion {
		return nil, fmt.Errorf("%w: version %d, want %d", ErrDecode, doc.Version, documentVersion)
	}
	if doc.Dim < 1 {
		return nil, fmt.Errorf("%w: dim %d", ErrDecode, doc.Dim)
	}
	if kind == kindUnitLength {
		if len(doc.Offset) != 0 || len(doc.Divisor) != 0 {
			return nil, fmt.Errorf("%w: %s has no offset or divisor", ErrDecode, kindUnitLength)
		}
		return &UnitLength{dim: doc.Dim}, nil
	}
	if len(doc.Offset) != doc.Dim {
		return nil, fmt.Errorf("%w: dim %d but %d offsets", ErrDecode, doc.Dim, len(doc.Offset))
	}
	a, err := newAffine(doc.Offset, doc.Divisor)
	if err != nil {
		return nil, fmt.Errorf("%w: %v", ErrDecode, err)
	}
	switch kind {
	case kindZScore:
		return &ZScore{affine: a}, nil
	case kindMinMax:
		return &MinMax{affine: a}, nil
	}
	return &MedianIQR{affine: a, earlier: doc.Kind == kindMedianIQRv0}, nil
}

// currentKind maps an encoded kind of an earlier release to the kind
// written now; other kinds are returned as they are.
func currentKind(kind string) string {
	if kind == kindMedianIQRv0 {
		return kindMedianIQR
	}
	return kind
}
