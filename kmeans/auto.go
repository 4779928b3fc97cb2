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
//   - k ≤ 8 and 8 ≤ d < 128: Lloyd. Few passes and few centers leave the
//     bounds little to save, and the kernel makes Lloyd's distances cheap.
//   - d < 8, or k < 48, or d ≤ 16 and k ≤ 64: Hamerly. Two bounds per row;
//     at low d a distance costs about as much as the bookkeeping of more
//     bounds, and at d=16, k=64 Hamerly and Yinyang are within 10 % of
//     each other, Hamerly ahead at n=1e6.
//   - d ≥ 128 and k < 128, if Elkan's bounds (4·n·(k+1) bytes) take at
//     most twice the data (8·n·d bytes) and at most 4 GiB: Elkan. A distance
//     is expensive and Elkan computes the fewest.
//   - otherwise: Yinyang.
//
// Measured with go run ./internal/cmd/benchreport on the project's 2-vCPU
// benchmark machine (BENCHMARKS.md, runs A and B, has the full tables and
// flags): wall time of Cluster (one restart, parallel k-means++ seeding
// included, at most 30 passes, 10 at n=1e6) as a speed-up over Lloyd, and
// the rule's pick with its time ÷ the fastest method's (that method in
// brackets), computed from the same run's per-solver times.
//
//	cell (blobs, 50 true clusters)  Elkan  Hamerly  Yinyang  pick       ÷ fastest
//	n=1e4 d=2   k=8                 0.70   1.29     0.71     Hamerly    1.00
//	n=1e5 d=2   k=64                0.36   1.04     0.88     Hamerly    1.00
//	n=1e5 d=2   k=256               0.23   0.91     0.79     Hamerly    1.10 (Lloyd)
//	n=1e6 d=2   k=64                0.39   1.00     0.69     Hamerly    1.00
//	n=1e5 d=16  k=8                 0.82   1.02     0.89     Lloyd      1.02 (Hamerly)
//	letter 20000×16 k=26            0.71   1.20     0.84     Hamerly    1.00
//	n=1e4 d=16  k=64                0.77   1.47     1.59     Hamerly    1.08 (Yinyang)
//	n=1e5 d=16  k=64                0.82   1.91     2.00     Hamerly    1.05 (Yinyang)
//	n=1e6 d=16  k=64                1.18   1.71     1.25     Hamerly    1.00
//	n=1e5 d=16  k=256               0.59   0.68     1.66     Yinyang    1.00
//	n=1e4 d=64  k=8                 0.69   0.95     0.94     Lloyd      1.00
//	n=1e5 d=64  k=64                1.65   1.88     2.34     Yinyang    1.00
//	n=1e5 d=64  k=256               1.29   0.69     2.04     Yinyang    1.00
//	n=1e4 d=256 k=8                 0.99   1.00     0.98     Hamerly    1.00
//	n=1e5 d=256 k=8                 0.96   0.95     0.95     Hamerly    1.05 (Lloyd)
//	n=1e4 d=256 k=64                1.42   1.32     1.48     Elkan      1.04 (Yinyang)
//	n=1e5 d=256 k=64                2.02   1.75     2.15     Elkan      1.07 (Yinyang)
//	n=1e4 d=256 k=256               1.37   0.86     1.45     Yinyang    1.00
func choose(sp *Space, k int) Method {
	if t, ok := sp.Metric.(distance.Triangle); !ok || !t.Triangle() || k == 1 {
		return Lloyd{}
	}
	if a := sp.arith; a != distance.SquaredDifferences && a != distance.AbsoluteDifferences {
		return Lloyd{}
	}
	n, d := int64(sp.N), int64(sp.D)
	elkanBytes := 4 * n * int64(k+1)
	switch {
	case k <= 8 && d >= 8 && d < 128:
		return Lloyd{}
	case d < 8 || k < 48 || (d <= 16 && k <= 64):
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
