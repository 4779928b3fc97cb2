package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net/http"

	"github.com/centroidlab/centroid/kmeans/serve"

	"github.com/centroidlab/centroid/kmeans"
)

// assignRequest is the body of POST /v1/assign.
type assignRequest struct {
	Rows []serve.Record `json:"rows"`
}

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

// decodeAssign reads an assign request: one JSON object with a "rows" array
// of at most maxRows records (see serve.Record), no other fields and
// nothing after it. Errors are *requestError values (400 malformed, 413
// too many rows, 422 a record that is not an object of finite numbers with
// distinct names) or errors from reading r, such as *http.MaxBytesError.
func decodeAssign(r io.Reader, maxRows int) ([]serve.Record, error) {
	dec := json.NewDecoder(r)
	dec.DisallowUnknownFields()
	var req struct {
		Rows *[]json.RawMessage `json:"rows"`
	}
	if err := dec.Decode(&req); err != nil {
		var tooBig *http.MaxBytesError
		if errors.As(err, &tooBig) {
			return nil, err
		}
		return nil, &requestError{status: http.StatusBadRequest, row: -1, err: fmt.Errorf("malformed request: %w", err)}
	}
	if _, err := dec.Token(); err != io.EOF {
		var tooBig *http.MaxBytesError
		if errors.As(err, &tooBig) {
			return nil, err
		}
		return nil, &requestError{status: http.StatusBadRequest, row: -1, err: errors.New("malformed request: data after the JSON object")}
	}
	if req.Rows == nil {
		return nil, &requestError{status: http.StatusBadRequest, row: -1, err: errors.New(`malformed request: want {"rows":[{...},...]}`)}
	}
	raw := *req.Rows
	if len(raw) > maxRows {
		return nil, &requestError{status: http.StatusRequestEntityTooLarge, row: -1, err: fmt.Errorf("%d rows, at most %d per request", len(raw), maxRows)}
	}
	rows := make([]serve.Record, len(raw))
	for i, b := range raw {
		if bytes.Equal(bytes.TrimSpace(b), []byte("null")) {
			return nil, &requestError{status: http.StatusUnprocessableEntity, row: i, err: fmt.Errorf("%w: a row must be an object, not null", kmeans.ErrSchema)}
		}
		if err := json.Unmarshal(b, &rows[i]); err != nil {
			return nil, &requestError{status: http.StatusUnprocessableEntity, row: i, err: err}
		}
	}
	return rows, nil
}
