//go:build !noasm && !purego

package f64

// kernels returns the Best2 implementations this build and processor can
// run: the pure-Go one, each assembly kernel the processor supports, and
// the exported Best2 (whichever was chosen).
func kernels() []kernel {
	ks := []kernel{{"go", best2Generic, best2RowGeneric}}
	if hasAVX2FMA {
		ks = append(ks, kernel{"avx2", func(idx []int, best, second, x []float64, d int, c, norm2 []float64, j0, j1 int) {
			checkBest2(len(idx), len(best), len(second), len(x), d, len(c), len(norm2), j0, j1)
			if len(idx) > 0 && j1 > j0 {
				best2AVX2(&idx[0], &best[0], &second[0], &x[0], len(idx), d, &c[0], &norm2[0], j0, j1)
			}
		}, func(x, shift []float64, c, norm2 []float64, k, exclude int) (int, float64, float64, float64) {
			checkBest2Row(len(x), len(shift), len(c), len(norm2), k)
			return best2RowAVX2(&x[0], &shift[0], len(x), &c[0], &norm2[0], k, exclude)
		}})
	}
	if hasAVX512 {
		ks = append(ks, kernel{"avx512", func(idx []int, best, second, x []float64, d int, c, norm2 []float64, j0, j1 int) {
			checkBest2(len(idx), len(best), len(second), len(x), d, len(c), len(norm2), j0, j1)
			if len(idx) > 0 && j1 > j0 {
				best2AVX512(&idx[0], &best[0], &second[0], &x[0], len(idx), d, &c[0], &norm2[0], j0, j1)
			}
		}, func(x, shift []float64, c, norm2 []float64, k, exclude int) (int, float64, float64, float64) {
			checkBest2Row(len(x), len(shift), len(c), len(norm2), k)
			return best2RowAVX512(&x[0], &shift[0], len(x), &c[0], &norm2[0], k, exclude)
		}})
	}
	return append(ks, kernel{"Best2=" + Kernel(), Best2, Best2Row})
}
