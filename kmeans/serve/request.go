package serve

import (
	"fmt"
	"io"
	"math"
	"net/http"
	"strconv"
	"unicode/utf16"
	"unicode/utf8"

	"github.com/centroidlab/centroid/kmeans"
)

// requestError is a client error with its HTTP status and, for a bad row,
// the row's index (-1 otherwise).
type requestError struct {
	status int
	row    int
	err    error
}

func (e *requestError) Error() string {
	if e.row >= 0 {
		return fmt.Sprintf("row %d: %v", e.row, e.err)
	}
	return e.err.Error()
}

func (e *requestError) Unwrap() error { return e.err }

// malformed returns a 400 error.
func malformed(format string, args ...any) error {
	return &requestError{status: http.StatusBadRequest, row: -1, err: fmt.Errorf("malformed request: "+format, args...)}
}

// readBody reads the whole body of r, at most max bytes. A body declared
// longer is refused before reading; a body of unknown length is read into
// a buffer that doubles up to max bytes, so less than 2·max bytes are
// allocated. Errors are *http.MaxBytesError for a body over the limit,
// else errors of reading (a timeout, a client gone).
func readBody(w http.ResponseWriter, r *http.Request, max int64) ([]byte, error) {
	if r.ContentLength > max {
		return nil, &http.MaxBytesError{Limit: max}
	}
	body := http.MaxBytesReader(w, r.Body, max)
	if r.ContentLength >= 0 {
		b := make([]byte, r.ContentLength)
		if _, err := io.ReadFull(body, b); err != nil {
			return nil, err
		}
		return b, nil
	}
	b := make([]byte, 0, min(max, 16<<10))
	for {
		if len(b) == cap(b) {
			if int64(len(b)) == max {
				// Full: the body must end here, which a read of one
				// byte more tells (MaxBytesReader refuses that byte).
				var probe [1]byte
				if _, err := io.ReadFull(body, probe[:]); err != io.EOF {
					if err == nil {
						err = &http.MaxBytesError{Limit: max}
					}
					return nil, err
				}
				return b, nil
			}
			nb := make([]byte, len(b), min(max, 2*int64(cap(b))))
			copy(nb, b)
			b = nb
		}
		n, err := body.Read(b[len(b):cap(b)])
		b = b[:len(b)+n]
		switch {
		case err == io.EOF:
			return b, nil
		case err != nil:
			return nil, err
		}
	}
}

// schema is what decoding a row by name needs: the column of each feature
// name and the names in column order. It is the same for every model a
// Server serves (SameSchema).
type schema struct {
	cols  map[string]int
	names []string
}

func newSchema(names []string) *schema {
	s := &schema{cols: make(map[string]int, len(names)), names: names}
	for j, name := range names {
		s.cols[name] = j
	}
	return s
}

// decodeAssign decodes a POST /v1/assign body, {"rows":[{...},...]}, and
// calls each(i, row) for every row in order, as soon as the row is read:
// row holds the row's values in schema column order and is reused for the
// next row. The body must be one JSON object with exactly one field,
// "rows", an array of at most maxRows objects; each object must give every
// feature of sc exactly once as a finite number. It returns the number of
// rows.
//
// It reads the body once, front to back, checking the JSON syntax of all
// it reads, and stops at the first problem: a syntax error or a body not
// of that shape (400), a row more than maxRows (413), or a row that is
// not an object, or whose fields are refused (422, with a *FieldError: in
// the row's order, an unknown or repeated name, a value that is not a
// number or not finite; then the first missing feature in schema order),
// or for which each returned an error (422). Errors are *requestError
// values. Nothing it keeps grows with the nesting of the body, and for
// schemas of up to 64 features whose names are written without escapes it
// allocates nothing per row.
func decodeAssign(body []byte, sc *schema, maxRows int, each func(i int, row []float64) error) (int, error) {
	s := scanner{b: body}
	if s.peek() != '{' {
		if len(body) == 0 {
			return 0, malformed("empty body")
		}
		return 0, malformed(`want an object {"rows":[{...},...]}`)
	}
	s.i++
	rows, seen := 0, false
	if s.peek() != '}' {
		for {
			key, err := s.key()
			if err != nil {
				return 0, err
			}
			if string(key) != "rows" {
				return 0, malformed("unknown field %q", shown(key))
			}
			if seen {
				return 0, malformed(`field "rows" given twice`)
			}
			seen = true
			switch s.peek() {
			case '[':
			case 'n':
				if !s.literal("null") {
					return 0, s.syntax("a value")
				}
				return 0, malformed(`"rows" is null, want an array`)
			default:
				return 0, malformed(`"rows" must be an array of objects`)
			}
			s.i++
			if rows, err = s.rows(sc, maxRows, each); err != nil {
				return 0, err
			}
			if !s.next('}') {
				return 0, s.syntax(`"," or "}"`)
			}
			if s.b[s.i-1] == '}' {
				break
			}
		}
	} else {
		s.i++
	}
	if s.peek() != 0 {
		return 0, malformed("data after the object, at byte %d", s.i)
	}
	if !seen {
		return 0, malformed(`no "rows": want {"rows":[{...},...]}`)
	}
	return rows, nil
}

// rows decodes the elements of the rows array, the scanner just past '['.
func (s *scanner) rows(sc *schema, maxRows int, each func(i int, row []float64) error) (int, error) {
	d := len(sc.names)
	var buf [stackRow]float64
	raw := buf[:min(d, stackRow)]
	if d > stackRow {
		raw = make([]float64, d)
	}
	var f rowFill
	bad := func(i int, err error) error {
		return &requestError{status: http.StatusUnprocessableEntity, row: i, err: err}
	}
	if s.peek() == ']' {
		s.i++
		return 0, nil
	}
	for i := 0; ; i++ {
		if i == maxRows {
			return 0, &requestError{status: http.StatusRequestEntityTooLarge, row: -1,
				err: fmt.Errorf("more than %d rows: at most %d per request", maxRows, maxRows)}
		}
		switch c := s.peek(); {
		case c == '{':
		case c == 'n' && s.literal("null"):
			return 0, bad(i, fmt.Errorf("%w: a row must be an object, not null", kmeans.ErrSchema))
		case startsValue(c):
			return 0, bad(i, fmt.Errorf("%w: a row must be an object of numbers", kmeans.ErrSchema))
		default:
			return 0, s.syntax("a row")
		}
		s.i++
		f.start(d)
		if s.peek() != '}' {
			for {
				name, err := s.key()
				if err != nil {
					return 0, err
				}
				j, ok := sc.cols[string(name)]
				if !ok {
					return 0, bad(i, &FieldError{Field: shown(name), Problem: FieldUnknown})
				}
				if f.has(j) {
					return 0, bad(i, &FieldError{Field: sc.names[j], Problem: FieldRepeated})
				}
				if c := s.peek(); c != '-' && (c < '0' || c > '9') {
					if !startsValue(c) {
						return 0, s.syntax("a value")
					}
					return 0, bad(i, &FieldError{Field: sc.names[j], Problem: FieldNotNumber})
				}
				num, ok := s.number()
				if !ok {
					return 0, s.syntax("a number")
				}
				v, err := strconv.ParseFloat(string(num), 64)
				if err != nil || math.IsInf(v, 0) {
					return 0, bad(i, &FieldError{Field: sc.names[j], Problem: FieldNotFinite})
				}
				f.set(raw, j, v)
				if !s.next('}') {
					return 0, s.syntax(`"," or "}"`)
				}
				if s.b[s.i-1] == '}' {
					break
				}
			}
		} else {
			s.i++
		}
		if j := f.missing(); j >= 0 {
			return 0, bad(i, &FieldError{Field: sc.names[j], Problem: FieldMissing})
		}
		if err := each(i, raw); err != nil {
			return 0, bad(i, err)
		}
		if !s.next(']') {
			return 0, s.syntax(`"," or "]"`)
		}
		if s.b[s.i-1] == ']' {
			return i + 1, nil
		}
	}
}

// shown returns a name read from a request for an error message: whole if
// it could be a feature name (at most kmeans.MaxFeatureName bytes), else
// cut there, at a character boundary, and ended with "…".
func shown(name []byte) string {
	if len(name) <= kmeans.MaxFeatureName {
		return string(name)
	}
	n := kmeans.MaxFeatureName
	for n > 0 && !utf8.RuneStart(name[n]) {
		n--
	}
	return string(name[:n]) + "…"
}

// startsValue reports whether c can start a JSON value.
func startsValue(c byte) bool {
	switch c {
	case '{', '[', '"', 't', 'f', 'n', '-':
		return true
	}
	return c >= '0' && c <= '9'
}

// scanner reads JSON (RFC 8259) from a byte slice, checking the syntax of
// what it reads. It keeps no stack: the request has a fixed shape, and
// anything nested deeper is refused where it starts.
type scanner struct {
	b       []byte
	i       int
	scratch []byte // decoded strings
}

// peek skips white space and returns the next byte (0 at the end).
func (s *scanner) peek() byte {
	for ; s.i < len(s.b); s.i++ {
		switch c := s.b[s.i]; c {
		case ' ', '\t', '\n', '\r':
		default:
			return c
		}
	}
	return 0
}

// syntax returns the 400 error for a byte that is not what the grammar
// wants at the current position.
func (s *scanner) syntax(want string) error {
	if s.peek() == 0 {
		return malformed("unexpected end of the body, want %s", want)
	}
	return malformed("at byte %d: want %s, found %q", s.i, want, s.b[s.i])
}

// next consumes a ',' or the closing byte end and reports whether it
// found one of them; the caller looks at s.b[s.i-1] to tell which.
func (s *scanner) next(end byte) bool {
	switch s.peek() {
	case ',', end:
		s.i++
		return true
	}
	return false
}

// literal reports whether the body continues with lit (true, false,
// null), and consumes it if so.
func (s *scanner) literal(lit string) bool {
	if len(s.b)-s.i >= len(lit) && string(s.b[s.i:s.i+len(lit)]) == lit {
		s.i += len(lit)
		return true
	}
	return false
}

// key reads an object key and the colon after it.
func (s *scanner) key() ([]byte, error) {
	if s.peek() != '"' {
		return nil, s.syntax("a field name")
	}
	k, err := s.str()
	if err != nil {
		return nil, err
	}
	if s.peek() != ':' {
		return nil, s.syntax(`":"`)
	}
	s.i++
	return k, nil
}

// str reads the string at the current position (a '"') and returns its
// content: a slice of the body when it holds no escape and is valid UTF-8,
// else the string decoded into s.scratch (valid until the next call) as
// encoding/json decodes it: escapes resolved, invalid UTF-8 and lone
// surrogates replaced by U+FFFD. A decoded string is cut just after its
// first kmeans.MaxFeatureName bytes: the strings read are field names,
// and one longer than that is no feature's name and is shown cut there
// (shown), so the cut changes no answer while it keeps the scratch from
// growing with the body (a replaced byte takes three).
func (s *scanner) str() ([]byte, error) {
	start := s.i
	s.i++
	escaped, high := false, false
	for {
		if s.i >= len(s.b) {
			return nil, malformed("unexpected end of the body in a string")
		}
		c := s.b[s.i]
		switch {
		case c == '"':
			s.i++
			raw := s.b[start+1 : s.i-1]
			if !escaped && (!high || utf8.Valid(raw)) {
				return raw, nil
			}
			s.scratch = unquote(s.scratch[:0], raw, kmeans.MaxFeatureName)
			return s.scratch, nil
		case c < 0x20:
			return nil, malformed("at byte %d: control character %q in a string", s.i, c)
		case c == '\\':
			escaped = true
			if s.i+1 >= len(s.b) {
				return nil, malformed("unexpected end of the body in a string")
			}
			switch s.b[s.i+1] {
			case '"', '\\', '/', 'b', 'f', 'n', 'r', 't':
				s.i += 2
			case 'u':
				if _, ok := hex4(s.b[s.i+2:]); !ok {
					return nil, malformed("at byte %d: invalid \\u escape", s.i)
				}
				s.i += 6
			default:
				return nil, malformed("at byte %d: invalid escape \\%c", s.i, s.b[s.i+1])
			}
			continue
		case c >= utf8.RuneSelf:
			high = true
		}
		s.i++
	}
}

// unquote appends the decoded content of the string raw, whose escapes
// str has checked, to dst, stopping once it has appended more than limit
// bytes.
func unquote(dst, raw []byte, limit int) []byte {
	start := len(dst)
	for i := 0; i < len(raw) && len(dst)-start <= limit; {
		switch c := raw[i]; {
		case c == '\\':
			switch e := raw[i+1]; e {
			case 'b':
				dst = append(dst, '\b')
			case 'f':
				dst = append(dst, '\f')
			case 'n':
				dst = append(dst, '\n')
			case 'r':
				dst = append(dst, '\r')
			case 't':
				dst = append(dst, '\t')
			case 'u':
				r, _ := hex4(raw[i+2:])
				i += 6
				if utf16.IsSurrogate(r) {
					// A pair is one character; a lone surrogate is
					// replaced and what follows read on its own.
					if i+1 < len(raw) && raw[i] == '\\' && raw[i+1] == 'u' {
						if r2, ok := hex4(raw[i+2:]); ok {
							if pair := utf16.DecodeRune(r, r2); pair != utf8.RuneError {
								dst = utf8.AppendRune(dst, pair)
								i += 6
								continue
							}
						}
					}
					r = utf8.RuneError
				}
				dst = utf8.AppendRune(dst, r)
				continue
			default: // '"', '\\', '/'
				dst = append(dst, e)
			}
			i += 2
		case c < utf8.RuneSelf:
			dst = append(dst, c)
			i++
		default:
			r, n := utf8.DecodeRune(raw[i:])
			dst = utf8.AppendRune(dst, r)
			i += n
		}
	}
	return dst
}

// hex4 decodes the four hexadecimal digits at the start of b.
func hex4(b []byte) (rune, bool) {
	if len(b) < 4 {
		return 0, false
	}
	var r rune
	for _, c := range b[:4] {
		switch {
		case c >= '0' && c <= '9':
			c -= '0'
		case c >= 'a' && c <= 'f':
			c -= 'a' - 10
		case c >= 'A' && c <= 'F':
			c -= 'A' - 10
		default:
			return 0, false
		}
		r = r<<4 | rune(c)
	}
	return r, true
}

// number reads a number, -?(0|[1-9][0-9]*)(.[0-9]+)?([eE][+-]?[0-9]+)?,
// and reports whether it is well formed.
func (s *scanner) number() ([]byte, bool) {
	start := s.i
	digits := func() bool {
		n := s.i
		for s.i < len(s.b) && s.b[s.i] >= '0' && s.b[s.i] <= '9' {
			s.i++
		}
		return s.i > n
	}
	if s.b[s.i] == '-' {
		s.i++
	}
	switch {
	case s.i < len(s.b) && s.b[s.i] == '0':
		s.i++
	case !digits():
		return nil, false
	}
	if s.i < len(s.b) && s.b[s.i] == '.' {
		s.i++
		if !digits() {
			return nil, false
		}
	}
	if s.i < len(s.b) && (s.b[s.i] == 'e' || s.b[s.i] == 'E') {
		s.i++
		if s.i < len(s.b) && (s.b[s.i] == '+' || s.b[s.i] == '-') {
			s.i++
		}
		if !digits() {
			return nil, false
		}
	}
	return s.b[start:s.i], true
}
