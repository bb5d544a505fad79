package graphpde

import (
	"fmt"
	"math"
	"math/cmplx"
	"testing"
)

// naiveSolution solves a u_xx + b u_x − c u + f = 0 on [0, L] with u(0) = U0,
// u(L) = UL by the textbook route: a particular solution plus A e^{r₁x} + B e^{r₂x}
// with the roots r = −μ ± κ of a r² + b r − c = 0, the 2×2 system for A, B
// solved directly with unscaled exponentials. It is an independent reference
// for moderate |κL| (its conditioning is about e^{|κL|+|μL|}·ε) and c not small
// (the particular solution f/c cancels otherwise). It returns u and u'.
func naiveSolution(a, b float64, c, f complex128, L float64, U0, UL complex128) (u, du func(x float64) complex128) {
	mu := complex(b/(2*a), 0)
	kappa := cmplx.Sqrt(mu*mu + c/complex(a, 0))
	var up, dup func(x float64) complex128
	switch {
	case c != 0:
		up = func(float64) complex128 { return f / c }
		dup = func(float64) complex128 { return 0 }
	case b != 0:
		up = func(x float64) complex128 { return -f * complex(x/b, 0) }
		dup = func(float64) complex128 { return -f / complex(b, 0) }
	default:
		up = func(x float64) complex128 { return -f * complex(x*x/(2*a), 0) }
		dup = func(x float64) complex128 { return -f * complex(x/a, 0) }
	}
	r0 := U0 - up(0)
	rL := UL - up(L)
	if kappa == 0 { // b = c = 0: homogeneous part A + Bx
		A, B := r0, (rL-r0)/complex(L, 0)
		return func(x float64) complex128 { return up(x) + A + B*complex(x, 0) },
			func(x float64) complex128 { return dup(x) + B }
	}
	r1, r2 := -mu+kappa, -mu-kappa
	e1, e2 := cmplx.Exp(r1*complex(L, 0)), cmplx.Exp(r2*complex(L, 0))
	det := e2 - e1
	A := (r0*e2 - rL) / det
	B := (rL - r0*e1) / det
	return func(x float64) complex128 {
			X := complex(x, 0)
			return up(x) + A*cmplx.Exp(r1*X) + B*cmplx.Exp(r2*X)
		}, func(x float64) complex128 {
			X := complex(x, 0)
			return dup(x) + A*r1*cmplx.Exp(r1*X) + B*r2*cmplx.Exp(r2*X)
		}
}

// naiveMap returns the element map of naiveSolution: columns from the unit
// end values with f = 0, and g from zero end values.
func naiveMap(a, b float64, c, f complex128, L float64) (d [2][2]complex128, g [2]complex128) {
	_, du := naiveSolution(a, b, c, 0, L, 1, 0)
	d[0][0], d[1][0] = du(0), du(L)
	_, du = naiveSolution(a, b, c, 0, L, 0, 1)
	d[0][1], d[1][1] = du(0), du(L)
	_, du = naiveSolution(a, b, c, f, L, 0, 0)
	g[0], g[1] = du(0), du(L)
	return d, g
}

type elemCase struct {
	name    string
	a, b    float64
	c, f    complex128
	L       float64
	complex bool
}

var elemCases = []elemCase{
	{"pure diffusion", 2, 0, 0, 1, 1.5, false},
	{"decay small kL", 1, 0, 0.3, 2, 1, false},
	{"decay large kL", 0.5, 0, 8, -1, 2, false},
	{"drift only", 1, 3, 0, 1, 1, false},
	{"drift only backwards", 0.7, -2, 0, 0.5, 2, false},
	{"drift and decay", 1.3, 2.5, 1.7, 0.8, 1.2, false},
	{"drift and decay small kL", 1, 0.4, 0.1, 1, 0.8, false},
	{"negative drift and decay", 1, -4, 2, 3, 1.5, false},
	{"complex shift", 1, 0, complex(0.5, 3), 1, 1, true},
	{"complex shift drift", 0.8, 1.5, complex(2, -5), complex(1, 0.5), 1.3, true},
	{"complex small kL", 1, 0.2, complex(0.1, 0.2), 1, 0.9, true},
	{"complex left half plane", 1, 0, complex(-3, 4), 1, 1, true},
}

// TestExactElementClosedForm compares the scaled element map with the
// unscaled textbook solution (naiveSolution) for moderate parameters, in
// float64 and complex128. Tolerance naive = 1e-10: the reference loses about
// e^{|κL|+|μL|} ≤ e^{8} ulps.
func TestExactElementClosedForm(t *testing.T) {
	const naive = 1e-10
	for _, tc := range elemCases {
		t.Run(tc.name, func(t *testing.T) {
			wd, wg := naiveMap(tc.a, tc.b, tc.c, tc.f, tc.L)
			var gd [2][2]complex128
			var gg [2]complex128
			if tc.complex {
				gd, gg = exactElement(tc.a, tc.b, tc.c, tc.f, tc.L)
			} else {
				d, g := exactElement(tc.a, tc.b, real(tc.c), real(tc.f), tc.L)
				for i := range 2 {
					gg[i] = complex(g[i], 0)
					for j := range 2 {
						gd[i][j] = complex(d[i][j], 0)
					}
				}
			}
			scale := 0.0
			for i := range 2 {
				for j := range 2 {
					scale = math.Max(scale, cmplx.Abs(wd[i][j]))
				}
			}
			for i := range 2 {
				for j := range 2 {
					if e := cmplx.Abs(gd[i][j] - wd[i][j]); e > naive*scale {
						t.Errorf("d[%d][%d] = %v, want %v", i, j, gd[i][j], wd[i][j])
					}
				}
				gs := math.Max(cmplx.Abs(wg[0]), cmplx.Abs(wg[1]))
				if e := cmplx.Abs(gg[i] - wg[i]); e > naive*gs {
					t.Errorf("g[%d] = %v, want %v", i, gg[i], wg[i])
				}
			}
			// Interior values.
			u, _ := naiveSolution(tc.a, tc.b, tc.c, tc.f, tc.L, 1.5, -0.5)
			for _, fr := range []float64{0.1, 0.37, 0.5, 0.9} {
				x := fr * tc.L
				var got complex128
				if tc.complex {
					got = exactValue(tc.a, tc.b, tc.c, tc.f, tc.L, x, 1.5, -0.5)
				} else {
					got = complex(exactValue(tc.a, tc.b, real(tc.c), real(tc.f), tc.L, x, 1.5, -0.5), 0)
				}
				if want := u(x); cmplx.Abs(got-want) > naive*math.Max(1, cmplx.Abs(want)) {
					t.Errorf("u(%g) = %v, want %v", x, got, want)
				}
			}
		})
	}
}

// TestExactElementRealEqualsComplex checks that the complex128 element with
// zero imaginary parts reproduces the float64 element (the same formulas on
// different number types): tolerance roundoff = 1e-14 relative.
func TestExactElementRealEqualsComplex(t *testing.T) {
	const roundoff = 1e-14
	for _, tc := range elemCases {
		if tc.complex {
			continue
		}
		d, g := exactElement(tc.a, tc.b, real(tc.c), real(tc.f), tc.L)
		dc, gc := exactElement(tc.a, tc.b, complex(real(tc.c), 0), complex(real(tc.f), 0), tc.L)
		for i := range 2 {
			for j := range 2 {
				if cmplx.Abs(dc[i][j]-complex(d[i][j], 0)) > roundoff*(1+math.Abs(d[i][j])) {
					t.Errorf("%s: d[%d][%d] complex %v, real %v", tc.name, i, j, dc[i][j], d[i][j])
				}
			}
			if cmplx.Abs(gc[i]-complex(g[i], 0)) > roundoff*(1+math.Abs(g[i])) {
				t.Errorf("%s: g[%d] complex %v, real %v", tc.name, i, gc[i], g[i])
			}
		}
	}
}

// adjointQuadrature integrates the adjoint solutions written directly,
// v₀(y) = e^{μy} sinh(κ(L−y))/sinh(κL) (and v_L), by composite 8-point
// Gauss–Legendre on 200 panels, for real κ > 0 of moderate size. It has no
// 1/c in it, so it is a reference for small decay.
func adjointQuadrature(a, b, c, L float64) (i0, iL float64) {
	mu := b / (2 * a)
	k := math.Sqrt(mu*mu + c/a)
	v0 := func(y float64) float64 {
		if k == 0 {
			return math.Exp(mu*y) * (L - y) / L
		}
		return math.Exp(mu*y) * math.Sinh(k*(L-y)) / math.Sinh(k*L)
	}
	vL := func(y float64) float64 {
		if k == 0 {
			return math.Exp(-mu*(L-y)) * y / L
		}
		return math.Exp(-mu*(L-y)) * math.Sinh(k*y) / math.Sinh(k*L)
	}
	gl := gaussLegendre(8)
	const panels = 200
	h := L / panels
	for p := range panels {
		for _, nd := range gl {
			y := h * (float64(p) + 0.5 + 0.5*nd[0])
			i0 += 0.5 * h * nd[1] * v0(y)
			iL += 0.5 * h * nd[1] * vL(y)
		}
	}
	return i0, iL
}

// TestExactElementSmallDecay checks the source terms where the textbook form
// f/c·(1 − …) cancels: decay from 0 to moderate, with and without drift,
// against direct quadrature of the adjoint solutions (adjointQuadrature).
// Tolerance quad = 1e-12 relative (composite Gauss–Legendre on smooth
// integrands converges to round-off).
func TestExactElementSmallDecay(t *testing.T) {
	const quad = 1e-12
	for _, b := range []float64{0, 3, -3, 0.01} {
		for _, c := range []float64{0, 1e-14, 1e-10, 1e-6, 1e-3, 0.1, 2, 30} {
			a, f, L := 0.8, 1.3, 1.7
			_, g := exactElement(a, b, c, f, L)
			i0, iL := adjointQuadrature(a, b, c, L)
			w0, w1 := f/a*i0, -f/a*iL
			if math.Abs(g[0]-w0) > quad*math.Abs(w0) || math.Abs(g[1]-w1) > quad*math.Abs(w1) {
				t.Errorf("b=%g c=%g: g = %v, want [%v %v]", b, c, g, w0, w1)
			}
			// The homogeneous map keeps constants when c = 0 and loses
			// them at rate c: d00 + d01 = −(c/a)·∫v₀ exactly (Green's identity
			// with u ≡ 1 and source c).
			d, _ := exactElement(a, b, c, 0.0, L)
			want := -c / a * i0
			if e := math.Abs(d[0][0] + d[0][1] - want); e > quad*(math.Abs(d[0][0])+math.Abs(want)) {
				t.Errorf("b=%g c=%g: d00+d01 = %v, want %v", b, c, d[0][0]+d[0][1], want)
			}
		}
	}
}

// TestExactElementExtreme checks a very long strongly decaying edge (κL = 1e4)
// and strong drift (Péclet |b|L/a up to 2e3) against their asymptotic forms,
// which are exact to double precision there (the neglected terms are below
// e^{−700}): decay: d = diag(−κ, κ), g = ±f/(aκ); drift with c = 0:
// u'(0) = −(b/a)(U0 − UL) + fL/a − f/b for b > 0. Tolerance roundoff = 1e-13.
func TestExactElementExtreme(t *testing.T) {
	const roundoff = 1e-13
	near := func(name string, got, want float64) {
		t.Helper()
		if math.IsNaN(got) || math.IsInf(got, 0) || math.Abs(got-want) > roundoff*math.Max(1, math.Abs(want)) {
			t.Errorf("%s = %v, want %v", name, got, want)
		}
	}
	// κ = 1e4, L = 1.
	a, c, f := 2.0, 2e8, 3.0
	k := math.Sqrt(c / a)
	d, g := exactElement(a, 0, c, f, 1)
	near("decay d00", d[0][0], -k)
	near("decay d01", d[0][1], 0)
	near("decay d10", d[1][0], 0)
	near("decay d11", d[1][1], k)
	near("decay g0", g[0], f/(a*k))
	near("decay g1", g[1], -f/(a*k))
	// one decay length inside: u = (U0 − f/c) e^{−1} + f/c
	near("decay value", exactValue(a, 0, c, f, 1, 1/k, 1, 0.5), (1-f/c)*math.Exp(-1)+f/c)
	near("decay value middle", exactValue(a, 0, c, f, 1, 0.5, 1, 0.5), f/c)

	for _, pe := range []float64{1e3, 2e3} {
		a, L, f := 0.5, 1.0, 0.7
		b := pe * a / L
		d, g := exactElement(a, b, 0, f, L)
		near(fmt.Sprintf("Pe %g d00", pe), d[0][0], -b/a)
		near(fmt.Sprintf("Pe %g d01", pe), d[0][1], b/a)
		near(fmt.Sprintf("Pe %g d10", pe), d[1][0], 0)
		near(fmt.Sprintf("Pe %g d11", pe), d[1][1], 0)
		near(fmt.Sprintf("Pe %g g0", pe), g[0], f*L/a-f/b)
		near(fmt.Sprintf("Pe %g g1", pe), g[1], -f/b)
		// backwards drift mirrors it
		d, g = exactElement(a, -b, 0, f, L)
		near(fmt.Sprintf("Pe −%g d11", pe), d[1][1], b/a)
		near(fmt.Sprintf("Pe −%g d10", pe), d[1][0], -b/a)
		near(fmt.Sprintf("Pe −%g g1", pe), g[1], -(f*L/a - f/b))
		// outside the boundary layer u = UL + f(L − x)/b
		near(fmt.Sprintf("Pe %g value", pe), exactValue(a, b, 0, f, L, 0.5, 1, 0.25), 0.25+f*0.5/b)
		// strong drift and strong decay together stay finite
		d, g = exactElement(a, b, 1e9, f, L)
		for i := range 2 {
			for j := range 2 {
				if math.IsNaN(d[i][j]) || math.IsInf(d[i][j], 0) {
					t.Errorf("Pe %g with decay: d = %v", pe, d)
				}
			}
		}
		if math.IsNaN(g[0]) || math.IsNaN(g[1]) {
			t.Errorf("Pe %g with decay: g = %v", pe, g)
		}
	}
	// drift so strong that μ² overflows: still the drift asymptotics
	d, g = exactElement(1, 1e300, 1.0, 1.0, 1)
	near("huge drift d00/b", d[0][0]/1e300, -1)
	near("huge drift d01/b", d[0][1]/1e300, 1)
	near("huge drift d11", d[1][1], 0)
	near("huge drift g0", g[0], 1)
}

// TestAdjointSeriesQuadrature compares the two evaluations of the adjoint
// integrals for |κL| < 1: the double series and 20-point Gauss–Legendre
// quadrature of the entire integrand, real and complex, with and without
// drift. Tolerance roundoff = 1e-14 relative (the series loses at most e²
// ulps to cancellation, the quadrature is exact to round-off here).
func TestAdjointSeriesQuadrature(t *testing.T) {
	const roundoff = 1e-14
	L := 1.7
	for _, m := range []float64{0, 0.3, -0.7, 1, -1} {
		for _, z := range []complex128{0, 0.2, 0.99, complex(0.3, 0.5), complex(0.1, -0.9), complex(0.6, 0.6)} {
			mu := m / L
			kappa := z / complex(L, 0)
			s0, s1 := adjointSeries(m, z*z, shc(z), L)
			q0, q1 := adjointIntegrals(mu, kappa, L)
			if cmplx.Abs(s0-q0) > roundoff*cmplx.Abs(q0) || cmplx.Abs(s1-q1) > roundoff*cmplx.Abs(q1) {
				t.Errorf("m=%g z=%v: series (%v, %v), quadrature (%v, %v)", m, z, s0, s1, q0, q1)
			}
			if imag(z) == 0 {
				r0, r1 := adjointSeries(m, real(z*z), real(shc(z)), L)
				if math.Abs(r0-real(q0)) > roundoff*math.Abs(real(q0)) || math.Abs(r1-real(q1)) > roundoff*math.Abs(real(q1)) {
					t.Errorf("real m=%g z=%v: series (%v, %v), quadrature (%v, %v)", m, z, r0, r1, q0, q1)
				}
			}
		}
	}
}
