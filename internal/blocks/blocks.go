package blocks

import (
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
func (s Split) Each(workers int, fn func(b int)) {
	nb := s.Count()
	w := min(workers, nb)
	if w <= 1 {
		for b := range nb {
			fn(b)
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for range w {
		wg.Go(func() {
			for b := int(next.Add(1)) - 1; b < nb; b = int(next.Add(1)) - 1 {
				fn(b)
			}
		})
	}
	wg.Wait()
}
