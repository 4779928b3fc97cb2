package kmeans

import (
	"fmt"
	"strings"

	"github.com/centroidlab/centroid/distance"
	"github.com/centroidlab/centroid/internal/asm/f64"
)

// choose picks a Method when Cluster is called with a nil Method, from the
// metric, the dimension d, k and the memory the bounds would take. Every
// choice gives the same result (all methods are exact); only speed
// differs.
//
//   - Metrics without the triangle inequality (Cosine), other metrics the
//     bound solvers do not support, and k = 1: Lloyd.
//   - Euclidean with a vector kernel (internal/asm/f64 on AVX-512 or
//     AVX2+FMA): Lloyd, except d ≥ 128 and k ≥ 64, where a distance is
//     expensive enough for the bounds to pay: Elkan when k < 128 and its
//     bounds fit (below), else Yinyang. The kernel measures a row against
//     a center in a fraction of a nanosecond, cheaper than the bound
//     solvers' bookkeeping.
//   - Otherwise (Manhattan, or builds without the vector kernel):
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
// The rule is grounded in the measured tables "Automatic choice" of
// BENCHMARKS.md (go run ./internal/cmd/benchreport).
func choose(sp *Space, k int) Method {
	if t, ok := sp.Metric.(distance.Triangle); !ok || !t.Triangle() || k == 1 {
		return Lloyd{}
	}
	if a := sp.arith; a != distance.SquaredDifferences && a != distance.AbsoluteDifferences {
		return Lloyd{}
	}
	n, d := int64(sp.N), int64(sp.D)
	elkanBytes := 4 * n * int64(k+1)
	elkanFits := elkanBytes <= 2*8*n*d && elkanBytes <= 4<<30
	if sp.arith == distance.SquaredDifferences && f64.Kernel() != "go" {
		switch {
		case d >= 128 && k >= 64 && k < 128 && elkanFits:
			return Elkan{}
		case d >= 128 && k >= 64:
			return Yinyang{}
		}
		return Lloyd{}
	}
	switch {
	case k <= 8 && d >= 8 && d < 128:
		return Lloyd{}
	case d < 8 || k < 48 || (d <= 16 && k <= 64):
		return Hamerly{}
	case d >= 128 && k < 128 && elkanFits:
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
