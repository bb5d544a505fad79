package graphpde

import (
	"math"
	"testing"
)

// TestEdgeDynDeriv checks the derivatives of the exact element's entries
// in λ against central differences of edgeDyn (step 1e-6 of the scale of
// λ: truncation about 1e-12, rounding about 1e-10 relative, so 1e-7), on
// both sides of q = 0, in the series range and near kL = π; and that at
// q = 0 they are minus the consistent mass matrix ρL/3, ρL/6 of a linear
// element (derived: M = −K' is the Gram matrix of the shape functions,
// which are linear at q = 0). The merged edgeDynCoef must give the same
// values as edgeDyn and edgeDynDeriv, and second derivatives that agree
// with central differences of its first ones (same tolerance).
func TestEdgeDynDeriv(t *testing.T) {
	const fdTol = 1e-7
	ed := &Edge{A: 1.7, C: 0.3, Rho: 1.3}
	for _, L := range []float64{0.05, 0.7, 2.3} {
		for _, w := range []float64{-400, -30, -1, -0.02, -0.005, -1e-9, 0, 1e-9, 0.005, 0.02, 1, 5, 9} {
			lam := (w/(L*L)*ed.A + ed.C) / ed.Rho
			dd, do := edgeDynDeriv(ed, L, lam)
			h := 1e-6 * math.Max(1, math.Abs(lam))
			d1, o1, _, _ := edgeDyn(ed, L, lam+h)
			d0, o0, _, _ := edgeDyn(ed, L, lam-h)
			fd, fo := (d1-d0)/(2*h), (o1-o0)/(2*h)
			if math.Abs(dd-fd) > fdTol*math.Max(1, math.Abs(fd)) || math.Abs(do-fo) > fdTol*math.Max(1, math.Abs(fo)) {
				t.Errorf("L=%g w=%g: derivative %.10g %.10g, differences %.10g %.10g", L, w, dd, do, fd, fo)
			}
			d, o, _, _ := edgeDyn(ed, L, lam)
			ad, ao, add, ado, a2d, a2o := edgeDynCoef(ed.A, ed.C, ed.Rho, L, lam)
			_, _, p1d, p1o, _, _ := edgeDynCoef(ed.A, ed.C, ed.Rho, L, lam+h)
			_, _, p0d, p0o, _, _ := edgeDynCoef(ed.A, ed.C, ed.Rho, L, lam-h)
			if f2d, f2o := (p1d-p0d)/(2*h), (p1o-p0o)/(2*h); math.Abs(a2d-f2d) > fdTol*math.Max(1, math.Abs(f2d)) || math.Abs(a2o-f2o) > fdTol*math.Max(1, math.Abs(f2o)) {
				t.Errorf("L=%g w=%g: second derivative %.10g %.10g, differences of the first %.10g %.10g", L, w, a2d, a2o, f2d, f2o)
			}
			if ad != d || ao != o || math.Abs(add-dd) > 1e-14*math.Abs(dd) || math.Abs(ado-do) > 1e-14*math.Abs(do)+1e-300 {
				t.Errorf("L=%g w=%g: edgeDynCoef %g %g %g %g, want %g %g %g %g", L, w, ad, ao, add, ado, d, o, dd, do)
			}
		}
		dd, do := edgeDynDeriv(ed, L, ed.C/ed.Rho)
		if m := ed.Rho * L / ed.A; math.Abs(dd+m/3) > 1e-15*m || math.Abs(do+m/6) > 1e-15*m {
			t.Errorf("L=%g: at q = 0 %g %g, want %g %g", L, dd, do, -m/3, -m/6)
		}
	}
}

// edgeDynDeriv returns the derivatives in λ of the entries of edgeDyn (per
// unit weight, piece of length L). With w = qL² = (λρ − c)L²/a the entries
// are F(w)/L and −G(w)/L, F(w) = z cot z and G(w) = z/sin z for z = √w
// (z coth z and z/sinh z for w < 0), so
//
//	d diag/dλ = (ρL/a) F'(w),   d off/dλ = −(ρL/a) G'(w),
//
// F'(w) = (cot z − z/sin²z)/(2z), G'(w) = (1/sin z − z cos z/sin²z)/(2z)
// (derived), with the Taylor series of z cot z and z/sin z (Abramowitz and
// Stegun, Handbook of Mathematical Functions, 4.3.70 and 4.3.68) for
// |w| < 0.01, and exponentially scaled forms for large negative w. At w = 0
// they are −ρL/(3a) and −ρL/(6a): the consistent mass matrix of a linear
// element, as it must be (M = −K' is the Gram matrix of the shape
// functions).
func edgeDynDeriv(ed *Edge, L, lam float64) (dDiag, dOff float64) {
	a, c, rho := ed.A, ed.C, ed.Rho
	w := (lam*rho - c) / a * L * L
	var fp, gp float64
	switch {
	case math.Abs(w) < 0.01:
		fp = -1.0/3 - w*(2.0/45+w*(6.0/945+w*4.0/4725))
		gp = 1.0/6 + w*(7.0/180+w*(31.0/5040+w*127.0/151200))
	case w > 0:
		z := math.Sqrt(w)
		s, co := math.Sincos(z)
		fp = (co/s - z/(s*s)) / (2 * z)
		gp = (1/s - z*co/(s*s)) / (2 * z)
	default:
		z := math.Sqrt(-w)
		e2 := math.Exp(-2 * z)
		den := -math.Expm1(-2 * z) // 1 − e^{−2z}
		coth := (1 + e2) / den
		ez := math.Exp(-z)
		// z/sinh²z = 4z e^{−2z}/(1 − e^{−2z})², 1/sinh z = 2e^{−z}/(1 − e^{−2z}),
		// cosh z/sinh²z = 2e^{−z}(1 + e^{−2z})/(1 − e^{−2z})²
		fp = -(coth - 4*z*e2/(den*den)) / (2 * z)
		gp = -(2*ez/den - 2*z*ez*(1+e2)/(den*den)) / (2 * z)
	}
	return rho * L / a * fp, -rho * L / a * gp
}
