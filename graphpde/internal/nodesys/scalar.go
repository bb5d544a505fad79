package nodesys

import (
	"math"
	"math/cmplx"
)

// Scalar is the element type of a node system: real for steady and transient
// problems, complex for Laplace-transform work at complex s.
type Scalar interface{ float64 | complex128 }

// mag returns |v|.
func mag[T Scalar](v T) float64 {
	switch x := any(v).(type) {
	case complex128:
		return cmplx.Abs(x)
	case float64:
		return math.Abs(x)
	}
	panic("unreachable")
}

// magMax returns max(|Re v|, |Im v|), within a factor √2 of |v| and cheaper
// (no square root); the pivot test compares pivots and row scales in it.
func magMax[T Scalar](v T) float64 {
	switch x := any(v).(type) {
	case complex128:
		return math.Max(math.Abs(real(x)), math.Abs(imag(x)))
	case float64:
		return math.Abs(x)
	}
	panic("unreachable")
}
