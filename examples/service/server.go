package main

import (
	"crypto/subtle"
	"encoding/json"
	"errors"
	"expvar"
	"fmt"
	"io"
	"log/slog"
	"mime"
	"net/http"
	"strconv"
	"strings"
	"time"

	"github.com/centroidlab/centroid/kmeans/serve"

	"github.com/centroidlab/centroid/kmeans"
)

// Limits bound what a client may send.
type Limits struct {
	// MaxBody is the largest /v1/assign body in bytes.
	MaxBody int64
	// MaxRows is the largest number of rows in one /v1/assign request.
	MaxRows int
	// MaxModelBytes and MaxModelValues bound a PUT /v1/model document.
	MaxModelBytes  int64
	MaxModelValues int
}

// DefaultLimits are the limits of the command's flags.
var DefaultLimits = Limits{MaxBody: 1 << 20, MaxRows: 10000, MaxModelBytes: 16 << 20, MaxModelValues: 1 << 20}

// Server answers the HTTP API for one Holder. Create it with NewServer and
// mount Handler on an http.Server.
type Server struct {
	holder serve.Holder
	limits Limits
	token  string // admin token for PUT /v1/model; empty: no check
	log    *slog.Logger
	vars   *expvar.Map
	// Counters, also reachable through vars.
	requests, rowsAssigned, rowsRejected *expvar.Int
	swaps, swapsRefused                  *expvar.Int
	status                               *expvar.Map
}

// NewServer returns a server that starts with model m. A nil logger
// discards logs; token, if not empty, is required as a bearer token on
// PUT /v1/model.
func NewServer(m *kmeans.Model, limits Limits, token string, log *slog.Logger) (*Server, error) {
	if log == nil {
		log = slog.New(slog.DiscardHandler)
	}
	s := &Server{limits: limits, token: token, log: log, vars: new(expvar.Map).Init()}
	s.holder.Accept = serve.SameSchema
	if _, err := s.holder.Swap(m); err != nil {
		return nil, err
	}
	s.requests, s.rowsAssigned, s.rowsRejected = new(expvar.Int), new(expvar.Int), new(expvar.Int)
	s.swaps, s.swapsRefused = new(expvar.Int), new(expvar.Int)
	s.status = new(expvar.Map).Init()
	s.vars.Set("requests", s.requests)
	s.vars.Set("rows_assigned", s.rowsAssigned)
	s.vars.Set("rows_rejected", s.rowsRejected)
	s.vars.Set("model_swaps", s.swaps)
	s.vars.Set("model_swaps_refused", s.swapsRefused)
	s.vars.Set("responses_by_status", s.status)
	s.vars.Set("model", expvar.Func(func() any { return s.holder.Load().Checksum }))
	return s, nil
}

// Vars returns the server's counters, to be published with expvar.Publish
// (once per process).
func (s *Server) Vars() expvar.Var { return s.vars }

// Model returns the model being served.
func (s *Server) Model() *kmeans.Model { return s.holder.Model() }

// Handler returns the HTTP API. Every response, errors included, is JSON.
func (s *Server) Handler() http.Handler {
	mux := http.NewServeMux()
	mux.HandleFunc("POST /v1/assign", s.assign)
	mux.HandleFunc("GET /v1/model", s.getModel)
	mux.HandleFunc("PUT /v1/model", s.putModel)
	mux.HandleFunc("GET /v1/drift", s.drift)
	mux.HandleFunc("GET /healthz", s.health)
	mux.Handle("GET /debug/vars", expvar.Handler())
	// Method-less patterns catch the wrong methods with a JSON 405.
	for path, allow := range map[string]string{
		"/v1/assign": "POST", "/v1/model": "GET, HEAD, PUT", "/v1/drift": "GET, HEAD",
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
			s.requests.Add(1)
			s.status.Add(strconv.Itoa(sw.status), 1)
			s.log.Info("request", "method", r.Method, "path", r.URL.Path, "status", sw.status,
				"bytes", sw.bytes, "duration_ms", float64(time.Since(start).Microseconds())/1000, "remote", r.RemoteAddr)
		}()
		next.ServeHTTP(sw, r)
	})
}

// errorBody is the JSON body of every error response.
type errorBody struct {
	Error string `json:"error"`
	// Row, Field and Problem locate a row that does not match the schema.
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
	w.Header().Set("Content-Type", "application/json")
	w.Header().Set("X-Content-Type-Options", "nosniff")
	w.WriteHeader(status)
	w.Write(append(b, '\n'))
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

// bodyError writes the response for an error reading or decoding a body.
func bodyError(w http.ResponseWriter, err error) {
	var tooBig *http.MaxBytesError
	var re *requestError
	var fe *serve.FieldError
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
		}
		writeJSON(w, re.status, body)
	default:
		writeError(w, http.StatusBadRequest, "%v", err)
	}
}

// assign labels a batch of rows given by feature name.
func (s *Server) assign(w http.ResponseWriter, r *http.Request) {
	if !requireJSON(w, r) {
		return
	}
	served := s.holder.Load()
	rows, err := decodeAssign(http.MaxBytesReader(w, r.Body, s.limits.MaxBody), s.limits.MaxRows)
	if err != nil {
		var re *requestError
		if errors.As(err, &re) && re.row >= 0 {
			s.reject(served, err)
		}
		bodyError(w, err)
		return
	}
	out := make([]kmeans.Assignment, len(rows))
	for i, row := range rows {
		a, err := serve.AssignRecord(served.Model, row)
		if err != nil {
			s.reject(served, err)
			bodyError(w, &requestError{status: http.StatusUnprocessableEntity, row: i, err: err})
			return
		}
		out[i] = a
	}
	if served.Drift != nil {
		served.Drift.ObserveBatch(out)
	}
	s.rowsAssigned.Add(int64(len(out)))
	w.Header().Set("Content-Type", "application/json")
	w.WriteHeader(http.StatusOK)
	w.Write(encodeAssignments(served.Checksum, out))
}

// reject counts a row refused by the decoder or the model.
func (s *Server) reject(served *serve.Served, err error) {
	s.rowsRejected.Add(1)
	if served.Drift != nil {
		served.Drift.ObserveError(err)
	}
}

// encodeAssignments writes the /v1/assign response. Floats are written in
// the shortest form that parses back to the same bits; a margin of +Inf
// (a single cluster) is written as null.
func encodeAssignments(model string, as []kmeans.Assignment) []byte {
	b := make([]byte, 0, 64+48*len(as))
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
	}
	return append(b, "]}\n"...)
}

func (s *Server) getModel(w http.ResponseWriter, r *http.Request) {
	served := s.holder.Load()
	b, err := json.Marshal(served.Model)
	if err != nil {
		writeError(w, http.StatusInternalServerError, "%v", err)
		return
	}
	w.Header().Set("Content-Type", "application/json")
	w.Header().Set("ETag", strconv.Quote(served.Checksum))
	w.WriteHeader(http.StatusOK)
	w.Write(append(b, '\n'))
}

// putModel installs a new model document: validated, same schema, atomic.
func (s *Server) putModel(w http.ResponseWriter, r *http.Request) {
	if s.token != "" {
		got, ok := strings.CutPrefix(r.Header.Get("Authorization"), "Bearer ")
		if !ok || subtle.ConstantTimeCompare([]byte(got), []byte(s.token)) != 1 {
			w.Header().Set("WWW-Authenticate", `Bearer realm="model"`)
			writeError(w, http.StatusUnauthorized, "PUT /v1/model needs the admin bearer token")
			return
		}
	}
	if !requireJSON(w, r) {
		s.swapsRefused.Add(1)
		return
	}
	// Read one byte more than the decoder accepts so that it reports
	// ErrTooLarge itself.
	body := http.MaxBytesReader(w, r.Body, s.limits.MaxModelBytes+1)
	m, err := kmeans.ReadModel(body, &kmeans.DecodeLimits{MaxBytes: s.limits.MaxModelBytes, MaxValues: s.limits.MaxModelValues})
	if err != nil {
		s.swapsRefused.Add(1)
		switch {
		case errors.Is(err, kmeans.ErrTooLarge):
			writeError(w, http.StatusRequestEntityTooLarge, "%v", err)
		case isBodyReadError(err):
			bodyError(w, err)
		default:
			writeError(w, http.StatusUnprocessableEntity, "%v", err)
		}
		return
	}
	prev, err := s.holder.Swap(m)
	if err != nil {
		s.swapsRefused.Add(1)
		status := http.StatusUnprocessableEntity
		if errors.Is(err, kmeans.ErrSchema) {
			status = http.StatusConflict
		}
		writeError(w, status, "%v", err)
		return
	}
	s.swaps.Add(1)
	now := s.holder.Load()
	s.log.Info("model swapped", "from", prev.Checksum, "to", now.Checksum, "k", m.K())
	writeJSON(w, http.StatusOK, map[string]any{"model": now.Checksum, "previous": prev.Checksum, "k": m.K()})
}

// isBodyReadError reports whether err came from reading the request body
// (too large, client gone) rather than from the document.
func isBodyReadError(err error) bool {
	var tooBig *http.MaxBytesError
	return errors.As(err, &tooBig) || errors.Is(err, io.ErrUnexpectedEOF)
}

// driftBody is the /v1/drift response.
type driftBody struct {
	Model string `json:"model"`
	serve.DriftSnapshot
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
