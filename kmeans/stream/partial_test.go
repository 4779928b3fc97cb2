package stream_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/data/synth"
	"github.com/centroidlab/centroid/kmeans"
)

// TestPartialsMergeAnySplit checks the property streaming rests on: the
// per-cluster statistics of rows cut into parts at random places and
// merged in a random order equal those of one pass over all rows, to
// rounding; merged in a fixed order they are the same bits every time.
func TestPartialsMergeAnySplit(t *testing.T) {
	const n, d, k = 5000, 3, 4
	X := synth.Blobs(n, d, k, 3)
	c := mat.DenseCopyOf(X.Slice(0, k, 0, d))
	assign := func(i int) (int, float64) {
		best, bl := 0, math.Inf(1)
		for j := range k {
			if l := distance.SqEuclidean(X.RawRowView(i), c.RawRowView(j)); l < bl {
				best, bl = j, l
			}
		}
		return best, bl
	}
	one := kmeans.NewPartial(k, d)
	for i := range n {
		a, l := assign(i)
		one.Add(a, X.RawRowView(i), 1, l)
	}
	rnd := rand.New(rand.NewPCG(9, 9))
	for trial := range 10 {
		var parts []*kmeans.Partial
		for lo := 0; lo < n; {
			hi := min(n, lo+1+rnd.IntN(700))
			p := kmeans.NewPartial(k, d)
			for i := lo; i < hi; i++ {
				a, l := assign(i)
				p.Add(a, X.RawRowView(i), 1, l)
			}
			parts = append(parts, p)
			lo = hi
		}
		inOrder := kmeans.NewPartial(k, d)
		for _, p := range parts {
			inOrder.Merge(p)
		}
		rnd.Shuffle(len(parts), func(i, j int) { parts[i], parts[j] = parts[j], parts[i] })
		shuffled := kmeans.NewPartial(k, d)
		for _, p := range parts {
			shuffled.Merge(p)
		}
		for _, got := range []*kmeans.Partial{inOrder, shuffled} {
			require.Equal(t, one.Count, got.Count, "trial %d", trial)
			require.Equal(t, one.Weight, got.Weight)
			for i, v := range one.Sum {
				require.InEpsilon(t, v, got.Sum[i], 1e-12)
			}
			for j, v := range one.Cost {
				require.InEpsilon(t, v, got.Cost[j], 1e-12)
			}
		}
	}
	// One fixed split merged in order, twice: the same bits.
	again := kmeans.NewPartial(k, d)
	for lo := 0; lo < n; lo += 1000 {
		p := kmeans.NewPartial(k, d)
		for i := lo; i < lo+1000; i++ {
			a, l := assign(i)
			p.Add(a, X.RawRowView(i), 1, l)
		}
		again.Merge(p)
	}
	twice := kmeans.NewPartial(k, d)
	for lo := 0; lo < n; lo += 1000 {
		p := kmeans.NewPartial(k, d)
		for i := lo; i < lo+1000; i++ {
			a, l := assign(i)
			p.Add(a, X.RawRowView(i), 1, l)
		}
		twice.Merge(p)
	}
	assert.Equal(t, again, twice)
}
