package serve

import (
	"fmt"
	"time"
)

// Default limits (see Limits). The row limit has no fixed default: it is
// derived from the body limit and the model's schema so that it can always
// be reached (see Limits.MaxRows).
const (
	DefaultMaxBody           = 1 << 20 // 1 MiB
	DefaultMaxModelBytes     = 16 << 20
	DefaultMaxModelValues    = 1 << 20 // k·d
	DefaultMaxHeaderBytes    = 64 << 10
	DefaultReadHeaderTimeout = 5 * time.Second
	DefaultReadTimeout       = 15 * time.Second
	DefaultWriteTimeout      = 30 * time.Second
	DefaultIdleTimeout       = 2 * time.Minute

	// RowBytes is the room per row that the default row limit allows:
	// a body of MaxBody bytes may hold MaxBody/RowBytes rows (fewer if
	// the model's shortest row is longer), which bounds the memory of
	// one request by the body limit whatever the rows look like.
	RowBytes = 128
)

// envelope is the request around the rows, as short as it can be written.
const envelope = `{"rows":[]}`

// Limits bound what one client can make the server read, hold and do. A
// zero field means its default; a negative field is refused by NewServer
// with an error wrapping ErrLimits.
//
// A request body is read whole (at most MaxBody bytes) before it is
// decoded, and rows are labelled as they are decoded, into 24 bytes each;
// nothing else grows with the request. Answering one POST /v1/assign
// allocates less than 4 × MaxBody bytes in all, garbage included, for any
// body: the tests measure at most 2.2 × for a body sent with a
// Content-Length and 3.2 × for one sent without (its buffer grows by
// doubling), the worst case being one number a megabyte long.
type Limits struct {
	// MaxBody is the largest POST /v1/assign body in bytes (default
	// DefaultMaxBody, 1 MiB). A larger body is answered 413.
	MaxBody int64
	// MaxRows is the most rows in one POST /v1/assign request; the 413
	// answer comes as soon as the decoder meets one row more. The
	// default is as many rows as fit in MaxBody when each row takes
	// RowBytes bytes or, if longer, as many bytes as the shortest row
	// the model accepts (every feature with the value 0) plus a comma:
	//
	//	(MaxBody − len(`{"rows":[]}`)) / max(RowBytes, shortest row + 1)
	//
	// so that the row limit is always reachable under the body limit
	// (8191 rows for the demo stations and 1 MiB).
	MaxRows int
	// MaxModelBytes and MaxModelValues bound a PUT /v1/model document:
	// its size in bytes (default DefaultMaxModelBytes, 16 MiB) and its
	// number of center values k·d (default DefaultMaxModelValues).
	MaxModelBytes  int64
	MaxModelValues int
	// MaxHeaderBytes bounds the request line and headers (default
	// DefaultMaxHeaderBytes, 64 KiB; larger ones are answered 431).
	// It and the timeouts below apply through Server.HTTPServer.
	MaxHeaderBytes int
	// ReadHeaderTimeout is the time allowed to read the request headers
	// (default 5 s), ReadTimeout the time to read the whole request,
	// body included (default 15 s; a body still arriving then is answered
	// 408), WriteTimeout the time from the end of the headers to the end
	// of the response (default 30 s) and IdleTimeout how long a
	// keep-alive connection may wait for its next request (default 2 min).
	ReadHeaderTimeout time.Duration
	ReadTimeout       time.Duration
	WriteTimeout      time.Duration
	IdleTimeout       time.Duration
}

// resolve returns lim with its zero fields set to the defaults, the row
// limit derived from shortest (the length of the shortest row the model
// accepts), or an error wrapping ErrLimits for a negative field.
func (lim Limits) resolve(shortest int) (Limits, error) {
	for _, f := range []struct {
		name string
		v    int64
	}{
		{"MaxBody", lim.MaxBody}, {"MaxRows", int64(lim.MaxRows)},
		{"MaxModelBytes", lim.MaxModelBytes}, {"MaxModelValues", int64(lim.MaxModelValues)},
		{"MaxHeaderBytes", int64(lim.MaxHeaderBytes)},
		{"ReadHeaderTimeout", int64(lim.ReadHeaderTimeout)}, {"ReadTimeout", int64(lim.ReadTimeout)},
		{"WriteTimeout", int64(lim.WriteTimeout)}, {"IdleTimeout", int64(lim.IdleTimeout)},
	} {
		if f.v < 0 {
			return Limits{}, fmt.Errorf("%w: %s is %d, want ≥ 0 (0 means the default)", ErrLimits, f.name, f.v)
		}
	}
	def := func(v *int64, d int64) {
		if *v == 0 {
			*v = d
		}
	}
	def(&lim.MaxBody, DefaultMaxBody)
	def(&lim.MaxModelBytes, DefaultMaxModelBytes)
	def((*int64)(&lim.ReadHeaderTimeout), int64(DefaultReadHeaderTimeout))
	def((*int64)(&lim.ReadTimeout), int64(DefaultReadTimeout))
	def((*int64)(&lim.WriteTimeout), int64(DefaultWriteTimeout))
	def((*int64)(&lim.IdleTimeout), int64(DefaultIdleTimeout))
	if lim.MaxModelValues == 0 {
		lim.MaxModelValues = DefaultMaxModelValues
	}
	if lim.MaxHeaderBytes == 0 {
		lim.MaxHeaderBytes = DefaultMaxHeaderBytes
	}
	if lim.MaxRows == 0 {
		lim.MaxRows = int(max(1, (lim.MaxBody-int64(len(envelope)))/int64(max(RowBytes, shortest+1))))
	}
	return lim, nil
}

// shortestRow returns the length in bytes of the shortest JSON object that
// gives every feature a value: {"name":0,...} with each name written
// without escapes but for '"' and '\'.
func shortestRow(names []string) int {
	n := 2 + max(0, len(names)-1) // braces and commas
	for _, name := range names {
		n += len(name) + 4 // quotes, colon, 0
		for i := range len(name) {
			if name[i] == '"' || name[i] == '\\' {
				n++
			}
		}
	}
	return n
}
