package kbeam

import (
	"encoding/binary"
	"fmt"
	"math"
)

// The values that cross stage boundaries (blocks of rows, per-block
// statistics, the iteration state) have hand-written binary coders: a
// block of 1000 rows × 16 columns is 128 KB and crosses a boundary in
// every pass, and raw little-endian float64s encode and decode several
// times faster than a reflective coder. Every value starts with a version
// byte; decoding checks lengths and returns an error wrapping ErrCodec
// instead of panicking.

const codecVersion = 1

// wire appends values to a byte slice.
type wire struct{ b []byte }

func newWire(version byte, size int) *wire {
	w := &wire{b: make([]byte, 0, size+1)}
	w.b = append(w.b, version)
	return w
}

func (w *wire) u64(v uint64)  { w.b = binary.LittleEndian.AppendUint64(w.b, v) }
func (w *wire) i64(v int64)   { w.u64(uint64(v)) }
func (w *wire) f64(v float64) { w.u64(math.Float64bits(v)) }
func (w *wire) bool(v bool) {
	if v {
		w.b = append(w.b, 1)
	} else {
		w.b = append(w.b, 0)
	}
}

func (w *wire) f64s(s []float64) {
	w.u64(uint64(len(s)))
	for _, v := range s {
		w.f64(v)
	}
}

// optF64s writes nil as a distinct value from an empty slice.
func (w *wire) optF64s(s []float64) {
	w.bool(s != nil)
	if s != nil {
		w.f64s(s)
	}
}

func (w *wire) i64s(s []int64) {
	w.u64(uint64(len(s)))
	for _, v := range s {
		w.i64(v)
	}
}

func (w *wire) str(s string) {
	w.u64(uint64(len(s)))
	w.b = append(w.b, s...)
}

func (w *wire) strs(s []string) {
	w.bool(s != nil)
	if s == nil {
		return
	}
	w.u64(uint64(len(s)))
	for _, v := range s {
		w.str(v)
	}
}

// reader reads what wire wrote; the first error sticks.
type reader struct {
	b   []byte
	err error
}

func newReader(b []byte, what string) *reader {
	r := &reader{b: b}
	if len(b) == 0 {
		r.err = fmt.Errorf("%w: empty %s", ErrCodec, what)
		return r
	}
	if b[0] != codecVersion {
		r.err = fmt.Errorf("%w: %s of version %d, want %d", ErrCodec, what, b[0], codecVersion)
		return r
	}
	r.b = b[1:]
	return r
}

func (r *reader) fail(format string, a ...any) {
	if r.err == nil {
		r.err = fmt.Errorf("%w: "+format, append([]any{ErrCodec}, a...)...)
	}
}

func (r *reader) u64() uint64 {
	if r.err != nil {
		return 0
	}
	if len(r.b) < 8 {
		r.fail("truncated value")
		return 0
	}
	v := binary.LittleEndian.Uint64(r.b)
	r.b = r.b[8:]
	return v
}

func (r *reader) i64() int64   { return int64(r.u64()) }
func (r *reader) f64() float64 { return math.Float64frombits(r.u64()) }

func (r *reader) bool() bool {
	if r.err != nil {
		return false
	}
	if len(r.b) < 1 {
		r.fail("truncated value")
		return false
	}
	v := r.b[0]
	r.b = r.b[1:]
	if v > 1 {
		r.fail("bad flag %d", v)
	}
	return v == 1
}

// count reads a length and checks that at least n·size bytes remain, so
// that a corrupt length cannot make the decoder allocate without bound.
func (r *reader) count(size int) int {
	n := r.u64()
	if r.err != nil {
		return 0
	}
	if n > uint64(len(r.b)/max(1, size)) {
		r.fail("length %d exceeds the %d bytes left", n, len(r.b))
		return 0
	}
	return int(n)
}

func (r *reader) f64s() []float64 {
	n := r.count(8)
	if r.err != nil {
		return nil
	}
	s := make([]float64, n)
	for i := range s {
		s[i] = math.Float64frombits(binary.LittleEndian.Uint64(r.b[8*i:]))
	}
	r.b = r.b[8*n:]
	return s
}

func (r *reader) optF64s() []float64 {
	if !r.bool() {
		return nil
	}
	return r.f64s()
}

func (r *reader) i64s() []int64 {
	n := r.count(8)
	if r.err != nil {
		return nil
	}
	s := make([]int64, n)
	for i := range s {
		s[i] = int64(binary.LittleEndian.Uint64(r.b[8*i:]))
	}
	r.b = r.b[8*n:]
	return s
}

func (r *reader) str() string {
	n := r.count(1)
	if r.err != nil {
		return ""
	}
	s := string(r.b[:n])
	r.b = r.b[n:]
	return s
}

func (r *reader) strs() []string {
	if !r.bool() {
		return nil
	}
	n := r.count(8)
	if r.err != nil {
		return nil
	}
	s := make([]string, n)
	for i := range s {
		s[i] = r.str()
	}
	return s
}

// done reports the sticky error, or one for bytes left over.
func (r *reader) done(what string) error {
	if r.err == nil && len(r.b) != 0 {
		r.fail("%d bytes after the %s", len(r.b), what)
	}
	return r.err
}
