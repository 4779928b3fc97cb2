package sample

import "math/rand/v2"

// Without returns m distinct indices of [0, n) drawn uniformly without
// replacement: the first m entries of a partial Fisher–Yates shuffle of
// 0..n−1, in draw order. It uses exactly m calls to rnd.IntN, so the same
// generator state gives the same subset. It panics if m < 0 or m > n.
func Without(rnd *rand.Rand, n, m int) []int {
	if m < 0 || m > n {
		panic("sample: Without needs 0 ≤ m ≤ n")
	}
	perm := make([]int, n)
	for i := range perm {
		perm[i] = i
	}
	for t := range m {
		u := t + rnd.IntN(n-t)
		perm[t], perm[u] = perm[u], perm[t]
	}
	return perm[:m:m]
}
