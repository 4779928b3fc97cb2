package synth

import (
	"testing"

	"github.com/stretchr/testify/require"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
)

func TestBlobsDeterministic(t *testing.T) {
	a := Blobs(200, 3, 5, 1)
	b := Blobs(200, 3, 5, 1)
	require.True(t, mat.Equal(a, b))
	require.False(t, mat.Equal(a, Blobs(200, 3, 5, 2)))
}

// With one cluster every column is a normal sample with standard deviation
// 4 around a center in [0, 100]; gonum's stat.StdDev is the reference.
func TestBlobsSpread(t *testing.T) {
	x := Blobs(20000, 2, 1, 3)
	for j := range 2 {
		col := mat.Col(nil, j, x)
		require.InDelta(t, 4, stat.StdDev(col, nil), 0.1)
		m := stat.Mean(col, nil)
		require.True(t, m > -1 && m < 101)
	}
	require.Panics(t, func() { Blobs(0, 1, 1, 1) })
}
