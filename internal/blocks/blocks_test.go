package blocks

import (
	"sync/atomic"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestOf(t *testing.T) {
	for _, n := range []int{1, 5, 1023, 1024, 2047, 2048, 100000, 10000000} {
		s := Of(n)
		require.Equal(t, 0, s[0])
		require.Equal(t, n, s[len(s)-1])
		require.LessOrEqual(t, s.Count(), Max)
		for b := range s.Count() {
			lo, hi := s.Bounds(b)
			require.Less(t, lo, hi, "n=%d block %d empty", n, b)
			if s.Count() > 1 {
				require.GreaterOrEqual(t, hi-lo, MinRows)
			}
		}
	}
}

// Each visits every block exactly once for any number of workers.
func TestEach(t *testing.T) {
	s := Of(50000)
	for _, w := range []int{0, 1, 2, 7, 100} {
		seen := make([]atomic.Int32, s.Count())
		s.Each(w, func(b int) { seen[b].Add(1) })
		for b := range seen {
			require.Equal(t, int32(1), seen[b].Load(), "workers=%d block %d", w, b)
		}
	}
}

// A panic in a block reaches the caller of Each as a *Panic, for any number
// of workers, and no further blocks start.
func TestEachPanic(t *testing.T) {
	s := Of(50000)
	for _, w := range []int{1, 2, 7} {
		var ran atomic.Int32
		func() {
			defer func() {
				p, ok := recover().(*Panic)
				require.True(t, ok, "workers=%d", w)
				require.Equal(t, "boom", p.Value)
				require.Contains(t, p.Error(), "boom")
				require.NotEmpty(t, p.Stack)
			}()
			s.Each(w, func(b int) {
				ran.Add(1)
				if b == 3 {
					panic("boom")
				}
			})
			t.Fatal("Each returned after a panic")
		}()
		if w == 1 {
			// With several workers the others may take the remaining blocks
			// before they see the panic; one worker stops at once.
			require.Equal(t, 4, int(ran.Load()), "blocks after the panic were skipped")
		}
	}
}

// EachUntil stops handing out blocks once stop is closed and says so.
func TestEachUntil(t *testing.T) {
	s := Of(50000)
	require.True(t, s.EachUntil(2, make(chan struct{}), func(int) {}))
	for _, w := range []int{1, 2} {
		stop := make(chan struct{})
		var ran atomic.Int32
		complete := s.EachUntil(w, stop, func(b int) {
			if ran.Add(1) == 2 {
				close(stop)
			}
		})
		require.False(t, complete)
		require.LessOrEqual(t, int(ran.Load()), 2+w)
	}
}
