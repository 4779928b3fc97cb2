package kmeans

import (
	"fmt"
	"strings"

	"github.com/centroidlab/centroid/distance"
)

// choose picks a Method when Cluster is called with a nil Method, from the
// metric, the dimension d, k and the memory the bounds would take. Every
// choice gives the same result (all methods are exact); only speed
// differs.
//
//   - Metrics without the triangle inequality (Cosine), other metrics the
//     bound solvers do not support, and k = 1: Lloyd.
//   - k ≤ 8 and d ≥ 8: Lloyd. Few passes and few centers leave the bounds
//     little to save, and the kernel makes Lloyd's distances cheap.
//   - d < 8, or k < 48: Hamerly. Two bounds per row; at low d a distance
//     costs about as much as the bookkeeping of more bounds.
//   - d ≥ 128 and k < 128, if Elkan's bounds (4·n·(k+1) bytes) take at
//     most twice the data (8·n·d bytes) and at most 4 GiB: Elkan. A distance
//     is expensive and Elkan computes the fewest.
//   - otherwise: Yinyang.
//
// Measured with go run ./internal/cmd/benchreport on the project's 2-vCPU
// benchmark machine (BENCHMARKS.md, runs 1 and 3, has the full tables and
// flags): wall time of Cluster (one restart, k-means++ seeding included, at
// most 30 passes, 10 at n=1e6) as a speed-up over Lloyd, and the rule's
// pick with its time ÷ the fastest method's (that method in brackets).
//
//	cell (blobs, 50 true clusters)  Elkan  Hamerly  Yinyang  pick       ÷ fastest
//	n=1e4 d=2   k=8                 0.64   1.09     0.62     Hamerly    1.00
//	n=1e5 d=2   k=64                0.40   1.00     0.89     Hamerly    1.00
//	n=1e5 d=2   k=256               0.29   0.95     0.85     Hamerly    1.06 (Lloyd)
//	n=1e6 d=2   k=256               0.41   0.87     0.85     Hamerly    1.15 (Lloyd)
//	n=1e5 d=16  k=8                 0.87   1.11     0.86     Lloyd      1.11 (Hamerly)
//	letter 20000×16 k=26            0.73   1.33     0.94     Hamerly    1.00
//	n=1e5 d=16  k=64                0.97   1.75     1.65     Yinyang    1.06 (Hamerly)
//	n=1e5 d=16  k=256               0.61   0.80     1.51     Yinyang    1.00
//	n=1e4 d=64  k=8                 0.94   1.18     1.11     Lloyd      1.18 (Hamerly)
//	n=1e5 d=64  k=64                1.30   1.42     1.69     Yinyang    1.00
//	n=1e5 d=64  k=256               1.16   0.76     1.48     Yinyang    1.00
//	n=1e5 d=256 k=8                 1.00   0.98     1.00     Lloyd      1.00
//	n=1e4 d=256 k=64                1.33   1.20     1.33     Elkan      1.00
//	n=1e5 d=256 k=64                1.39   1.34     1.44     Elkan      1.04 (Yinyang)
//	n=1e4 d=256 k=256               1.23   0.94     1.27     Yinyang    1.00
func choose(sp *Space, k int) Method {
	if t, ok := sp.Metric.(distance.Triangle); !ok || !t.Triangle() || k == 1 {
		return Lloyd{}
	}
	switch sp.Metric.(type) {
	case distance.Euclidean, distance.Manhattan:
	default:
		return Lloyd{}
	}
	n, d := int64(sp.N), int64(sp.D)
	elkanBytes := 4 * n * int64(k+1)
	switch {
	case k <= 8 && d >= 8:
		return Lloyd{}
	case d < 8 || k < 48:
		return Hamerly{}
	case d >= 128 && k < 128 && elkanBytes <= 2*8*n*d && elkanBytes <= 4<<30:
		return Elkan{}
	}
	return Yinyang{}
}

// methodName returns a Method's type name without package qualifier.
func methodName(m Method) string {
	s := fmt.Sprintf("%T", m)
	s = strings.TrimPrefix(s, "*")
	if i := strings.LastIndexByte(s, '.'); i >= 0 {
		s = s[i+1:]
	}
	return s
}
