package kbeam

import (
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"github.com/centroidlab/centroid/kmeans"
)

// randomLeaves returns n block statistics with values of mixed magnitude,
// so that the order of the sums shows in the last bits.
func randomLeaves(n, k, d int, rnd *rand.Rand) []*kmeans.Partial {
	ps := make([]*kmeans.Partial, n)
	x := make([]float64, d)
	for b := range ps {
		ps[b] = kmeans.NewPartial(k, d)
		for range 1 + rnd.IntN(5) {
			for i := range x {
				x[i] = rnd.NormFloat64() * float64(int(1)<<rnd.IntN(40))
			}
			ps[b].Add(rnd.IntN(k), x, rnd.Float64(), rnd.Float64()*1e6)
		}
	}
	return ps
}

func clonePartial(p *kmeans.Partial) *kmeans.Partial {
	q := kmeans.NewPartial(p.K, p.D)
	q.Merge(p)
	return q
}

// TestMergeTreeOrderFree: whatever order the blocks arrive in and however
// they are grouped into accumulators that merge in any order (as a
// runner's bundles and combine stages do), the result has the same bits;
// and it is the sum of the blocks (checked against the sum in block order).
func TestMergeTreeOrderFree(t *testing.T) {
	rnd := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{1, 2, 3, 7, 64, 100, 333} {
		leaves := randomLeaves(n, 3, 2, rnd)
		var want *kmeans.Partial
		seq := kmeans.NewPartial(3, 2)
		for _, p := range leaves {
			seq.Merge(p)
		}
		for trial := range 30 {
			// Split a random permutation into random groups, one
			// accumulator each, then absorb them in random order.
			perm := rnd.Perm(n)
			var accs []partialTree
			for lo := 0; lo < n; {
				hi := min(n, lo+1+rnd.IntN(max(1, n/3)))
				var acc partialTree
				for _, b := range perm[lo:hi] {
					require.NoError(t, acc.add(uint64(b), clonePartial(leaves[b]), mergePartials))
				}
				accs = append(accs, acc)
				lo = hi
			}
			for len(accs) > 1 {
				i, j := rnd.IntN(len(accs)), rnd.IntN(len(accs)-1)
				if j >= i {
					j++
				}
				require.NoError(t, accs[i].absorb(&accs[j].mergeTree, mergePartials))
				accs = append(accs[:j], accs[j+1:]...)
			}
			got, ok := accs[0].result(mergePartials)
			require.True(t, ok)
			if want == nil {
				want = got
				assert.InDeltaSlice(t, seq.Weight, got.Weight, 1e-9)
				assert.Equal(t, seq.Count, got.Count)
				assert.Less(t, relDiff(got.Sum, seq.Sum), 1e-12, "n %d", n)
				continue
			}
			require.Equal(t, want, got, "n %d trial %d", n, trial)
		}
	}
}

// TestMergeTreeDuplicate: a block seen twice is an error, not a double count.
func TestMergeTreeDuplicate(t *testing.T) {
	var a partialTree
	require.NoError(t, a.add(4, kmeans.NewPartial(1, 1), mergePartials))
	require.ErrorIs(t, a.add(4, kmeans.NewPartial(1, 1), mergePartials), ErrInput)
	var empty partialTree
	_, ok := empty.result(mergePartials)
	assert.False(t, ok)
}
