package graphpde

import (
	"math"
	"math/cmplx"
	"sync"
)

// scalar is the number type of an element: float64 for steady and real-shift
// problems, complex128 for Laplace transforms at complex s (Talbot contours).
type scalar interface{ float64 | complex128 }

// exactElement returns the Dirichlet-to-Neumann map of
//
//	a u'' + b u' − c u + f = 0   on [0, L]
//
// with constant coefficients (a > 0, b real, Re c ≥ 0 for a well-posed edge;
// a Laplace or implicit shift enters as c → c + sρ): the derivatives at both
// ends as affine functions of the end values U0 = u(0), UL = u(L),
//
//	u'(0) = d[0][0]·U0 + d[0][1]·UL + g[0]
//	u'(L) = d[1][0]·U0 + d[1][1]·UL + g[1].
//
// With μ = b/(2a) and κ = sqrt(μ² + c/a) (principal root, Re κ ≥ |μ| when
// Re c ≥ 0) the homogeneous part is
//
//	d = [[−μ − κ coth κL,  e^{μL} κ/sinh κL],
//	     [−e^{−μL} κ/sinh κL,  −μ + κ coth κL]],
//
// evaluated for |κL| ≥ 1 in exponentially scaled form (only e^{−2κL},
// e^{(μ−κ)L}, e^{−(μ+κ)L} appear, so κL = 1e4 neither overflows nor loses
// accuracy) and with κ − μ, κ + μ formed without cancellation (as
// (c/a)/(κ ± μ) when they are small), and for |κL| < 1 from z coth z and
// z/sinh z, which are smooth at z = 0 (c = 0, b = 0 included). The source
// terms come from Green's identity with the adjoint operator
// a v_xx − b v_x − c v: a·u'(0) gets f·∫v₀ and a·u'(L) gets −f·∫v_L, where v₀,
// v_L are the adjoint solutions that equal 1 at one end and 0 at the other.
// These integrals are sums of positive terms for real data, so small c (no
// f/c cancellation) and large Péclet numbers |b|L/a are handled stably; they
// are evaluated in closed form (expm1 type) for |κL| ≥ 1 and by Gauss–Legendre
// quadrature or a double series (adjointSeries) for |κL| < 1. Cost O(1).
func exactElement[T scalar](a, b float64, c, f T, L float64) (d [2][2]T, g [2]T) {
	mu := b / (2 * a)
	muT := fromF[T](mu)
	LT := fromF[T](L)
	lam := c / fromF[T](a)
	var kappa T
	if math.Abs(mu) < 1e150 {
		kappa = sqrtT(muT*muT + lam)
	} else { // μ² would overflow
		kappa = fromF[T](math.Abs(mu)) * sqrtT(1+lam/muT/muT)
	}
	z := kappa * LT
	// κ − μ and κ + μ without cancellation.
	var kmm, kpm T
	if mu > 0 {
		kmm = lam / (kappa + muT)
		kpm = kappa + muT
	} else {
		kmm = kappa - muT
		if mu < 0 {
			kpm = lam / (kappa - muT)
		} else {
			kpm = kappa
		}
	}
	var i0, iL T
	if absT(z) < 1 {
		shz := shc(z)
		zcoth := coshT(z) / shz
		zcsch := 1 / shz
		d[0][0] = -muT - zcoth/LT
		d[1][1] = -muT + zcoth/LT
		d[0][1] = fromF[T](math.Exp(mu*L)) * zcsch / LT
		d[1][0] = -fromF[T](math.Exp(-mu*L)) * zcsch / LT
		if math.Abs(mu*L) <= 1 {
			i0, iL = adjointSeries(mu*L, z*z, shz, L)
		} else {
			i0, iL = adjointIntegrals(mu, kappa, L)
		}
	} else {
		e2 := expT(-2 * z)
		q := -expm1T(-2 * z)   // 1 − e^{−2κL}
		cz := 2 * z * e2 / q   // z coth z − z
		emm := expT(-kmm * LT) // e^{(μ−κ)L}
		epm := expT(-kpm * LT) // e^{−(μ+κ)L}
		d[0][0] = -kpm - cz/LT
		d[1][1] = kmm + cz/LT
		d[0][1] = 2 * kappa * emm / q
		d[1][0] = -2 * kappa * epm / q
		fm, fp := expIntegral(kmm, L), expIntegral(kpm, L)
		i0 = (fm - emm*fp) / q
		iL = (fp - epm*fm) / q
	}
	fa := f / fromF[T](a)
	g[0] = fa * i0
	g[1] = -fa * iL
	return d, g
}

// exactRowSums returns the row sums of exactElement's map, u'(0) and u'(L)
// for U0 = UL = 1 and f = 0, without forming d[0][0] + d[0][1] (two terms of
// size |μ| + 1/L that cancel to 0 without decay). With u = 1 − w, w solves
// the edge problem with source c and zero ends, so u'(0) = −w'(0) and
// u'(L) = −w'(L) are −g of exactElement with f = c: −(c/a)∫v₀ and +(c/a)∫v_L,
// exactly 0 for c = 0 and sums of positive terms for real c > 0 (derived).
func exactRowSums[T scalar](a, b float64, c T, L float64) [2]T {
	_, g := exactElement(a, b, c, c, L)
	return [2]T{-g[0], -g[1]}
}

// exactValue returns u(x), 0 ≤ x ≤ L, for the problem of exactElement with
// end values U0 and UL. It splits the edge at x and matches the derivatives of
// the two sub-elements there,
//
//	u(x) = (d²₀₁ UL − d¹₁₀ U0 + g²₀ − g¹₁) / (d¹₁₁ − d²₀₀),
//
// (superscript 1 for [0, x], 2 for [x, L]), a quotient of sums of positive
// terms for real data, so it inherits the stability of exactElement. Cost O(1).
func exactValue[T scalar](a, b float64, c, f T, L, x float64, U0, UL T) T {
	if x <= 0 {
		return U0
	}
	if x >= L {
		return UL
	}
	d1, g1 := exactElement(a, b, c, f, x)
	d2, g2 := exactElement(a, b, c, f, L-x)
	return (d2[0][1]*UL - d1[1][0]*U0 + g2[0] - g1[1]) / (d1[1][1] - d2[0][0])
}

// expIntegral returns (1 − e^{−rL})/r, which is L at r = 0.
func expIntegral[T scalar](r T, L float64) T {
	if absT(r) == 0 {
		return fromF[T](L)
	}
	return -expm1T(-r*fromF[T](L)) / r
}

// adjointSeries returns ∫₀ᴸ v₀ and ∫₀ᴸ v_L (see adjointIntegrals) for
// |z| = |κL| < 1 and |m| = |μL| ≤ 1 from the double series
//
//	∫₀ᴸ v₀ = L e^{m} Σ_k z^{2k}/(2k+1)! · T_k(m) / shc(z),
//	∫₀ᴸ v_L = L e^{−m} Σ_k z^{2k}/(2k+1)! · T_k(−m) / shc(z),
//	T_k(m) = ∫₀¹ t^{2k+1} e^{−mt} dt = Σ_j (−m)^j / (j! (2k+j+2)),
//
// (expand sinh(κs) and e^{−μs} in s = L − y), with shz = shc(z) given. For
// |m| ≤ 1 the alternating sums lose at most a factor e² to cancellation and
// at most 10 terms in k, 24 in j reach round-off (fewer for small |z|, |m|);
// T_k is real, so the cost is at most about 250 real and 10 complex
// operations and no transcendental call beyond e^m.
func adjointSeries[T scalar](m float64, z2, shz T, L float64) (i0, iL T) {
	const K, J = 10, 24
	// number of k terms: |z|^{2k}/(2k+1)! below 1e-18 (|z| < 1)
	az2 := absT(z2)
	nk, ck := 1, 1.0
	for nk < K {
		ck *= az2 / float64((2*nk)*(2*nk+1))
		if ck < 1e-18 {
			break
		}
		nk++
	}
	var t0, t1 [K]float64
	if m == 0 {
		for k := range nk {
			t0[k] = 1 / float64(2*k+2)
			t1[k] = t0[k]
		}
	} else {
		p := 1.0 // (−m)^j / j!; T_k ≥ e^{−1}/(2k+2), so |p| < 1e-18 is negligible
		for j := 0; j < J && math.Abs(p) >= 1e-18; j++ {
			sg := 1.0
			if j%2 == 1 {
				sg = -1
			}
			for k := range nk {
				w := p / float64(2*k+j+2)
				t0[k] += w
				t1[k] += sg * w
			}
			p *= -m / float64(j+1)
		}
	}
	var s0, s1 T
	c := T(1) // z^{2k}/(2k+1)!
	for k := range nk {
		s0 += c * fromF[T](t0[k])
		s1 += c * fromF[T](t1[k])
		c = c * z2 / fromF[T](float64((2*k+2)*(2*k+3)))
	}
	return fromF[T](L*math.Exp(m)) * s0 / shz, fromF[T](L*math.Exp(-m)) * s1 / shz
}

// adjointIntegrals returns ∫₀ᴸ v₀ and ∫₀ᴸ v_L for |κL| < 1, with
//
//	v₀(y) = e^{μy} sinh(κ(L−y))/sinh(κL),   v_L(y) = e^{−μ(L−y)} sinh(κy)/sinh(κL),
//
// by Gauss–Legendre quadrature. Writing sinh(κs)/sinh(κL) = (s/L)·shc(κs)/shc(κL)
// keeps the integrand smooth at κ = 0. For real data |μL| ≤ |κL| < 1 and 20
// nodes integrate the entire integrand to round-off; 64 nodes are used when a
// complex decay makes |μL| larger.
func adjointIntegrals[T scalar](mu float64, kappa T, L float64) (i0, iL T) {
	nodes := gauss20()
	if math.Abs(mu*L) > 2 {
		nodes = gauss64()
	}
	shL := shc(kappa * fromF[T](L))
	for _, nd := range nodes {
		// s = L − y runs over (0, L); v₀ uses s, v_L uses y.
		y := 0.5 * L * (1 + nd[0])
		w := 0.5 * L * nd[1]
		s := L - y
		i0 += fromF[T](w*math.Exp(mu*y)*s/L) * shc(kappa*fromF[T](s)) / shL
		iL += fromF[T](w*math.Exp(-mu*s)*y/L) * shc(kappa*fromF[T](y)) / shL
	}
	return i0, iL
}

// Gauss–Legendre nodes and weights on [−1, 1], computed once by Newton's method
// on the Legendre recurrence.
var (
	gauss20 = sync.OnceValue(func() [][2]float64 { return gaussLegendre(20) })
	gauss64 = sync.OnceValue(func() [][2]float64 { return gaussLegendre(64) })
)

func gaussLegendre(n int) [][2]float64 {
	out := make([][2]float64, n)
	for i := 0; i < (n+1)/2; i++ {
		x := math.Cos(math.Pi * (float64(i) + 0.75) / (float64(n) + 0.5))
		var dp float64
		for it := 0; it < 100; it++ {
			p0, p1 := 1.0, x
			for k := 2; k <= n; k++ {
				p0, p1 = p1, ((2*float64(k)-1)*x*p1-(float64(k)-1)*p0)/float64(k)
			}
			dp = float64(n) * (x*p1 - p0) / (x*x - 1)
			dx := p1 / dp
			x -= dx
			if math.Abs(dx) < 1e-16 {
				break
			}
		}
		p0, p1 := 1.0, x
		for k := 2; k <= n; k++ {
			p0, p1 = p1, ((2*float64(k)-1)*x*p1-(float64(k)-1)*p0)/float64(k)
		}
		dp = float64(n) * (x*p1 - p0) / (x*x - 1)
		w := 2 / ((1 - x*x) * dp * dp)
		out[i] = [2]float64{-x, w}
		out[n-1-i] = [2]float64{x, w}
	}
	return out
}

// Type-dispatching helpers: a type switch over the two types of the
// constraint.

func fromF[T scalar](x float64) T { return fromC[T](complex(x, 0)) }

func toC[T scalar](x T) complex128 {
	switch v := any(x).(type) {
	case float64:
		return complex(v, 0)
	case complex128:
		return v
	}
	panic("unreachable")
}

func isReal[T scalar]() bool {
	var r T
	switch any(r).(type) {
	case float64:
		return true
	case complex128:
		return false
	}
	panic("unreachable")
}

// fromC converts back; for a real T the imaginary part is dropped.
func fromC[T scalar](z complex128) T {
	var r T
	switch p := any(&r).(type) {
	case *float64:
		*p = real(z)
	case *complex128:
		*p = z
	}
	return r
}

func absT[T scalar](x T) float64 {
	switch v := any(x).(type) {
	case float64:
		return math.Abs(v)
	case complex128:
		return cmplx.Abs(v)
	}
	panic("unreachable")
}

func unary[T scalar](x T, fr func(float64) float64, fc func(complex128) complex128) T {
	switch v := any(x).(type) {
	case float64:
		return any(fr(v)).(T)
	case complex128:
		return any(fc(v)).(T)
	}
	panic("unreachable")
}

// sqrtT is the principal square root; for a real T the argument must be ≥ 0.
func sqrtT[T scalar](x T) T  { return unary(x, math.Sqrt, cmplx.Sqrt) }
func expT[T scalar](x T) T   { return unary(x, math.Exp, cmplx.Exp) }
func expm1T[T scalar](x T) T { return unary(x, math.Expm1, cexpm1) }
func coshT[T scalar](x T) T  { return unary(x, math.Cosh, cmplx.Cosh) }

// shc returns sinh(z)/z, 1 at z = 0.
func shc[T scalar](z T) T {
	if absT(z) == 0 {
		return 1
	}
	return unary(z, math.Sinh, cmplx.Sinh) / z
}

// cexpm1 is e^z − 1 without cancellation for small |z|:
// Re = expm1(x)·cos y − 2 sin²(y/2), Im = e^x sin y.
func cexpm1(z complex128) complex128 {
	x, y := real(z), imag(z)
	s := math.Sin(y / 2)
	return complex(math.Expm1(x)*math.Cos(y)-2*s*s, math.Exp(x)*math.Sin(y))
}
