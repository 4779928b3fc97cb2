package nearest

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
)

// Shapes (rows m, dimension d, centers k) of the kernel benchmarks.
var benchShapes = []struct{ m, d, k int }{
	{4096, 2, 64}, {4096, 16, 64}, {4096, 64, 64}, {4096, 256, 256}, {4096, 16, 256}, {4096, 2, 8}, {100000, 32, 64},
}

func randRows(rnd *rand.Rand, m, d int, off float64) []float64 {
	x := make([]float64, m*d)
	for i := range x {
		x[i] = off + rnd.NormFloat64()*10
	}
	return x
}

// BenchmarkSearch times Searcher.Assign (shift, kernel, fused argmin and
// rechecks) on seeded random rows; flops count 2·m·d·k.
func BenchmarkSearch(b *testing.B) {
	for _, s := range benchShapes {
		b.Run(fmt.Sprintf("m=%d/d=%d/k=%d", s.m, s.d, s.k), func(b *testing.B) {
			rnd := rand.New(rand.NewPCG(1, 1))
			x := randRows(rnd, s.m, s.d, 0)
			cs := randRows(rnd, s.k, s.d, 0)
			var c Centers
			c.Pack(cs, s.k, s.d)
			var sr Searcher
			dst := make([]int, s.m)
			const tile = 256
			b.ReportAllocs()
			for b.Loop() {
				for lo := 0; lo < s.m; lo += tile {
					hi := min(s.m, lo+tile)
					sr.Assign(dst[lo:hi], x[lo*s.d:hi*s.d], hi-lo, &c, nil)
				}
			}
			b.ReportMetric(2*float64(s.m*s.d*s.k)*float64(b.N)/b.Elapsed().Seconds()/1e9, "GFLOP/s")
		})
	}
}

// BenchmarkDgemm times gonum's blas64.Dgemm computing the m×k products of
// the same shapes (the general-purpose reference).
func BenchmarkDgemm(b *testing.B) {
	for _, s := range benchShapes {
		b.Run(fmt.Sprintf("m=%d/d=%d/k=%d", s.m, s.d, s.k), func(b *testing.B) {
			rnd := rand.New(rand.NewPCG(1, 1))
			x := blas64.General{Rows: s.m, Cols: s.d, Stride: s.d, Data: randRows(rnd, s.m, s.d, 0)}
			c := blas64.General{Rows: s.k, Cols: s.d, Stride: s.d, Data: randRows(rnd, s.k, s.d, 0)}
			out := blas64.General{Rows: s.m, Cols: s.k, Stride: s.k, Data: make([]float64, s.m*s.k)}
			b.ReportAllocs()
			for b.Loop() {
				blas64.Gemm(blas.NoTrans, blas.Trans, 1, x, c, 0, out)
			}
			b.ReportMetric(2*float64(s.m*s.d*s.k)*float64(b.N)/b.Elapsed().Seconds()/1e9, "GFLOP/s")
		})
	}
}
