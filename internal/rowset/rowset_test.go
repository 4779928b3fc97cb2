package rowset

import (
	"math"
	"testing"

	"github.com/stretchr/testify/require"
)

func TestSet(t *testing.T) {
	s := New(4)
	require.True(t, s.Add([]float64{1, 2}))
	require.False(t, s.Add([]float64{1, 2}), "equal by value")
	require.True(t, s.Add([]float64{2, 1}))
	require.True(t, s.Has([]float64{2, 1}))
	require.False(t, s.Has([]float64{2, 2}))
	// −0 and +0 are the same value.
	require.True(t, s.Add([]float64{0, 1}))
	require.False(t, s.Add([]float64{math.Copysign(0, -1), 1}))
	require.Equal(t, 3, s.Len())
	// Rows of another length never match.
	require.True(t, s.Add([]float64{1, 2, 3}))
	require.Equal(t, 4, s.Len())
}

// Distinct rows that collide in a bucket are still told apart: compare
// every pair of a lattice against a brute-force count.
func TestSetCountsDistinct(t *testing.T) {
	s := New(0)
	var rows [][]float64
	for i := range 40 {
		rows = append(rows, []float64{float64(i % 7), float64(i % 5)})
	}
	want := 0
	for i, r := range rows {
		dup := false
		for _, q := range rows[:i] {
			if r[0] == q[0] && r[1] == q[1] {
				dup = true
			}
		}
		if !dup {
			want++
		}
		s.Add(r)
	}
	require.Equal(t, want, s.Len())
}
