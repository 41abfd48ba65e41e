//go:build amd64 && !purego

package remez

// baryAVX2 returns sum mu_k c_k/(x - xr_k) and sum mu_k/(x - xr_k) over
// the first n terms (n a multiple of 16), four lanes at a time, the four
// vectors of a 16-term block sharing one division as in bary.
//
//go:noescape
func baryAVX2(x float64, xr, mu, c *float64, n int) (num, den float64)

func cpuid(eaxArg, ecxArg uint32) (eax, ebx, ecx, edx uint32)

func xgetbv() (eax, edx uint32)

// haveAVX2 reports AVX2 and FMA with the operating system saving the YMM
// registers.
var haveAVX2 = detectAVX2()

func detectAVX2() bool {
	maxID, _, _, _ := cpuid(0, 0)
	if maxID < 7 {
		return false
	}
	_, _, ecx1, _ := cpuid(1, 0)
	const fma, osxsave, avx = 1 << 12, 1 << 27, 1 << 28
	if ecx1&fma == 0 || ecx1&osxsave == 0 || ecx1&avx == 0 {
		return false
	}
	if xcr0, _ := xgetbv(); xcr0&6 != 6 {
		return false
	}
	_, ebx7, _, _ := cpuid(7, 0)
	return ebx7&(1<<5) != 0
}
