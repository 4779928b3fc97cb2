package reference

import (
	"testing"

	"github.com/stretchr/testify/require"
)

// The shape and class sizes checked here are those stated in the shared
// PROVENANCE.md (Fisher 1936 iris: 150 rows, 4 features, 50 per species).
func TestLoadIris(t *testing.T) {
	s := LoadOrSkip(t, "iris")
	r, c := s.X.Dims()
	require.Equal(t, 150, r)
	require.Equal(t, 4, c)
	counts := map[int]int{}
	for _, l := range s.Labels {
		counts[l]++
	}
	require.Equal(t, map[int]int{0: 50, 1: 50, 2: 50}, counts)
	require.Equal(t, 5.1, s.X.At(0, 0))
}

func TestMissing(t *testing.T) {
	t.Setenv(Env, t.TempDir())
	_, err := Load("iris")
	require.ErrorIs(t, err, ErrMissing)
}
