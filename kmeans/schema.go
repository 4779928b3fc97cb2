package kmeans

import (
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"unicode"
	"unicode/utf8"
)

// checkFeatures validates a schema of d names and returns the name → column
// map.
func checkFeatures(names []string, d int) (map[string]int, error) {
	if len(names) != d {
		return nil, fmt.Errorf("%w: %d feature names for %d columns", ErrSchema, len(names), d)
	}
	cols := make(map[string]int, d)
	for j, name := range names {
		if err := checkName(name, MaxFeatureName); err != nil {
			return nil, fmt.Errorf("%w: feature %d: %v", ErrSchema, j, err)
		}
		if i, dup := cols[name]; dup {
			return nil, fmt.Errorf("%w: features %d and %d are both named %q", ErrSchema, i, j, name)
		}
		cols[name] = j
	}
	return cols, nil
}

// checkName checks a stored name: non-empty, at most max bytes, valid UTF-8
// without control characters.
func checkName(s string, max int) error {
	switch {
	case s == "":
		return errors.New("empty name")
	case len(s) > max:
		return fmt.Errorf("name of %d bytes, longer than %d", len(s), max)
	case !utf8.ValidString(s):
		return fmt.Errorf("name %q is not valid UTF-8", s)
	case strings.IndexFunc(s, unicode.IsControl) >= 0:
		return fmt.Errorf("name %q holds a control character", s)
	}
	return nil
}

// number is a float64 that, unlike a plain float64, rejects JSON null
// (which encoding/json would silently skip).
type number float64

// UnmarshalJSON decodes a JSON number and rejects null.
func (n *number) UnmarshalJSON(b []byte) error {
	if string(b) == "null" {
		return errors.New("null where a number is required")
	}
	return json.Unmarshal(b, (*float64)(n))
}

// numbers is a JSON array of numbers that rejects null entries.
type numbers []number

// modelDocV1 is the version 1 document.
type modelDocV1 struct {
	Format  string          `json:"format"`
	Version int             `json:"version"`
	Metric  string          `json:"metric"`
	K       int             `json:"k"`
	Dim     int             `json:"dim"`
	Centers []numbers       `json:"centers"`
	Scaler  json.RawMessage `json:"scaler"`
}

// modelDoc is the version 2 document. Its field order is the canonical
// order; Checksum must stay last (MarshalJSON splices it in).
type modelDoc struct {
	Format   string          `json:"format"`
	Version  int             `json:"version"`
	Library  string          `json:"library,omitempty"`
	Created  string          `json:"created,omitempty"`
	Metric   string          `json:"metric"`
	K        int             `json:"k"`
	Dim      int             `json:"dim"`
	Features []string        `json:"features,omitempty"`
	Scaler   json.RawMessage `json:"scaler"`
	Centers  []numbers       `json:"centers"`
	Training *trainingDoc    `json:"training,omitempty"`
	Checksum string          `json:"checksum"`
}

type trainingDoc struct {
	Rows     int          `json:"rows"`
	Clusters []clusterDoc `json:"clusters"`
}

type clusterDoc struct {
	Size   int    `json:"size"`
	Weight number `json:"weight"`
	Cost   number `json:"cost"`
	P50    number `json:"p50"`
	P90    number `json:"p90"`
	P99    number `json:"p99"`
	Max    number `json:"max"`
}
