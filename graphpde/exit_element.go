package graphpde

import (
	"math"
	"math/cmplx"
)

// exitElementSmall is the |κL| below which exitElement hands a drifting edge
// to exactElement: the closed form below loses about ε/|κL| relative accuracy
// there (a difference of two terms ≈ L whose difference is ≈ κL²), i.e.
// 1e−14 at the threshold.
const exitElementSmall = 0.01

// exitElement is exactElement for complex decay c and source f, with the
// same contract,
//
//	u'(0) = d[0][0]·U0 + d[0][1]·UL + g[0],   u'(L) = d[1][0]·U0 + d[1][1]·UL + g[1],
//
// for a u” + b u' − c u + f = 0 on [0, L], but written for speed: the
// Laplace transform of an exit time evaluates every edge at 20–500 complex
// shifts s, and exactElement's small-|κL| branch (Gauss quadrature of sinh
// integrands, about 80 complex sinh calls) dominated that cost by a factor
// of 20. Here every quantity is a rational function of e^{−κL}, e^{−(κ∓μ)L}
// and expm1-type differences, about five complex exponentials per edge:
//
// Without drift (b = 0), z = κL, q₁ = 1 − e^{−z}, q = 1 − e^{−2z} = q₁(1 + e^{−z}):
//
//	κ coth κL = z(1 + e^{−2z})/(L q),   κ/sinh κL = 2z e^{−z}/(L q),
//	g[0] = −g[1] = (f/a)·tanh(z/2)/κ = (fL/a)·q₁/(z(1 + e^{−z})),
//
// all free of cancellation for every z with Re z ≥ 0 (q and q₁ by expm1),
// and z = 0 (c = 0) handled exactly. With drift, μ = b/(2a), p = κ − μ,
// q' = κ + μ (the small one formed as (c/a)/(κ ± μ)):
//
//	d = [[−q' − cz/L,  2κ e^{−pL}/q], [−2κ e^{−q'L}/q,  p + cz/L]],  cz = 2z e^{−2z}/q,
//	g[0] = (f/a)·(E(p) − e^{−pL} E(q'))/q,   g[1] = −(f/a)·(E(q') − e^{−q'L} E(p))/q,
//
// E(r) = (1 − e^{−rL})/r: the closed forms of exactElement's |κL| ≥ 1
// branch, which hold for every κ ≠ 0 and are accurate down to
// exitElementSmall; below it exitElement calls exactElement. The tests
// compare the two. Cost O(1); no allocation.
func exitElement(a, b float64, c, f complex128, L float64) (d [2][2]complex128, g [2]complex128) {
	lam := complex(real(c)/a, imag(c)/a)
	CL := complex(L, 0)
	if b == 0 {
		kappa := csqrt(lam)
		z := kappa * CL
		if z == 0 {
			d = [2][2]complex128{{complex(-1/L, 0), complex(1/L, 0)}, {complex(-1/L, 0), complex(1/L, 0)}}
			g[0] = f * complex(L/(2*a), 0)
			g[1] = -g[0]
			return d, g
		}
		// e^{−z} and 1 − e^{−z} from one exp or expm1 (x = −Re z ≤ 0:
		// above −0.5 e^x = 1 + expm1(x) ≥ 0.6 and below it
		// expm1(x) = e^x − 1 ≤ −0.39, neither cancels) and one sincos of
		// half the angle (cos y = 1 − 2 sin²(y/2), as cexpm1).
		x, y := -real(z), -imag(z)
		var ex, em1 float64
		if x > -0.5 {
			em1 = math.Expm1(x)
			ex = 1 + em1
		} else {
			ex = math.Exp(x)
			em1 = ex - 1
		}
		sh, ch := math.Sincos(y / 2)
		siny, cosy := 2*sh*ch, 1-2*sh*sh
		e1 := complex(ex*cosy, ex*siny)
		q1 := complex(-(em1*cosy - 2*sh*sh), -ex*siny)
		q := q1 * (1 + e1)
		zq := cdiv(z, CL*q)
		cth := zq * (1 + e1*e1)
		csch := 2 * zq * e1
		d = [2][2]complex128{{-cth, csch}, {-csch, cth}}
		g[0] = f * complex(L/a, 0) * cdiv(q1, z*(1+e1))
		g[1] = -g[0]
		return d, g
	}
	mu := b / (2 * a)
	M := complex(mu, 0)
	kappa := csqrt(M*M + lam)
	z := kappa * CL
	if cmplx.Abs(z) < exitElementSmall {
		return exactElement(a, b, c, f, L)
	}
	var p, qq complex128 // κ − μ, κ + μ
	if mu > 0 {
		p, qq = lam/(kappa+M), kappa+M
	} else {
		p, qq = kappa-M, lam/(kappa-M)
	}
	e2 := cmplx.Exp(-2 * z)
	iq := cdiv(1, -cexpm1(-2*z)) // 1/q
	cz := 2 * z * e2 * iq
	ep := cmplx.Exp(-p * CL)
	eq := cmplx.Exp(-qq * CL)
	czL := cz * complex(1/L, 0)
	d[0][0] = -qq - czL
	d[1][1] = p + czL
	d[0][1] = 2 * kappa * ep * iq
	d[1][0] = -2 * kappa * eq * iq
	E := func(r complex128) complex128 {
		if r == 0 {
			return CL
		}
		return cdiv(-cexpm1(-r*CL), r)
	}
	Ep, Eq := E(p), E(qq)
	fa := f * complex(1/a, 0)
	g[0] = fa * (Ep - ep*Eq) * iq
	g[1] = -fa * (Eq - eq*Ep) * iq
	return d, g
}

// exitElementT is exactElement for a real T and exitElement for a complex
// T.
func exitElementT[T scalar](a, b float64, c, f T, L float64) (d [2][2]T, g [2]T) {
	if isReal[T]() {
		return exactElement(a, b, c, f, L)
	}
	dc, gc := exitElement(a, b, toC(c), toC(f), L)
	for i := range 2 {
		for j := range 2 {
			d[i][j] = fromC[T](dc[i][j])
		}
		g[i] = fromC[T](gc[i])
	}
	return d, g
}

// csqrt is the principal square root, as cmplx.Sqrt, from two real square
// roots and a division, without cmplx.Sqrt's scaling against overflow
// (hypot): it hands arguments with |w|² outside (1e−300, 1e300) to
// cmplx.Sqrt. √w = (t, y/(2t)), t = √((|w| + x)/2) for x ≥ 0 and
// (|y|/(2t), ±t), t = √((|w| − x)/2) for x < 0, the sign that of y: no
// cancellation in either (the textbook formulas; common practice, no
// source). The element of a Laplace transform evaluates one per edge and
// transform value.
func csqrt(w complex128) complex128 {
	x, y := real(w), imag(w)
	r2 := x*x + y*y
	if !(r2 > 1e-300 && r2 < 1e300) {
		return cmplx.Sqrt(w)
	}
	r := math.Sqrt(r2)
	if x >= 0 {
		t := math.Sqrt((r + x) / 2)
		return complex(t, y/(2*t))
	}
	t := math.Sqrt((r - x) / 2)
	return complex(math.Abs(y)/(2*t), math.Copysign(t, y))
}

// cdiv is a/b by the plain formula a·conj(b)/|b|², a few ε relative, for
// |b|² inside (1e−300, 1e300); outside it hands the division to Go's
// (which scales against overflow). Common practice, no source.
func cdiv(a, b complex128) complex128 {
	br, bi := real(b), imag(b)
	d := br*br + bi*bi
	if !(d > 1e-300 && d < 1e300) {
		return a / b
	}
	inv := 1 / d
	ar, ai := real(a), imag(a)
	return complex((ar*br+ai*bi)*inv, (ai*br-ar*bi)*inv)
}
