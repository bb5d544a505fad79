package nodesys

// Inertia returns the number of negative pivots of the last factorisation
// P·A·Pᵀ = L·D·Lᵀ of a real symmetric matrix A. By Sylvester's law of
// inertia (A and D are congruent) that is the number of negative eigenvalues
// of A; R. A. Horn and C. R. Johnson, Matrix Analysis, 2nd ed., Cambridge
// 2013, Thm. 4.5.8. Spectrum counts (the Wittrick–Williams count of
// eigenvalues below a trial value) rest on it.
//
// ok is false, and neg 0, when the count has no meaning: a complex factor, a
// factor that took the nonsymmetric L·D·U path (A ≠ Aᵀ, or
// Settings.Symmetric set to false), or no successful Factorize. A zero pivot
// never occurs in a successful factorisation (it is a *SingularError), so
// the matrix has no zero eigenvalue in the sense of the pivot test. Cost
// O(n), no allocation.
func (f *Factor[T]) Inertia() (neg int, ok bool) {
	if !f.ready || !f.symmetric {
		return 0, false
	}
	return f.negativePivots()
}
