package nodesys

// The float64 update kernels in AVX2 with fused multiply-add
// (kernel_amd64.s), used when the processor and the operating system
// support them; otherwise, and for complex values, the Go loops of
// supernodal.go run. Both compute the same sums; fused operations round
// once where the Go loops round twice, so the factors agree to roundoff.

//go:noescape
func axpy4x2FMA(d0, d1, a, b, c, e *float64, n int, co *[8]float64)

//go:noescape
func axpy4FMA(dst, a, b, c, e *float64, n int, co *[4]float64)

//go:noescape
func axpy2FMA(dst, a, b *float64, n int, ca, cb float64)

func cpuid(eaxArg, ecxArg uint32) (eax, ebx, ecx, edx uint32)

func xgetbv() (eax, edx uint32)

// useFMA reports whether the processor has the AVX2 kernels; a Factor
// uses them unless a test or MeasureKernels asks for the Go loops.
var useFMA = detectFMA()

// detectFMA checks for AVX2 and FMA (CPUID leaves 1 and 7) and for the
// operating system saving the YMM registers (OSXSAVE, XCR0 bits 1 and 2).
func detectFMA() bool {
	maxLeaf, _, _, _ := cpuid(0, 0)
	if maxLeaf < 7 {
		return false
	}
	_, _, c1, _ := cpuid(1, 0)
	const fma, osxsave, avx = 1 << 12, 1 << 27, 1 << 28
	if c1&fma == 0 || c1&osxsave == 0 || c1&avx == 0 {
		return false
	}
	if xcr0, _ := xgetbv(); xcr0&6 != 6 {
		return false
	}
	_, b7, _, _ := cpuid(7, 0)
	return b7&(1<<5) != 0
}
