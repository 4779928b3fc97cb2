package kmeans

import (
	"bytes"
	"fmt"
	"strconv"
	"strings"
	"unicode/utf8"
)

// jsonReader reads a JSON text (RFC 8259) held in memory one value at a
// time, for the model decoder. It builds no tree and allocates nothing but
// the strings it returns, so the decoder can hold every array to the
// length the document declares while reading it, before storing anything
// in proportion to it.
//
// It is stricter than encoding/json: strings must be valid UTF-8 and may
// not hold lone surrogate escapes, object member names must be spelled
// without escapes, and containers may nest at most maxDepth deep. Member
// names are matched exactly (case-sensitively), and a name may appear once
// per object; see member.
//
// Errors wrap ErrModel and give the byte offset.
type jsonReader struct {
	b []byte
	i int // offset of the next byte to read
}

// maxDepth is how deeply containers may nest in a model document. The
// document needs 4 (top object, training, clusters, one cluster); the
// margin lets a slightly wrong document fail on its content rather than
// on depth.
const maxDepth = 8

// quoteMax is the length to which names and values are cut in error
// messages, so that an error never grows with a hostile document.
const quoteMax = 40

// quote returns s quoted for an error message, cut to quoteMax bytes.
func quote[S ~string | ~[]byte](s S) string {
	if len(s) > quoteMax {
		return strconv.Quote(string(s[:quoteMax])) + "…"
	}
	return strconv.Quote(string(s))
}

func (r *jsonReader) errorf(format string, args ...any) error {
	return fmt.Errorf("%w: offset %d: %s", ErrModel, r.i, fmt.Sprintf(format, args...))
}

// space skips white space.
func (r *jsonReader) space() {
	for r.i < len(r.b) {
		switch r.b[r.i] {
		case ' ', '\t', '\n', '\r':
			r.i++
		default:
			return
		}
	}
}

// peek skips white space and returns the next byte, or 0 at the end.
func (r *jsonReader) peek() byte {
	r.space()
	if r.i == len(r.b) {
		return 0
	}
	return r.b[r.i]
}

// found describes what comes next, for error messages.
func (r *jsonReader) found() string {
	switch c := r.peek(); {
	case r.i == len(r.b):
		return "the end of the document"
	case c == '{':
		return "an object"
	case c == '[':
		return "an array"
	case c == '"':
		return "a string"
	case c == 'n':
		return "null"
	case c == 't' || c == 'f':
		return "a boolean"
	case c == '-' || '0' <= c && c <= '9':
		return "a number"
	case c < utf8.RuneSelf:
		return strconv.QuoteRune(rune(c))
	default:
		return fmt.Sprintf("byte %#02x", c)
	}
}

// want returns the error for finding something other than what.
func (r *jsonReader) want(what string) error {
	return r.errorf("want %s, found %s", what, r.found())
}

// open consumes the delimiter c ('{' or '[') that opens what.
func (r *jsonReader) open(c byte, what string) error {
	if r.peek() != c {
		return r.want(what)
	}
	r.i++
	return nil
}

// more reports whether another element follows in the array or object
// whose closing delimiter is end, after n elements have been read. It
// consumes the comma before the element, or end after the last one.
func (r *jsonReader) more(end byte, n int) (bool, error) {
	c := r.peek()
	if c == end {
		r.i++
		return false, nil
	}
	if n > 0 {
		if c != ',' {
			return false, r.errorf("want ',' or '%c', found %s", end, r.found())
		}
		r.i++
	}
	return true, nil
}

// null consumes null if it comes next and reports whether it did.
func (r *jsonReader) null() bool {
	if r.peek() == 'n' && bytes.HasPrefix(r.b[r.i:], []byte("null")) {
		r.i += 4
		return true
	}
	return false
}

// member reads the name of the next member of an object in where whose
// only members are names, and the colon after it, and returns the index of
// the name in names. The name must be one of names exactly, spelled
// without escapes (a reader that decodes "\u006b" to "k", or matches "K"
// to "k" as encoding/json does, would see a member this one does not), and
// not already in seen, which records the members read so far (one bit per
// index; names has at most 64 entries).
func (r *jsonReader) member(names []string, seen *uint64, where string) (int, error) {
	if r.peek() != '"' {
		return 0, r.want("a member name")
	}
	at := r.i
	j := r.i + 1
	for j < len(r.b) && r.b[j] != '"' && r.b[j] != '\\' && r.b[j] >= 0x20 {
		j++
	}
	r.i = j
	switch {
	case j == len(r.b):
		return 0, r.errorf("unterminated member name")
	case r.b[j] != '"':
		return 0, r.errorf("%s: a member name must be spelled without escapes or control characters", where)
	}
	key := r.b[at+1 : j]
	idx := -1
	for q, name := range names {
		if string(key) == name {
			idx = q
			break
		}
	}
	if idx < 0 {
		r.i = at
		for _, name := range names {
			if strings.EqualFold(string(key), name) {
				return 0, r.errorf("%s: unknown member %s (names are case-sensitive: %q)", where, quote(key), name)
			}
		}
		return 0, r.errorf("%s: unknown member %s", where, quote(key))
	}
	if *seen&(1<<idx) != 0 {
		r.i = at
		return 0, r.errorf("%s: member %q appears twice", where, names[idx])
	}
	*seen |= 1 << idx
	r.i = j + 1
	if r.peek() != ':' {
		return 0, r.want("':'")
	}
	r.i++
	return idx, nil
}

// missing returns the error for the object at offset at in where that
// lacks one of the members in need (a bit set as member's seen).
func (r *jsonReader) missing(names []string, seen, need uint64, where string, at int) error {
	for q, name := range names {
		if need&(1<<q) != 0 && seen&(1<<q) == 0 {
			r.i = at
			return r.errorf("%s: member %q is missing", where, name)
		}
	}
	return nil
}

// str reads a string of at most max bytes once decoded; what names it in
// errors.
func (r *jsonReader) str(max int, what string) (string, error) {
	if r.peek() != '"' {
		return "", r.want(what)
	}
	// Without escapes the string is its own bytes.
	j := r.i + 1
	for j < len(r.b) && r.b[j] != '"' && r.b[j] != '\\' && r.b[j] >= 0x20 && r.b[j] < utf8.RuneSelf {
		j++
	}
	if j < len(r.b) && r.b[j] == '"' {
		if j-r.i-1 > max {
			return "", r.errorf("%s is longer than %d bytes", what, max)
		}
		s := string(r.b[r.i+1 : j])
		r.i = j + 1
		return s, nil
	}
	buf := make([]byte, 0, min(max, 64))
	if err := r.scanString(&buf, max, what); err != nil {
		return "", err
	}
	return string(buf), nil
}

// scanString reads a string, checking its escapes and UTF-8. If dst is not
// nil, it appends the decoded string to *dst, failing if that would take
// *dst past max bytes; what names the string in that error.
func (r *jsonReader) scanString(dst *[]byte, max int, what string) error {
	r.i++ // the opening quote
	var enc [utf8.UTFMax]byte
	put := func(p []byte) error {
		if dst == nil {
			return nil
		}
		if len(*dst)+len(p) > max {
			return r.errorf("%s is longer than %d bytes", what, max)
		}
		*dst = append(*dst, p...)
		return nil
	}
	for r.i < len(r.b) {
		// A run of plain bytes, then one that is not.
		start := r.i
		for r.i < len(r.b) && r.b[r.i] != '"' && r.b[r.i] != '\\' && r.b[r.i] >= 0x20 && r.b[r.i] < utf8.RuneSelf {
			r.i++
		}
		if err := put(r.b[start:r.i]); err != nil {
			return err
		}
		if r.i == len(r.b) {
			break
		}
		switch c := r.b[r.i]; {
		case c == '"':
			r.i++
			return nil
		case c < 0x20:
			return r.errorf("control character %U in a string", c)
		case c >= utf8.RuneSelf:
			ru, size := utf8.DecodeRune(r.b[r.i:])
			if ru == utf8.RuneError && size <= 1 {
				return r.errorf("a string is not valid UTF-8")
			}
			if err := put(r.b[r.i : r.i+size]); err != nil {
				return err
			}
			r.i += size
		default: // backslash
			ru, err := r.escape()
			if err != nil {
				return err
			}
			if err := put(utf8.AppendRune(enc[:0], ru)); err != nil {
				return err
			}
		}
	}
	return r.errorf("unterminated string")
}

// escape reads an escape sequence (the backslash is next) and returns the
// rune it stands for; a surrogate pair makes one rune, a lone surrogate is
// an error.
func (r *jsonReader) escape() (rune, error) {
	if r.i+1 >= len(r.b) {
		return 0, r.errorf("unterminated escape")
	}
	c := r.b[r.i+1]
	r.i += 2
	switch c {
	case '"', '\\', '/':
		return rune(c), nil
	case 'b':
		return '\b', nil
	case 'f':
		return '\f', nil
	case 'n':
		return '\n', nil
	case 'r':
		return '\r', nil
	case 't':
		return '\t', nil
	case 'u':
		hi, ok := r.hex4()
		if !ok {
			return 0, r.errorf("malformed \\u escape")
		}
		switch {
		case hi < 0xd800 || hi > 0xdfff:
			return hi, nil
		case hi <= 0xdbff && r.i+1 < len(r.b) && r.b[r.i] == '\\' && r.b[r.i+1] == 'u':
			r.i += 2
			lo, ok := r.hex4()
			if ok && 0xdc00 <= lo && lo <= 0xdfff {
				return 0x10000 + (hi-0xd800)<<10 + (lo - 0xdc00), nil
			}
		}
		return 0, r.errorf("lone surrogate in a \\u escape")
	}
	r.i--
	return 0, r.errorf("unknown escape \\%c", c)
}

// hex4 reads four hexadecimal digits.
func (r *jsonReader) hex4() (rune, bool) {
	if r.i+4 > len(r.b) {
		return 0, false
	}
	var v rune
	for _, c := range r.b[r.i : r.i+4] {
		switch {
		case '0' <= c && c <= '9':
			c -= '0'
		case 'a' <= c && c <= 'f':
			c -= 'a' - 10
		case 'A' <= c && c <= 'F':
			c -= 'A' - 10
		default:
			return 0, false
		}
		v = v<<4 | rune(c)
	}
	r.i += 4
	return v, true
}

// numberLiteral reads a number as RFC 8259 spells it and returns its
// literal and whether it is an integer (no fraction, no exponent); what
// and form ("a number") say what is wanted, in errors.
func (r *jsonReader) numberLiteral(what, form string) ([]byte, bool, error) {
	r.space()
	b, start := r.b, r.i
	j := start
	digits := func() bool {
		from := j
		for j < len(b) && '0' <= b[j] && b[j] <= '9' {
			j++
		}
		return j > from
	}
	if j < len(b) && b[j] == '-' {
		j++
	}
	switch {
	case j < len(b) && b[j] == '0':
		j++
	case j < len(b) && '1' <= b[j] && b[j] <= '9':
		digits()
	default:
		if j > start {
			r.i = j
			return nil, false, r.errorf("malformed number")
		}
		if what == "" {
			return nil, false, r.want(form)
		}
		return nil, false, r.want(what + " (" + form + ")")
	}
	integer := true
	if j < len(b) && b[j] == '.' {
		j++
		if !digits() {
			r.i = j
			return nil, false, r.errorf("malformed number")
		}
		integer = false
	}
	if j < len(b) && (b[j] == 'e' || b[j] == 'E') {
		j++
		if j < len(b) && (b[j] == '+' || b[j] == '-') {
			j++
		}
		if !digits() {
			r.i = j
			return nil, false, r.errorf("malformed number")
		}
		integer = false
	}
	r.i = j
	return b[start:j], integer, nil
}

// number reads a finite number; what names it in errors.
func (r *jsonReader) number(what string) (float64, error) {
	lit, _, err := r.numberLiteral(what, "a number")
	if err != nil {
		return 0, err
	}
	// strconv does not keep its argument, so short literals convert on
	// the stack.
	v, err := strconv.ParseFloat(string(lit), 64)
	if err != nil {
		return 0, r.errorf("%s: number %s is out of range", what, quote(lit))
	}
	return v, nil
}

// integer reads an integer that fits an int, written without fraction or
// exponent as encoding/json requires for an int; what names it in errors.
func (r *jsonReader) integer(what string) (int, error) {
	lit, integer, err := r.numberLiteral(what, "an integer")
	if err != nil {
		return 0, err
	}
	if !integer {
		return 0, r.errorf("%s: %s is not an integer", what, quote(lit))
	}
	v, err := strconv.ParseInt(string(lit), 10, 0)
	if err != nil {
		return 0, r.errorf("%s: %s is out of range", what, quote(lit))
	}
	return int(v), nil
}

// skip reads one value of any kind, nested depth deep, checking it as the
// typed reads do.
func (r *jsonReader) skip(depth int) error {
	switch c := r.peek(); c {
	case '{', '[':
		if depth >= maxDepth {
			return r.errorf("values nested deeper than %d", maxDepth)
		}
		end := byte('}')
		if c == '[' {
			end = ']'
		}
		r.i++
		for n := 0; ; n++ {
			more, err := r.more(end, n)
			if err != nil {
				return err
			}
			if !more {
				return nil
			}
			if c == '{' {
				if err := r.anyMember(); err != nil {
					return err
				}
			}
			if err := r.skip(depth + 1); err != nil {
				return err
			}
		}
	case '"':
		return r.scanString(nil, 0, "")
	case 't', 'f', 'n':
		for _, word := range [...]string{"true", "false", "null"} {
			if bytes.HasPrefix(r.b[r.i:], []byte(word)) {
				r.i += len(word)
				return nil
			}
		}
		return r.want("a value")
	}
	_, _, err := r.numberLiteral("", "a value")
	return err
}

// anyMember reads a member name and its colon without matching it; names
// are matched where their object is read.
func (r *jsonReader) anyMember() error {
	if r.peek() != '"' {
		return r.want("a member name")
	}
	if err := r.scanString(nil, 0, ""); err != nil {
		return err
	}
	if r.peek() != ':' {
		return r.want("':'")
	}
	r.i++
	return nil
}

// end checks that nothing but white space follows.
func (r *jsonReader) end() error {
	if r.peek() != 0 || r.i != len(r.b) {
		return r.errorf("data after the document")
	}
	return nil
}
