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
