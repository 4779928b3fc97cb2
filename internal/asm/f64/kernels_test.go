package f64

// kernels returns the Best2 implementations this build can run: the
// pure-Go one and the exported Best2 (an assembly kernel where one is
// chosen).
func kernels() []kernel {
	return []kernel{{"go", best2Generic}, {"Best2=" + Kernel(), Best2}}
}
