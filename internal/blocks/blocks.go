package blocks

import (
	"fmt"
	"runtime/debug"
	"sync"
	"sync/atomic"
)

// Block sizing: at most Max blocks of at least MinRows rows.
const (
	MinRows = 1024
	Max     = 64
)

// Split is a fixed split of n rows: block b holds rows Split[b] to
// Split[b+1]−1.
type Split []int

// Of returns the fixed split of n ≥ 1 rows (a single empty block for n < 1).
func Of(n int) Split {
	nb := min(Max, max(1, n/MinRows))
	s := make(Split, nb+1)
	for b := range s {
		s[b] = b * max(n, 0) / nb
	}
	return s
}

// Count returns the number of blocks.
func (s Split) Count() int { return len(s) - 1 }

// Bounds returns the rows [lo, hi) of block b.
func (s Split) Bounds(b int) (lo, hi int) { return s[b], s[b+1] }

// Each calls fn(b) once for every block b on up to workers goroutines and
// returns when all calls have returned. fn must write only to state owned by
// block b so that results do not depend on scheduling.
//
// A panic in fn stops the handing out of further blocks and is raised
// again on the calling goroutine, as a *Panic holding the value and the
// stack of the goroutine that panicked, once every worker has returned; so
// the caller can recover it, which it could not from a worker goroutine.
func (s Split) Each(workers int, fn func(b int)) { s.EachUntil(workers, nil, fn) }

// EachUntil is Each that stops handing out blocks once stop is closed (a
// nil stop never closes). It reports whether every block ran; blocks
// already started always finish.
func (s Split) EachUntil(workers int, stop <-chan struct{}, fn func(b int)) (complete bool) {
	nb := s.Count()
	w := min(workers, nb)
	var (
		next    atomic.Int64
		skipped atomic.Bool
		failed  atomic.Pointer[Panic]
		wg      sync.WaitGroup
	)
	worker := func() {
		defer func() {
			if v := recover(); v != nil {
				p, ok := v.(*Panic)
				if !ok {
					p = &Panic{Value: v, Stack: debug.Stack()}
				}
				failed.CompareAndSwap(nil, p)
			}
		}()
		for b := int(next.Add(1)) - 1; b < nb; b = int(next.Add(1)) - 1 {
			if failed.Load() != nil {
				return
			}
			if stopped(stop) {
				skipped.Store(true)
				return
			}
			fn(b)
		}
	}
	if w <= 1 {
		worker()
	} else {
		for range w {
			wg.Go(worker)
		}
		wg.Wait()
	}
	if p := failed.Load(); p != nil {
		panic(p)
	}
	return !skipped.Load()
}

// stopped reports whether stop is closed.
func stopped(stop <-chan struct{}) bool {
	select {
	case <-stop:
		return true
	default:
		return false
	}
}

// Panic is a panic raised in a block function, carried to the goroutine
// that called Each.
type Panic struct {
	// Value is the value passed to panic.
	Value any
	// Stack is the stack of the goroutine that panicked.
	Stack []byte
}

// Error returns the panic value as text, so that a recovered *Panic can be
// wrapped in an error.
func (p *Panic) Error() string { return fmt.Sprint("panic: ", p.Value) }
