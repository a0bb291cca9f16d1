//go:build !noasm

package stats

// gemvRowsAsm is gemvRows for AVX2+FMA processors; see kernel_amd64.s.
//
//go:noescape
func gemvRowsAsm(a *float64, m, k int, x, y *float64)

// gemvRowsTAddAsm is gemvRowsTAdd for AVX2+FMA processors.
//
//go:noescape
func gemvRowsTAddAsm(a *float64, m, k int, c, dst *float64)

// blockTermsAsm is the per-bin part of a block for AVX2+FMA processors; see
// kernel_amd64.s and blockTerms.
//
//go:noescape
func blockTermsAsm(mu, n *float64, m int, sub float64) (sumNLog, sumMu float64, bad int)

func cpuid(eaxArg, ecxArg uint32) (eax, ebx, ecx, edx uint32)

func xgetbv() (eax, edx uint32)

// haveAVXFMA reports whether the processor has AVX, AVX2 and FMA3 and the
// operating system saves the YMM registers: CPUID leaf 1 ECX bits 12
// (FMA), 27 (OSXSAVE) and 28 (AVX), leaf 7 EBX bit 5 (AVX2), and XCR0 bits
// 1 and 2 (the x86 architecture manuals; common practice).
func haveAVXFMA() bool {
	maxID, _, _, _ := cpuid(0, 0)
	if maxID < 7 {
		return false
	}
	_, _, ecx, _ := cpuid(1, 0)
	const fma, osxsave, avx = 1 << 12, 1 << 27, 1 << 28
	if ecx&fma == 0 || ecx&osxsave == 0 || ecx&avx == 0 {
		return false
	}
	if xcr0, _ := xgetbv(); xcr0&6 != 6 {
		return false
	}
	_, ebx7, _, _ := cpuid(7, 0)
	const avx2 = 1 << 5
	return ebx7&avx2 != 0
}
