package distance_test

import (
	"math/rand/v2"
	"testing"

	"github.com/centroidlab/centroid/distance"
)

// Row lengths for the benchmarks.
const (
	small  = 2
	medium = 16
	large  = 256
)

// benchmarkDistance measures f on two seeded random rows of length n.
func benchmarkDistance(b *testing.B, f func(x, y []float64) float64, n int) {
	rnd := rand.New(rand.NewPCG(1, 1))
	x := randomVector(rnd, n, 1)
	y := randomVector(rnd, n, 1)
	b.ReportAllocs()
	var s float64
	for b.Loop() {
		s += f(x, y)
	}
	sink = s
}

func BenchmarkSqEuclideanSmall(b *testing.B)  { benchmarkDistance(b, distance.SqEuclidean, small) }
func BenchmarkSqEuclideanMedium(b *testing.B) { benchmarkDistance(b, distance.SqEuclidean, medium) }
func BenchmarkSqEuclideanLarge(b *testing.B)  { benchmarkDistance(b, distance.SqEuclidean, large) }

func BenchmarkEuclideanSmall(b *testing.B) {
	benchmarkDistance(b, distance.Euclidean{}.Distance, small)
}
func BenchmarkEuclideanMedium(b *testing.B) {
	benchmarkDistance(b, distance.Euclidean{}.Distance, medium)
}
func BenchmarkEuclideanLarge(b *testing.B) {
	benchmarkDistance(b, distance.Euclidean{}.Distance, large)
}

func BenchmarkManhattanSmall(b *testing.B) {
	benchmarkDistance(b, distance.Manhattan{}.Distance, small)
}
func BenchmarkManhattanMedium(b *testing.B) {
	benchmarkDistance(b, distance.Manhattan{}.Distance, medium)
}
func BenchmarkManhattanLarge(b *testing.B) {
	benchmarkDistance(b, distance.Manhattan{}.Distance, large)
}

func BenchmarkCosineSmall(b *testing.B)  { benchmarkDistance(b, distance.Cosine{}.Distance, small) }
func BenchmarkCosineMedium(b *testing.B) { benchmarkDistance(b, distance.Cosine{}.Distance, medium) }
func BenchmarkCosineLarge(b *testing.B)  { benchmarkDistance(b, distance.Cosine{}.Distance, large) }

func BenchmarkChebyshevSmall(b *testing.B) {
	benchmarkDistance(b, distance.Chebyshev{}.Distance, small)
}
func BenchmarkChebyshevMedium(b *testing.B) {
	benchmarkDistance(b, distance.Chebyshev{}.Distance, medium)
}
func BenchmarkChebyshevLarge(b *testing.B) {
	benchmarkDistance(b, distance.Chebyshev{}.Distance, large)
}

// minkowski3 is a Minkowski order that takes the general (math.Pow) path.
var minkowski3 = distance.Minkowski{P: 3}

func BenchmarkMinkowski3Small(b *testing.B)  { benchmarkDistance(b, minkowski3.Distance, small) }
func BenchmarkMinkowski3Medium(b *testing.B) { benchmarkDistance(b, minkowski3.Distance, medium) }
func BenchmarkMinkowski3Large(b *testing.B)  { benchmarkDistance(b, minkowski3.Distance, large) }
