package serve

import (
	"crypto/sha256"
	"crypto/subtle"
	"encoding/json"
	"errors"
	"fmt"
	"log/slog"
	"mime"
	"net"
	"net/http"
	"strconv"
	"strings"
	"sync/atomic"
	"time"

	"github.com/centroidlab/centroid/kmeans"
)

// Options configure a Server. A nil *Options and every zero field mean the
// defaults: the default Limits, no logs and no model swaps over HTTP.
type Options struct {
	// Limits bound requests; zero fields mean the defaults.
	Limits Limits
	// AdminToken, if not empty, enables PUT /v1/model for requests that
	// carry it as "Authorization: Bearer <token>". Empty (the default)
	// disables the endpoint: every PUT is answered 403 and the model
	// changes only through Server.Swap. The server keeps only a hash of
	// the token; it never writes the token to a response or a log. Take it
	// from the environment or a file, never from a command-line flag,
	// which other users of the machine can read.
	AdminToken string
	// Logger receives one line per request (method, path, status, bytes,
	// duration, remote address; no header, query or body), one per model
	// swap, and the errors of the http.Server made by HTTPServer. Nil
	// discards them.
	Logger *slog.Logger
}

// Server answers the HTTP API of one served model (see the package
// documentation): labels rows given by feature name, serves the model
// document, swaps the model when configured to, and reports drift, health
// and its own counters. Create it with NewServer and mount Handler, or
// start the *http.Server of HTTPServer, which also applies the header
// limit and the timeouts.
//
// Its methods are safe for concurrent use by multiple goroutines.
type Server struct {
	holder   Holder
	schema   *schema
	shortest int // bytes of the shortest row the schema accepts
	lim      Limits
	token    *[sha256.Size]byte // hash of the admin token; nil: swaps disabled
	log      *slog.Logger
	stats    counters
}

// counters are the Server's own counters (see Stats).
type counters struct {
	requests, rowsAssigned, rowsRejected atomic.Int64
	swaps, swapsRefused                  atomic.Int64
	status                               [500]atomic.Int64 // 100 to 599
}

// NewServer returns a server that starts with model m. It returns an
// error wrapping kmeans.ErrModel if m is nil or has no centers,
// kmeans.ErrSchema if m has no feature names (rows are given by name, so
// every request would be refused; see kmeans.Model.WithFeatures), or
// ErrLimits for a negative limit. Every later model must have the same
// features in the same order (SameSchema).
func NewServer(m *kmeans.Model, opts *Options) (*Server, error) {
	var o Options
	if opts != nil {
		o = *opts
	}
	if m == nil || m.K() == 0 {
		return nil, fmt.Errorf("%w: no model to serve", kmeans.ErrModel)
	}
	if !m.HasSchema() {
		return nil, fmt.Errorf("%w: the model has no feature names, and rows are assigned by name: "+
			"name its features (kmeans.Model.WithFeatures) before serving it", kmeans.ErrSchema)
	}
	names := m.Features()
	shortest := shortestRow(names)
	lim, err := o.Limits.resolve(shortest)
	if err != nil {
		return nil, err
	}
	s := &Server{schema: newSchema(names), shortest: shortest, lim: lim, log: o.Logger}
	if s.log == nil {
		s.log = slog.New(slog.DiscardHandler)
	}
	s.holder.Accept = func(current, next *kmeans.Model) error {
		if !next.HasSchema() {
			return fmt.Errorf("%w: the new model has no feature names", kmeans.ErrSchema)
		}
		return SameSchema(current, next)
	}
	if _, err := s.holder.Swap(m); err != nil {
		return nil, err
	}
	if o.AdminToken != "" {
		h := sha256.Sum256([]byte(o.AdminToken))
		s.token = &h
	}
	return s, nil
}

// Limits returns the limits in force, defaults resolved.
func (s *Server) Limits() Limits { return s.lim }

// SwapsEnabled reports whether PUT /v1/model may replace the model (the
// server has an admin token).
func (s *Server) SwapsEnabled() bool { return s.token != nil }

// Model returns the model being served.
func (s *Server) Model() *kmeans.Model { return s.holder.Model() }

// Served returns the model being served with its checksum, drift monitor
// and document.
func (s *Server) Served() *Served { return s.holder.Load() }

// Swap installs next as PUT /v1/model does, whether or not swaps over HTTP
// are enabled, and returns what it replaced. It refuses, keeping the
// current model, a model that Holder.Swap refuses or whose features differ
// from the current model's (an error wrapping kmeans.ErrSchema).
func (s *Server) Swap(next *kmeans.Model) (*Served, error) {
	prev, err := s.holder.Swap(next)
	if err != nil {
		s.stats.swapsRefused.Add(1)
		return nil, err
	}
	s.stats.swaps.Add(1)
	now := s.holder.Load()
	s.log.Info("model swapped", "from", prev.Checksum, "to", now.Checksum, "k", next.K())
	return prev, nil
}

// Stats are a Server's counters since NewServer, as GET /debug/vars shows
// them under "service".
type Stats struct {
	// Model is the checksum of the model being served.
	Model string `json:"model"`
	// SwapsEnabled reports whether PUT /v1/model may replace the model.
	SwapsEnabled bool `json:"swaps_enabled"`
	// Requests counts the requests answered.
	Requests int64 `json:"requests"`
	// RowsAssigned counts the rows labelled; RowsRejected the requests
	// refused because of one of their rows.
	RowsAssigned int64 `json:"rows_assigned"`
	RowsRejected int64 `json:"rows_rejected"`
	// Swaps and SwapsRefused count the models installed and refused after
	// NewServer (PUT /v1/model and Swap).
	Swaps        int64 `json:"model_swaps"`
	SwapsRefused int64 `json:"model_swaps_refused"`
	// Responses counts the responses by status code.
	Responses map[string]int64 `json:"responses_by_status"`
}

// Stats returns the server's counters.
func (s *Server) Stats() Stats {
	st := Stats{
		Model:        s.holder.Load().Checksum,
		SwapsEnabled: s.SwapsEnabled(),
		Requests:     s.stats.requests.Load(),
		RowsAssigned: s.stats.rowsAssigned.Load(),
		RowsRejected: s.stats.rowsRejected.Load(),
		Swaps:        s.stats.swaps.Load(),
		SwapsRefused: s.stats.swapsRefused.Load(),
		Responses:    map[string]int64{},
	}
	for i := range s.stats.status {
		if n := s.stats.status[i].Load(); n > 0 {
			st.Responses[strconv.Itoa(100+i)] = n
		}
	}
	return st
}

// Handler returns the HTTP API. Every response, errors included, is JSON.
func (s *Server) Handler() http.Handler {
	mux := http.NewServeMux()
	mux.HandleFunc("POST /v1/assign", s.assign)
	mux.HandleFunc("GET /v1/model", s.getModel)
	mux.HandleFunc("PUT /v1/model", s.putModel)
	mux.HandleFunc("GET /v1/drift", s.drift)
	mux.HandleFunc("GET /healthz", s.health)
	mux.HandleFunc("GET /debug/vars", s.vars)
	modelMethods := "GET, HEAD"
	if s.SwapsEnabled() {
		modelMethods += ", PUT"
	}
	// Method-less patterns catch the wrong methods with a JSON 405.
	for path, allow := range map[string]string{
		"/v1/assign": "POST", "/v1/model": modelMethods, "/v1/drift": "GET, HEAD",
		"/healthz": "GET, HEAD", "/debug/vars": "GET, HEAD",
	} {
		mux.HandleFunc(path, func(w http.ResponseWriter, r *http.Request) {
			w.Header().Set("Allow", allow)
			writeError(w, http.StatusMethodNotAllowed, "method %s not allowed on %s", r.Method, path)
		})
	}
	mux.HandleFunc("/", func(w http.ResponseWriter, r *http.Request) {
		writeError(w, http.StatusNotFound, "no such endpoint %s", r.URL.Path)
	})
	return s.middleware(mux)
}

// HTTPServer returns an *http.Server for Handler with the header limit
// and the timeouts of the server's Limits, its errors logged to the
// Options' Logger. Set its Addr and call ListenAndServe, or call Serve
// with a listener; stop it with Shutdown, which lets requests in flight
// finish.
func (s *Server) HTTPServer() *http.Server {
	return &http.Server{
		Handler:           s.Handler(),
		MaxHeaderBytes:    s.lim.MaxHeaderBytes,
		ReadHeaderTimeout: s.lim.ReadHeaderTimeout,
		ReadTimeout:       s.lim.ReadTimeout,
		WriteTimeout:      s.lim.WriteTimeout,
		IdleTimeout:       s.lim.IdleTimeout,
		ErrorLog:          slog.NewLogLogger(s.log.Handler(), slog.LevelWarn),
	}
}

// statusWriter records the status and size of a response.
type statusWriter struct {
	http.ResponseWriter
	status int
	bytes  int
}

func (w *statusWriter) WriteHeader(code int) {
	if w.status == 0 {
		w.status = code
	}
	w.ResponseWriter.WriteHeader(code)
}

func (w *statusWriter) Write(b []byte) (int, error) {
	if w.status == 0 {
		w.status = http.StatusOK
	}
	n, err := w.ResponseWriter.Write(b)
	w.bytes += n
	return n, err
}

// middleware counts and logs every request and turns a panic into a JSON
// 500 instead of a dropped connection.
func (s *Server) middleware(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		start := time.Now()
		sw := &statusWriter{ResponseWriter: w}
		defer func() {
			if p := recover(); p != nil {
				if p == http.ErrAbortHandler {
					panic(p)
				}
				s.log.Error("panic", "method", r.Method, "path", r.URL.Path, "panic", fmt.Sprint(p))
				if sw.status == 0 {
					writeError(sw, http.StatusInternalServerError, "internal error")
				}
			}
			s.stats.requests.Add(1)
			if sw.status >= 100 && sw.status < 600 {
				s.stats.status[sw.status-100].Add(1)
			}
			s.log.Info("request", "method", r.Method, "path", r.URL.Path, "status", sw.status,
				"bytes", sw.bytes, "duration_ms", float64(time.Since(start).Microseconds())/1000, "remote", r.RemoteAddr)
		}()
		next.ServeHTTP(sw, r)
	})
}

// errorBody is the JSON body of every error response.
type errorBody struct {
	Error string `json:"error"`
	// Row, Field and Problem locate a row that was refused.
	Row     *int   `json:"row,omitempty"`
	Field   string `json:"field,omitempty"`
	Problem string `json:"problem,omitempty"`
}

func writeError(w http.ResponseWriter, status int, format string, args ...any) {
	writeJSON(w, status, errorBody{Error: fmt.Sprintf(format, args...)})
}

func writeJSON(w http.ResponseWriter, status int, v any) {
	b, err := json.Marshal(v)
	if err != nil {
		status, b = http.StatusInternalServerError, []byte(`{"error":"encoding the response failed"}`)
	}
	setJSON(w)
	w.WriteHeader(status)
	w.Write(append(b, '\n'))
}

func setJSON(w http.ResponseWriter) {
	w.Header().Set("Content-Type", "application/json")
	w.Header().Set("X-Content-Type-Options", "nosniff")
}

// requireJSON refuses a request body that is not declared as JSON.
func requireJSON(w http.ResponseWriter, r *http.Request) bool {
	mt, _, err := mime.ParseMediaType(r.Header.Get("Content-Type"))
	if err != nil || mt != "application/json" {
		writeError(w, http.StatusUnsupportedMediaType, "Content-Type must be application/json, got %q", r.Header.Get("Content-Type"))
		return false
	}
	return true
}

// writeRequestError writes the response for an error reading or decoding
// a request body.
func writeRequestError(w http.ResponseWriter, err error) {
	var tooBig *http.MaxBytesError
	var re *requestError
	var fe *FieldError
	var ne net.Error
	switch {
	case errors.As(err, &tooBig):
		writeError(w, http.StatusRequestEntityTooLarge, "request body larger than %d bytes", tooBig.Limit)
	case errors.As(err, &re):
		body := errorBody{Error: re.Error()}
		if re.row >= 0 {
			body.Row = &re.row
		}
		if errors.As(err, &fe) {
			body.Field, body.Problem = fe.Field, fe.Problem
		} else if errors.Is(err, kmeans.ErrNotFinite) {
			body.Problem = FieldNotFinite
		}
		writeJSON(w, re.status, body)
	case errors.As(err, &ne) && ne.Timeout():
		writeError(w, http.StatusRequestTimeout, "the request body did not arrive in time")
	default:
		writeError(w, http.StatusBadRequest, "reading the request body: %v", err)
	}
}

// assign labels a batch of rows given by feature name.
func (s *Server) assign(w http.ResponseWriter, r *http.Request) {
	if !requireJSON(w, r) {
		return
	}
	served := s.holder.Load()
	body, err := readBody(w, r, s.lim.MaxBody)
	if err != nil {
		writeRequestError(w, err)
		return
	}
	// Each row takes at least s.shortest bytes and a comma: room for
	// every row the body can hold, allocated once.
	out := make([]kmeans.Assignment, 0, min(s.lim.MaxRows, len(body)/(s.shortest+1)+1))
	_, err = decodeAssign(body, s.schema, s.lim.MaxRows, func(_ int, row []float64) error {
		a, err := served.Model.Assign(row)
		if err != nil {
			return err
		}
		out = append(out, a)
		return nil
	})
	if err != nil {
		var re *requestError
		if errors.As(err, &re) && re.row >= 0 {
			s.stats.rowsRejected.Add(1)
			if served.Drift != nil {
				served.Drift.ObserveError(err)
			}
		}
		writeRequestError(w, err)
		return
	}
	if served.Drift != nil {
		served.Drift.ObserveBatch(out)
	}
	s.stats.rowsAssigned.Add(int64(len(out)))
	writeAssignments(w, served.Checksum, out)
}

// writeAssignments writes the 200 response of POST /v1/assign through a
// small buffer. Floats are written in the shortest form that parses back
// to the same bits; a margin of +Inf (a single cluster, or a runner-up
// too far to measure) is written as null.
func writeAssignments(w http.ResponseWriter, model string, as []kmeans.Assignment) {
	setJSON(w)
	w.WriteHeader(http.StatusOK)
	b := make([]byte, 0, 8<<10)
	b = append(b, `{"model":`...)
	b = strconv.AppendQuote(b, model)
	b = append(b, `,"assignments":[`...)
	for i, a := range as {
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, `{"cluster":`...)
		b = strconv.AppendInt(b, int64(a.Cluster), 10)
		b = append(b, `,"distance":`...)
		b = strconv.AppendFloat(b, a.Distance, 'g', -1, 64)
		b = append(b, `,"margin":`...)
		if a.Margin > 1.7976931348623157e308 {
			b = append(b, "null"...)
		} else {
			b = strconv.AppendFloat(b, a.Margin, 'g', -1, 64)
		}
		b = append(b, '}')
		if len(b) > 7<<10 {
			if _, err := w.Write(b); err != nil {
				return
			}
			b = b[:0]
		}
	}
	w.Write(append(b, "]}\n"...))
}

// getModel serves the model document, encoded once per installed model,
// and answers 304 to a request whose If-None-Match holds its ETag.
func (s *Server) getModel(w http.ResponseWriter, r *http.Request) {
	served := s.holder.Load()
	etag := strconv.Quote(served.Checksum)
	w.Header().Set("ETag", etag)
	w.Header().Set("Cache-Control", "no-cache")
	if etagMatches(r.Header.Values("If-None-Match"), etag) {
		w.WriteHeader(http.StatusNotModified)
		return
	}
	doc, err := served.Document()
	if err != nil {
		writeError(w, http.StatusInternalServerError, "encoding the model: %v", err)
		return
	}
	setJSON(w)
	w.Header().Set("Content-Length", strconv.Itoa(len(doc)+1))
	w.WriteHeader(http.StatusOK)
	w.Write(doc)
	w.Write([]byte{'\n'})
}

// etagMatches reports whether any If-None-Match value lists etag, or is
// "*" (weak comparison, as RFC 9110 section 13.1.2 prescribes for
// If-None-Match).
func etagMatches(values []string, etag string) bool {
	for _, v := range values {
		for tag := range strings.SplitSeq(v, ",") {
			tag = strings.TrimSpace(tag)
			if tag == "*" || strings.TrimPrefix(tag, "W/") == etag {
				return true
			}
		}
	}
	return false
}

// authorized reports whether r carries the admin token as a bearer token.
// It compares hashes in constant time, so the time taken tells nothing of
// the token, not even its length.
func (s *Server) authorized(r *http.Request) bool {
	scheme, got, ok := strings.Cut(r.Header.Get("Authorization"), " ")
	if !ok || !strings.EqualFold(scheme, "Bearer") {
		return false
	}
	h := sha256.Sum256([]byte(got))
	return subtle.ConstantTimeCompare(h[:], s.token[:]) == 1
}

// putModel installs a new model document: validated, same schema, atomic.
func (s *Server) putModel(w http.ResponseWriter, r *http.Request) {
	if s.token == nil {
		writeError(w, http.StatusForbidden, "model swaps are disabled: the server was started without an admin token, so PUT /v1/model cannot replace the model")
		return
	}
	if !s.authorized(r) {
		w.Header().Set("WWW-Authenticate", `Bearer realm="model"`)
		writeError(w, http.StatusUnauthorized, "PUT /v1/model needs the admin token as a bearer token")
		return
	}
	if !requireJSON(w, r) {
		s.stats.swapsRefused.Add(1)
		return
	}
	lim := &kmeans.DecodeLimits{MaxBytes: s.lim.MaxModelBytes, MaxValues: s.lim.MaxModelValues}
	var m *kmeans.Model
	err := error(&http.MaxBytesError{Limit: s.lim.MaxModelBytes})
	if r.ContentLength <= s.lim.MaxModelBytes {
		// One byte more than the decoder accepts, so that it reports
		// ErrTooLarge itself.
		m, err = kmeans.ReadModel(http.MaxBytesReader(w, r.Body, s.lim.MaxModelBytes+1), lim)
	}
	if err != nil {
		s.stats.swapsRefused.Add(1)
		var tooBig *http.MaxBytesError
		switch {
		case errors.Is(err, kmeans.ErrTooLarge), errors.As(err, &tooBig):
			writeError(w, http.StatusRequestEntityTooLarge, "model document larger than the limits (%d bytes, %d values): %v",
				s.lim.MaxModelBytes, s.lim.MaxModelValues, err)
		default:
			var ne net.Error
			if errors.As(err, &ne) && ne.Timeout() {
				writeError(w, http.StatusRequestTimeout, "the model document did not arrive in time")
				return
			}
			writeError(w, http.StatusUnprocessableEntity, "%v", err)
		}
		return
	}
	prev, err := s.Swap(m)
	if err != nil {
		status := http.StatusUnprocessableEntity
		if errors.Is(err, kmeans.ErrSchema) {
			status = http.StatusConflict
		}
		writeError(w, status, "%v", err)
		return
	}
	writeJSON(w, http.StatusOK, map[string]any{"model": s.holder.Load().Checksum, "previous": prev.Checksum, "k": m.K()})
}

// driftBody is the GET /v1/drift response.
type driftBody struct {
	Model string `json:"model"`
	DriftSnapshot
}

func (s *Server) drift(w http.ResponseWriter, r *http.Request) {
	served := s.holder.Load()
	if served.Drift == nil {
		writeError(w, http.StatusNotFound, "the served model %s has no training summary to compare with", served.Checksum)
		return
	}
	writeJSON(w, http.StatusOK, driftBody{Model: served.Checksum, DriftSnapshot: served.Drift.Snapshot()})
}

func (s *Server) health(w http.ResponseWriter, r *http.Request) {
	served := s.holder.Load()
	writeJSON(w, http.StatusOK, map[string]any{
		"status": "ok", "model": served.Checksum, "k": served.Model.K(),
		"features": served.Model.Features(), "since": served.Since,
	})
}

// vars serves the server's own counters in the layout of package expvar
// (one variable, "service"), and nothing else of the process.
func (s *Server) vars(w http.ResponseWriter, r *http.Request) {
	writeJSON(w, http.StatusOK, map[string]Stats{"service": s.Stats()})
}
