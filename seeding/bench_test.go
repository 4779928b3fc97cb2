package seeding_test

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/centroidlab/centroid/seeding"
)

// Benchmark sizes: rows, columns and centers.
var (
	benchRows    = []int{10_000, 100_000}
	benchCols    = []int{2, 16}
	benchCenters = []int{8, 64}
)

func benchmarkSeed(b *testing.B, s seeding.Seeder, n, d, k int) {
	data := gaussRows(rand.New(rand.NewPCG(1, 1)), n, d)
	dst := mat.NewDense(k, d, nil)
	rnd := rand.New(rand.NewPCG(1, 2))
	b.ReportAllocs()
	for b.Loop() {
		if err := s.Seed(dst, data, nil, nil, rnd); err != nil {
			b.Fatal(err)
		}
	}
}

// benchmarkGrid runs s on every combination of the benchmark sizes.
func benchmarkGrid(b *testing.B, s seeding.Seeder) {
	for _, n := range benchRows {
		for _, d := range benchCols {
			for _, k := range benchCenters {
				b.Run(fmt.Sprintf("n=%d/d=%d/k=%d", n, d, k), func(b *testing.B) { benchmarkSeed(b, s, n, d, k) })
			}
		}
	}
}

func BenchmarkPlusPlus(b *testing.B)        { benchmarkGrid(b, seeding.PlusPlus{}) }
func BenchmarkPlusPlusClassic(b *testing.B) { benchmarkGrid(b, seeding.PlusPlus{Candidates: 1}) }
func BenchmarkRandom(b *testing.B)          { benchmarkGrid(b, seeding.Random{}) }
func BenchmarkUniform(b *testing.B)         { benchmarkGrid(b, seeding.Uniform{}) }

// BenchmarkPlusPlusWorkers compares one and two goroutines on the default
// greedy k-means++ (the centers are the same).
func BenchmarkPlusPlusWorkers(b *testing.B) {
	const n, d, k = 100_000, 16, 64
	for _, w := range []int{1, 2} {
		b.Run(fmt.Sprintf("n=%d/d=%d/k=%d/workers=%d", n, d, k, w), func(b *testing.B) {
			benchmarkSeed(b, seeding.PlusPlus{Workers: w}, n, d, k)
		})
	}
}
