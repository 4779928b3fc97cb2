//go:build !amd64 || noasm || purego

package f32

// kernels returns the Best2 implementations this build can run: the
// pure-Go one (also as the exported Best2).
func kernels() []kernel {
	return []kernel{{"go", best2Generic, packShiftGo}, {"Best2=" + Kernel(), Best2, PackShift}}
}
