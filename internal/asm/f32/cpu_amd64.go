//go:build !noasm && !purego

package f32

// cpuid and xgetbv are in cpu_amd64.s.
func cpuid(eax, ecx uint32) (a, b, c, d uint32)
func xgetbv() (eax, edx uint32)

// Features of the processor that the kernels use, read once at start-up.
var (
	hasAVX2FMA bool // AVX2 and FMA, with the operating system saving ymm state
	hasAVX512  bool // AVX-512 F and BMI2, with zmm and opmask state saved
)

func init() {
	maxLeaf, _, _, _ := cpuid(0, 0)
	_, _, c1, _ := cpuid(1, 0)
	const (
		fma     = 1 << 12
		osxsave = 1 << 27
		avx     = 1 << 28
	)
	if c1&(fma|osxsave|avx) != fma|osxsave|avx || maxLeaf < 7 {
		return
	}
	xcr0, _ := xgetbv()
	_, b7, _, _ := cpuid(7, 0)
	const (
		avx2    = 1 << 5
		bmi2    = 1 << 8
		avx512f = 1 << 16
	)
	ymm := xcr0&0x6 == 0x6   // SSE and AVX state
	zmm := xcr0&0xE6 == 0xE6 // and opmask, ZMM_Hi256, Hi16_ZMM state
	hasAVX2FMA = ymm && b7&avx2 != 0
	hasAVX512 = zmm && b7&(avx512f|bmi2) == avx512f|bmi2
}
