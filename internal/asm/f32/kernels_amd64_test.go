//go:build !noasm && !purego

package f32

// kernels returns the Best2 implementations this build and processor can
// run: the pure-Go one, each assembly kernel the processor supports, and
// the exported Best2 (whichever was chosen).
func kernels() []kernel {
	ks := []kernel{{"go", best2Generic, packShiftGo}}
	if hasAVX2FMA {
		ks = append(ks, kernel{"avx2", func(idx []int32, best, second, x []float32, d int, c, norm2 []float32, j0, j1 int) {
			checkBest2(len(idx), len(best), len(second), len(x), d, len(c), len(norm2), j0, j1)
			if len(idx) > 0 && j1 > j0 {
				best2AVX2(&idx[0], &best[0], &second[0], &x[0], len(idx), d, &c[0], &norm2[0], j0, j1)
			}
		}, packShiftGo})
	}
	if hasAVX512 {
		ks = append(ks, kernel{"avx512", func(idx []int32, best, second, x []float32, d int, c, norm2 []float32, j0, j1 int) {
			checkBest2(len(idx), len(best), len(second), len(x), d, len(c), len(norm2), j0, j1)
			if len(idx) > 0 && j1 > j0 {
				best2AVX512(&idx[0], &best[0], &second[0], &x[0], len(idx), d, &c[0], &norm2[0], j0, j1)
			}
		}, PackShift})
	}
	return append(ks, kernel{"Best2=" + Kernel(), Best2, PackShift})
}
