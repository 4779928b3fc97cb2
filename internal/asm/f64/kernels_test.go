//go:build !amd64 || noasm || purego

package f64

// kernels returns the Best2 implementations this build can run: the
// pure-Go one (also as the exported Best2).
func kernels() []kernel {
	return []kernel{{"go", best2Generic, best2RowGeneric}, {"Best2=" + Kernel(), Best2, Best2Row}}
}
