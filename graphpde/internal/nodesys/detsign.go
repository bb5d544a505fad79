package nodesys

// NegativePivots returns the number of negative pivots d_k of the last real
// factorisation P·A·Pᵀ = L·D·U, on either path. Since L and U are unit
// triangular, det A = Π d_k, so (−1)^neg is the sign of the determinant,
// also for a nonsymmetric A (where Inertia has no meaning). Continuation
// uses it: the sign of det of a Jacobian changes where a solution branch
// turns at a fold.
//
// ok is false, and neg 0, for a complex factor or when there is no
// successful Factorize. Cost O(n), no allocation.
func (f *Factor[T]) NegativePivots() (neg int, ok bool) {
	if !f.ready {
		return 0, false
	}
	return f.negativePivots()
}

// negativePivots counts the negative pivots of a real factor (ok false for
// a complex one); the callers check that a factorisation is there.
func (f *Factor[T]) negativePivots() (neg int, ok bool) {
	d, real := any(f.d).([]float64)
	if !real {
		return 0, false
	}
	for _, v := range d[:f.n] {
		if v < 0 {
			neg++
		}
	}
	return neg, true
}
