package kmeans

import (
	"encoding/json"
	"errors"
	"fmt"
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

// checkName checks a stored name: non-empty, at most max bytes of valid
// UTF-8, and made only of characters that show. So that two names that
// look alike are alike, and a name cannot reorder or hide the text around
// it where it is displayed, it refuses every character that is not
// graphic (control characters Cc, format characters Cf such as the
// bidirectional controls U+202A–U+202E and U+2066–U+2069 and the zero-width
// characters U+200B–U+200D and U+FEFF, private-use and unassigned code
// points, line and paragraph separators), the code points Unicode marks
// default-ignorable (variation selectors, the Hangul fillers, the
// combining grapheme joiner, ...), the blank Braille pattern U+2800, every
// space but U+0020, and a space at either end.
func checkName(s string, max int) error {
	switch {
	case s == "":
		return errors.New("empty name")
	case len(s) > max:
		return fmt.Errorf("name of %d bytes, longer than %d", len(s), max)
	case !utf8.ValidString(s):
		return fmt.Errorf("name %q is not valid UTF-8", s)
	case s[0] == ' ' || s[len(s)-1] == ' ':
		return fmt.Errorf("name %q begins or ends with a space", s)
	}
	for i, r := range s {
		if !visible(r) {
			return fmt.Errorf("name %q holds the invisible or control character %U at byte %d", s, r, i)
		}
	}
	return nil
}

// visible reports whether r may appear in a name (see checkName).
func visible(r rune) bool {
	switch {
	case r == ' ':
		return true
	case r < utf8.RuneSelf:
		return '!' <= r && r <= '~'
	}
	return unicode.IsGraphic(r) && r != brailleBlank &&
		!unicode.In(r, unicode.Zs, unicode.Other_Default_Ignorable_Code_Point, unicode.Variation_Selector)
}

// brailleBlank is graphic but shows nothing.
const brailleBlank = '\u2800'

// docHead is the version 2 document up to the scaler, as encoding/json
// writes it: its field order is the canonical order (see
// Model.MarshalJSON), and the centers, the training summary and the
// checksum follow it in the encoding.
type docHead struct {
	Format   string          `json:"format"`
	Version  int             `json:"version"`
	Library  string          `json:"library,omitempty"`
	Created  string          `json:"created,omitempty"`
	Metric   string          `json:"metric"`
	K        int             `json:"k"`
	Dim      int             `json:"dim"`
	Features []string        `json:"features,omitempty"`
	Scaler   json.RawMessage `json:"scaler"`
}
