package nodesys

import (
	"math"
	"math/cmplx"
	"unsafe"
)

// Scalar is the element type of a node system: real for steady and transient
// problems, complex for Laplace-transform work at complex s.
type Scalar interface{ ~float64 | ~complex128 }

// mag returns |v|. The underlying type of T is float64 or complex128; the two
// have different sizes, so the size tells them apart (also for named types such
// as `type volt float64`, which a type switch would not match).
func mag[T Scalar](v T) float64 {
	if unsafe.Sizeof(v) == unsafe.Sizeof(complex128(0)) {
		return cmplx.Abs(*(*complex128)(unsafe.Pointer(&v)))
	}
	return math.Abs(*(*float64)(unsafe.Pointer(&v)))
}

// fromReal returns x as a T.
func fromReal[T Scalar](x float64) T {
	var v T
	if unsafe.Sizeof(v) == unsafe.Sizeof(complex128(0)) {
		*(*complex128)(unsafe.Pointer(&v)) = complex(x, 0)
	} else {
		*(*float64)(unsafe.Pointer(&v)) = x
	}
	return v
}

// magMax returns max(|Re v|, |Im v|), within a factor √2 of |v| and cheaper
// (no square root); the pivot test compares pivots and row scales in it.
func magMax[T Scalar](v T) float64 {
	if unsafe.Sizeof(v) == unsafe.Sizeof(complex128(0)) {
		c := *(*complex128)(unsafe.Pointer(&v))
		return math.Max(math.Abs(real(c)), math.Abs(imag(c)))
	}
	return math.Abs(*(*float64)(unsafe.Pointer(&v)))
}
