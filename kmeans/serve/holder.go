package serve

import (
	"fmt"
	"slices"
	"sync"
	"sync/atomic"
	"time"

	"github.com/centroidlab/centroid/kmeans"
)

// Holder keeps the model a service answers with and replaces it while
// requests are in flight. Readers call Load, which is one atomic load: no
// lock, no allocation. Swap validates a new model and then publishes it with
// one atomic store, so a reader gets either the old or the new Served, each
// complete; a reader that loaded the old one keeps using it safely (models
// are immutable).
//
// The zero value holds nothing and is ready to use. A Holder must not be
// copied after first use. Its methods are safe for concurrent use.
type Holder struct {
	// Accept, if not nil, vets every replacement: Swap calls it with the
	// current model (nil on the first Swap) and the candidate, and refuses
	// the candidate if it returns an error. Swaps wait for each other while
	// it runs, so it must not call Swap. Set it before first use.
	// SameSchema is a ready-made policy.
	Accept func(current, next *kmeans.Model) error

	mu  sync.Mutex // serialises Swap
	cur atomic.Pointer[Served]
}

// Served is a model installed in a Holder, with what a service reports
// about it. Its fields are never modified after Swap publishes it.
type Served struct {
	// Model answers requests.
	Model *kmeans.Model
	// Checksum is Model.Checksum(), computed once by Swap.
	Checksum string
	// Drift monitors the answers given with Model; nil if the model has no
	// training summary (a version 1 document).
	Drift *Drift
	// Since is when Swap installed the model.
	Since time.Time

	doc *document // nil for a Served not made by Swap
}

// document caches the model document of a Served.
type document struct {
	once sync.Once
	b    []byte
	err  error
}

// Document returns the model document ([kmeans.Model.MarshalJSON]). A Served
// made by Holder.Swap encodes it once, on the first call, and returns the
// same bytes to every later caller, concurrent ones included; the caller
// must not modify them.
func (s *Served) Document() ([]byte, error) {
	if s.doc == nil {
		return s.Model.MarshalJSON()
	}
	s.doc.once.Do(func() { s.doc.b, s.doc.err = s.Model.MarshalJSON() })
	return s.doc.b, s.doc.err
}

// Load returns the installed model and its companions, or nil before the
// first successful Swap.
func (h *Holder) Load() *Served { return h.cur.Load() }

// Model returns the installed model, or nil before the first successful
// Swap.
func (h *Holder) Model() *kmeans.Model {
	if s := h.cur.Load(); s != nil {
		return s.Model
	}
	return nil
}

// Swap installs next and returns what it replaced (nil on the first Swap).
// It refuses, returning an error wrapping [kmeans.ErrModel] (or the error of
// Accept) and keeping the current model, if next is nil or has no
// centers, cannot be encoded (no checksum), or Accept rejects it. A new
// Drift monitor starts with next when it has a training summary.
func (h *Holder) Swap(next *kmeans.Model) (*Served, error) {
	if next == nil || next.K() == 0 {
		return nil, fmt.Errorf("%w: no model to install", kmeans.ErrModel)
	}
	sum, err := next.Checksum()
	if err != nil {
		return nil, err
	}
	h.mu.Lock()
	defer h.mu.Unlock()
	prev := h.cur.Load()
	if h.Accept != nil {
		var current *kmeans.Model
		if prev != nil {
			current = prev.Model
		}
		if err := h.Accept(current, next); err != nil {
			return nil, err
		}
	}
	s := &Served{Model: next, Checksum: sum, Since: time.Now().UTC(), doc: new(document)}
	if next.Training() != nil {
		if s.Drift, err = NewDrift(next); err != nil {
			return nil, err
		}
	}
	h.cur.Store(s)
	return prev, nil
}

// SameSchema is an Accept policy for Holder: a replacement must read the
// same rows as the current model, that is have the same dimension and the
// same feature names in the same order (or, like the current model, none).
// Any model is accepted when there is no current one. Otherwise it returns
// an error wrapping [kmeans.ErrSchema].
func SameSchema(current, next *kmeans.Model) error {
	if current == nil {
		return nil
	}
	if current.Dim() != next.Dim() {
		return fmt.Errorf("%w: the new model has %d features, the current one %d", kmeans.ErrSchema, next.Dim(), current.Dim())
	}
	cf, nf := current.Features(), next.Features()
	if !slices.Equal(cf, nf) || (cf == nil) != (nf == nil) {
		return fmt.Errorf("%w: the new model's features %q differ from the current %q", kmeans.ErrSchema, nf, cf)
	}
	return nil
}
