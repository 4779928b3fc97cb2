package stream

import (
	"context"
	"errors"
	"fmt"
	"io"
)

// block is one block of rows read from a source.
type block struct {
	x     []float64 // raw rows, m×d
	m     int
	first int64 // index of the first row in the pass
	err   error
}

// reader reads passes over a source, one block ahead of the caller, so
// that parsing the next block overlaps the work on the current one.
type reader struct {
	src      Source
	reopener Reopener // nil if the source is read once
	d        int
	rows     int // rows per block
	bufs     [2][]float64
	passes   int
	n        int64 // rows of a pass, -1 until one pass has ended
	rejected int64 // rows skipped in the last pass
}

func newReader(src Source, reopenable bool, blockRows int) *reader {
	r := &reader{src: src, d: src.Dim(), rows: blockRows, n: -1}
	if reopenable {
		r.reopener = src.(Reopener)
	}
	for i := range r.bufs {
		r.bufs[i] = make([]float64, blockRows*r.d)
	}
	return r
}

// name describes the source in messages.
func (r *reader) name() string {
	if s, ok := r.src.(fmt.Stringer); ok {
		return s.String()
	}
	return "the source"
}

// pass reads the source once from the first row (reopening it after the
// first pass) and calls fn for every block in order; the slice x is valid
// until fn returns. It checks ctx between blocks and that every pass has
// the number of rows of the first. If a pass ends early (fn returns
// errStop), the rows are not checked.
func (r *reader) pass(ctx context.Context, fn func(x []float64, m int, first int64) error) error {
	if r.passes > 0 {
		if r.reopener == nil {
			return fmt.Errorf("%w: %s can be read only once", ErrReopen, r.name())
		}
		if err := r.reopener.Reopen(); err != nil {
			return err
		}
	}
	r.passes++
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	full := make(chan block, 1)
	free := make(chan []float64, 2)
	for _, b := range r.bufs {
		free <- b
	}
	done := make(chan struct{})
	go func() {
		defer close(done)
		defer close(full)
		var first int64
		for {
			var buf []float64
			select {
			case buf = <-free:
			case <-ctx.Done():
				return
			}
			m, err := r.src.Read(buf)
			if err != nil {
				if err != io.EOF {
					full <- block{err: err}
				}
				return
			}
			full <- block{x: buf[:m*r.d], m: m, first: first}
			first += int64(m)
		}
	}()
	defer func() {
		cancel()
		for range full { // let the reader finish
		}
		<-done
	}()
	var rows int64
	for b := range full {
		if b.err != nil {
			return b.err
		}
		if err := ctx.Err(); err != nil {
			return err
		}
		if err := fn(b.x, b.m, b.first); err != nil {
			if errors.Is(err, errStop) {
				r.rejected = rejected(r.src)
				return err
			}
			return err
		}
		rows += int64(b.m)
		free <- b.x[:cap(b.x)]
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	r.rejected = rejected(r.src)
	if rows == 0 {
		if r.rejected > 0 {
			return fmt.Errorf("%w: %s: every row (%d) was bad and skipped", ErrEmpty, r.name(), r.rejected)
		}
		return fmt.Errorf("%w: %s has no data rows", ErrEmpty, r.name())
	}
	if r.n >= 0 && rows != r.n {
		return fmt.Errorf("%w: %s gave %d rows, then %d on pass %d", ErrReopen, r.name(), r.n, rows, r.passes)
	}
	r.n = rows
	return nil
}

// errStop ends a pass early without error.
var errStop = errors.New("stream: stop the pass")

func rejected(src Source) int64 {
	if rj, ok := src.(Rejecter); ok {
		return rj.Rejected()
	}
	return 0
}
