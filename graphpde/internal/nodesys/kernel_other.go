//go:build !amd64

package nodesys

// Without the amd64 kernels the Go loops of supernodal.go run.

const useFMA = false

func axpy4x2FMA(d0, d1, a, b, c, e *float64, n int, co *[8]float64) {
	panic("nodesys: no AVX2 kernels on this architecture")
}

func axpy4FMA(dst, a, b, c, e *float64, n int, co *[4]float64) {
	panic("nodesys: no AVX2 kernels on this architecture")
}

func axpy2FMA(dst, a, b *float64, n int, ca, cb float64) {
	panic("nodesys: no AVX2 kernels on this architecture")
}
