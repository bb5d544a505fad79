package formula

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
)

const (
	// roundoff bounds the difference between the compiled derivative and a
	// hand derivative computed by the same floating-point operations in a
	// different order: a few ulps of the largest term.
	roundoff = 1e-13
	// fdStep and fdTol: a central difference with step h has truncation
	// error f'''·h²/6 and rounding error about eps·|f|/h; with h = 1e-5 and
	// the smooth test functions below (|f|, |f'''| ≲ 50) the sum is below
	// 1e-7 (derived).
	fdStep = 1e-5
	fdTol  = 1e-7
)

func params() *graphpde.Params {
	return &graphpde.Params{Names: []string{"k0", "b", "lambda"}, Values: []float64{2.5, 0.3, 1.7}}
}

// hand is a case with its derivatives worked out by hand (derived; the
// rules are the textbook ones, e.g. Abramowitz & Stegun, Handbook of
// Mathematical Functions, 1964, §4.1–4.5).
type hand struct {
	src              string
	x, u, ux, uxx, t float64
	v, du, dux, duxx float64
}

func handCases() []hand {
	const x, u, ux, uxx, t = 0.7, 0.4, -1.3, 2.1, 0.25
	k0, b, lam := 2.5, 0.3, 1.7
	return []hand{
		{"u + ux", x, u, ux, uxx, t, u + ux, 1, 1, 0},
		{"u - 2*uxx", x, u, ux, uxx, t, u - 2*uxx, 1, 0, -2},
		{"-u", x, u, ux, uxx, t, -u, -1, 0, 0},
		{"+u", x, u, ux, uxx, t, u, 1, 0, 0},
		{"u * ux", x, u, ux, uxx, t, u * ux, ux, u, 0},
		{"x * u", x, u, ux, uxx, t, x * u, x, 0, 0},
		{"u / ux", x, u, ux, uxx, t, u / ux, 1 / ux, -u / (ux * ux), 0},
		{"1 / u", x, u, ux, uxx, t, 1 / u, -1 / (u * u), 0, 0},
		{"u / x", x, u, ux, uxx, t, u / x, 1 / x, 0, 0},
		{"u ^ 2", x, u, ux, uxx, t, u * u, 2 * u, 0, 0},
		{"u ** 3", x, u, ux, uxx, t, u * u * u, 3 * u * u, 0, 0},
		{"u ^ 4", x, u, ux, uxx, t, math.Pow(u, 4), 4 * u * u * u, 0, 0},
		{"u ^ 0.5", x, u, ux, uxx, t, math.Sqrt(u), 0.5 / math.Sqrt(u), 0, 0},
		{"u ^ 0", x, u, ux, uxx, t, 1, 0, 0, 0},
		{"u ^ 1", x, u, ux, uxx, t, u, 1, 0, 0},
		{"2 ^ u", x, u, ux, uxx, t, math.Pow(2, u), math.Pow(2, u) * math.Ln2, 0, 0},
		{"u ^ ux", x, u, ux, uxx, t, math.Pow(u, ux), ux * math.Pow(u, ux-1), math.Pow(u, ux) * math.Log(u), 0},
		{"pow(u, x)", x, u, ux, uxx, t, math.Pow(u, x), x * math.Pow(u, x-1), 0, 0},
		{"exp(u)", x, u, ux, uxx, t, math.Exp(u), math.Exp(u), 0, 0},
		{"log(u)", x, u, ux, uxx, t, math.Log(u), 1 / u, 0, 0},
		{"sqrt(u)", x, u, ux, uxx, t, math.Sqrt(u), 0.5 / math.Sqrt(u), 0, 0},
		{"abs(ux)", x, u, ux, uxx, t, math.Abs(ux), 0, -1, 0},
		{"abs(u)", x, u, ux, uxx, t, u, 1, 0, 0},
		{"sin(u)", x, u, ux, uxx, t, math.Sin(u), math.Cos(u), 0, 0},
		{"cos(u)", x, u, ux, uxx, t, math.Cos(u), -math.Sin(u), 0, 0},
		{"tan(u)", x, u, ux, uxx, t, math.Tan(u), 1 / (math.Cos(u) * math.Cos(u)), 0, 0},
		{"tanh(u)", x, u, ux, uxx, t, math.Tanh(u), 1 / (math.Cosh(u) * math.Cosh(u)), 0, 0},
		{"sinh(u)", x, u, ux, uxx, t, math.Sinh(u), math.Cosh(u), 0, 0},
		{"cosh(u)", x, u, ux, uxx, t, math.Cosh(u), math.Sinh(u), 0, 0},
		{"min(u, ux)", x, u, ux, uxx, t, ux, 0, 1, 0},
		{"max(u, ux, uxx)", x, u, ux, uxx, t, uxx, 0, 0, 1},
		{"min(3, 1, u)", x, u, ux, uxx, t, u, 1, 0, 0},
		{"k0*(1 + b*u)", x, u, ux, uxx, t, k0 * (1 + b*u), k0 * b, 0, 0},
		{"uxx + lambda*exp(u)", x, u, ux, uxx, t, uxx + lam*math.Exp(u), lam * math.Exp(u), 0, 1},
		{"0.5*uxx - abs(ux) + 1", x, u, ux, uxx, t, 0.5*uxx - math.Abs(ux) + 1, 0, 1, 0.5},
		{"(1 + u)*uxx + ux^2", x, u, ux, uxx, t, (1+u)*uxx + ux*ux, uxx, 2 * ux, 1 + u},
		{"exp(-x)*sin(t)*u", x, u, ux, uxx, t, math.Exp(-x) * math.Sin(t) * u, math.Exp(-x) * math.Sin(t), 0, 0},
		{"u*u*u*u", x, u, ux, uxx, t, u * u * u * u, 4 * u * u * u, 0, 0},
		{"-2^2", x, u, ux, uxx, t, -4, 0, 0, 0},
		{"2^3^2", x, u, ux, uxx, t, 512, 0, 0, 0},
		{"ux / (1 + u^2)", x, u, ux, uxx, t, ux / (1 + u*u), -ux * 2 * u / ((1 + u*u) * (1 + u*u)), 1 / (1 + u*u), 0},
	}
}

func allVars() Spec { return Spec{Vars: X | U | UX | UXX | T, Params: params()} }

func near(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol*math.Max(1, math.Abs(want))
}

func TestHandDerivatives(t *testing.T) {
	for _, c := range handCases() {
		e, err := Compile(c.src, allVars())
		if err != nil {
			t.Errorf("%s: %v", c.src, err)
			continue
		}
		r := e.Eval(c.x, c.u, c.ux, c.uxx, c.t)
		want := Dual{c.v, c.du, c.dux, c.duxx}
		if !near(r.V, want.V, roundoff) || !near(r.DU, want.DU, roundoff) || !near(r.DUX, want.DUX, roundoff) || !near(r.DUXX, want.DUXX, roundoff) {
			t.Errorf("%s: got %+v, want %+v", c.src, r, want)
		}
		if v := e.Value(c.x, c.u, c.ux, c.uxx, c.t); v != r.V {
			t.Errorf("%s: Value %g, Eval.V %g", c.src, v, r.V)
		}
	}
}

func TestFiniteDifferences(t *testing.T) {
	for _, c := range handCases() {
		e, err := Compile(c.src, allVars())
		if err != nil {
			t.Errorf("%s: %v", c.src, err)
			continue
		}
		r := e.Eval(c.x, c.u, c.ux, c.uxx, c.t)
		h := fdStep
		fd := [3]float64{
			(e.Value(c.x, c.u+h, c.ux, c.uxx, c.t) - e.Value(c.x, c.u-h, c.ux, c.uxx, c.t)) / (2 * h),
			(e.Value(c.x, c.u, c.ux+h, c.uxx, c.t) - e.Value(c.x, c.u, c.ux-h, c.uxx, c.t)) / (2 * h),
			(e.Value(c.x, c.u, c.ux, c.uxx+h, c.t) - e.Value(c.x, c.u, c.ux, c.uxx-h, c.t)) / (2 * h),
		}
		got := [3]float64{r.DU, r.DUX, r.DUXX}
		for i, name := range []string{"u", "ux", "uxx"} {
			if !near(got[i], fd[i], fdTol) {
				t.Errorf("%s: ∂/∂%s = %.12g, central difference %.12g", c.src, name, got[i], fd[i])
			}
		}
	}
}

func TestConstantsAndParameters(t *testing.T) {
	p := params()
	for _, c := range []struct {
		src    string
		konst  bool
		value  float64
		uses   Var
		params bool
	}{
		{"2*3 + 1", true, 7, 0, false},
		{"exp(0) + sqrt(16)", true, 5, 0, false},
		{"min(4, 2, 8)", true, 2, 0, false},
		{"k0*2", false, 5, 0, true},
		{"x*0 + 1", false, 1, X, false},
		{"k0*(1 + b*u)", false, 2.5, U, true},
		{"uxx + lambda*exp(u) + 0*t", false, 1.7, U | UXX | T, true},
	} {
		e, err := Compile(c.src, Spec{Vars: X | U | UX | UXX | T, Params: p})
		if err != nil {
			t.Fatalf("%s: %v", c.src, err)
		}
		v, ok := e.Const()
		if ok != c.konst || (ok && v != c.value) {
			t.Errorf("%s: Const() = %g, %v; want %g, %v", c.src, v, ok, c.value, c.konst)
		}
		if got := e.Value(0, 0, 0, 0, 0); got != c.value {
			t.Errorf("%s: value %g, want %g", c.src, got, c.value)
		}
		if e.Uses() != c.uses || e.UsesParams() != c.params {
			t.Errorf("%s: uses %v, params %v; want %v, %v", c.src, e.Uses(), e.UsesParams(), c.uses, c.params)
		}
	}
	// A sweep changes a parameter after compilation: every law sees it.
	e, _ := Compile("k0*(1 + b*u)", Spec{Vars: U, Params: p})
	fn := e.Coef().Fn
	if err := p.Set("k0", 4); err != nil {
		t.Fatal(err)
	}
	if v, du := fn(0, 1, 0); v != 4*1.3 || du != 4*0.3 {
		t.Errorf("after k0 = 4: got %g, %g; want %g, %g", v, du, 4*1.3, 4*0.3)
	}
}

func TestErrors(t *testing.T) {
	p := params()
	coef := Spec{Vars: X | U | T, Params: p}
	for _, c := range []struct {
		src    string
		spec   Spec
		col    int
		token  string
		v      Var
		substr string
	}{
		{"k0*(1 + ux)", coef, 9, "ux", UX, "variable ux is not allowed here (allowed: x, u, t and the parameters k0, b, lambda)"},
		{"u + uxx", Spec{Vars: U}, 5, "uxx", UXX, "variable uxx is not allowed"},
		{"2*t", Spec{Vars: U}, 3, "t", T, "variable t"},
		{"kappa*u", coef, 1, "kappa", 0, `unknown name "kappa"`},
		{"exp(u", coef, 6, "", 0, "unexpected token EOF"},
		{"u +* 2", coef, 4, "*", 0, "unexpected token"},
		{"u % 2", coef, 3, "%", 0, `operator "%" is not allowed`},
		{"u > 2", coef, 3, ">", 0, `operator ">" is not allowed`},
		{"u ? 1 : 2", coef, 0, "?", 0, "conditionals are not allowed"},
		{"floor(u)", coef, 1, "floor", 0, `unknown function "floor"`},
		{"len(u)", coef, 1, "len", 0, `unknown function "len"`},
		{"exp(u, 2)", coef, 1, "exp", 0, "exp takes 1 argument, not 2"},
		{"pow(u)", coef, 1, "pow", 0, "pow takes 2 arguments, not 1"},
		{"max(u)", coef, 1, "max", 0, "max takes two or more arguments, not 1"},
		{"exp", coef, 1, "exp", 0, "exp is a function"},
		{`"u"`, coef, 1, "u", 0, "strings are not allowed"},
		{"true", coef, 1, "true", 0, "true and false are not allowed"},
		{"u; 2", coef, 0, "", 0, "not allowed"},
		{"d.arm1", coef, 0, "d.arm1", D, "belong to a node law"},
		{"d.arm9 + u", Spec{Vars: U | D, Ends: []string{"arm1"}}, 0, "arm9", 0, `no edge "arm9" meets this node (its edges: arm1)`},
		{"d + u", Spec{Vars: U | D, Ends: []string{"arm1"}}, 1, "d", 0, "write d.EDGE"},
		{"x.y", coef, 0, "x.y", 0, "the only names with a dot are d.EDGE"},
		{"log(0)", coef, 0, "", 0, "evaluates to -Inf"},
		{"  ", coef, 0, "", 0, "empty expression"},
		{"[1, 2]", coef, 1, "", 0, "not allowed"},
	} {
		_, err := Compile(c.src, c.spec)
		var fe *Error
		if !errors.As(err, &fe) {
			t.Errorf("%q: error %v, want an *Error", c.src, err)
			continue
		}
		if !strings.Contains(fe.Error(), c.substr) || (c.col > 0 && fe.Column != c.col) || (c.token != "" && fe.Token != c.token) || fe.Var != c.v {
			t.Errorf("%q: got %q (column %d, token %q, var %v); want %q at column %d, token %q, var %v",
				c.src, fe.Error(), fe.Column, fe.Token, fe.Var, c.substr, c.col, c.token, c.v)
		}
	}
}

func TestDomain(t *testing.T) {
	e, err := Compile("k0 + log(u)*x", Spec{Vars: X | U, Params: params()})
	if err != nil {
		t.Fatal(err)
	}
	if v := e.Value(1, -0.5, 0, 0, 0); !math.IsNaN(v) {
		t.Fatalf("log of a negative: got %g, want NaN", v)
	}
	got := e.Explain(1, -0.5, 0, 0, 0, nil)
	if want := "log(u) = NaN at u = -0.5 (column 6)"; got != want {
		t.Errorf("Explain: %q, want %q", got, want)
	}
	if got := e.Coef().Why(1, -0.5, 0); got != "log(u) = NaN at u = -0.5 (column 6)" {
		t.Errorf("Coef.Why: %q", got)
	}
	q, _ := Compile("uxx + sqrt(ux - 1)", Spec{Vars: U | UX | UXX})
	if got := q.Equation().Why(0, 0, 0, 0); got != "sqrt(ux - 1) = NaN at ux = 0 (column 7)" {
		t.Errorf("Equation.Why: %q", got)
	}
	if s := e.Explain(1, 2, 0, 0, 0, nil); s != "" {
		t.Errorf("Explain at a finite value: %q, want \"\"", s)
	}
	// sqrt at 0 has an infinite slope in u but none in ux.
	s, _ := Compile("sqrt(u) + ux", Spec{Vars: U | UX})
	r := s.Eval(0, 0, 1, 0, 0)
	if !math.IsInf(r.DU, 1) || r.DUX != 1 || r.DUXX != 0 {
		t.Errorf("sqrt(u)+ux at u = 0: %+v, want DU = +Inf, DUX = 1, DUXX = 0", r)
	}
}

func TestNodeLaw(t *testing.T) {
	// G = -(2 d_a + d_b) + 0.1 u^3 − k0: ∂G/∂d = (−2, −1), ∂G/∂u = 0.3 u².
	spec := Spec{Vars: U | D, Params: params(), Ends: []string{"a", "b-1", "loop.from"}}
	e, err := Compile(`-(2*d.a + d["b-1"]) + 0.1*u^3 - k0 + 0*d.loop.from`, spec)
	if err != nil {
		t.Fatal(err)
	}
	d := []float64{0.5, -1, 3}
	dd := make([]float64, 3)
	g, du := e.EvalLaw(2, d, dd)
	if want := -(2*0.5 - 1) + 0.1*8 - 2.5; !near(g, want, roundoff) {
		t.Errorf("G = %g, want %g", g, want)
	}
	if !near(du, 0.3*4, roundoff) {
		t.Errorf("∂G/∂u = %g, want %g", du, 1.2)
	}
	if dd[0] != -2 || dd[1] != -1 || dd[2] != 0 {
		t.Errorf("∂G/∂d = %v, want [-2 -1 0]", dd)
	}
	if allocs := testing.AllocsPerRun(100, func() { e.EvalLaw(2, d, dd) }); allocs != 0 {
		t.Errorf("EvalLaw allocates %g times per call", allocs)
	}
}

func TestNoAllocation(t *testing.T) {
	e, _ := Compile("k0*(1 + b*u) + sin(x)*t", allVars())
	fn := e.Coef().Fn
	q, _ := Compile("(1 + u)*uxx + ux^2 - abs(ux)", allVars())
	qf := q.Equation().Fn
	var sink float64
	if a := testing.AllocsPerRun(100, func() { v, du := fn(0.3, 0.2, 1); sink += v + du }); a != 0 {
		t.Errorf("Coef.Fn allocates %g times per call", a)
	}
	if a := testing.AllocsPerRun(100, func() { v, _, _, _ := qf(0.3, 0.2, 1, 2); sink += v }); a != 0 {
		t.Errorf("Equation.Fn allocates %g times per call", a)
	}
	_ = sink
}

func TestAdapters(t *testing.T) {
	p := params()
	loss, _ := Compile("b*u^4", Spec{Vars: U, Params: p})
	if v, du := loss.OfU()(2); v != 0.3*16 || !near(du, 0.3*32, roundoff) {
		t.Errorf("OfU: %g, %g", v, du)
	}
	fixed, _ := Compile("k0*sin(t)", Spec{Vars: T, Params: p})
	if v := fixed.OfT()(0.5); v != 2.5*math.Sin(0.5) {
		t.Errorf("OfT: %g", v)
	}
	eq, _ := Compile("uxx + lambda*exp(u)", Spec{Vars: X | U | UX | UXX, Params: p})
	E, du, dux, duxx := eq.Equation().Fn(0, 0, 0, 1)
	if E != 1+1.7 || du != 1.7 || dux != 0 || duxx != 1 {
		t.Errorf("Equation: %g %g %g %g", E, du, dux, duxx)
	}
	c := eq.Coef()
	if !c.UsesU || c.UsesX || c.UsesT || !c.UsesP || c.Src != "uxx + lambda*exp(u)" {
		t.Errorf("Coef flags: %+v", c)
	}
}

// TestConcurrent evaluates one coefficient and one node law from several
// goroutines at once (run with -race): the results must equal the
// sequential ones.
func TestConcurrent(t *testing.T) {
	p := params()
	c, _ := Compile("k0*(1 + b*u) + sin(x)", Spec{Vars: X | U | T, Params: p})
	law, _ := Compile("-(d.a + 2*d.b) + u^3", Spec{Vars: U | D, Ends: []string{"a", "b"}})
	fn := c.Coef().Fn
	done := make(chan string)
	for w := range 4 {
		go func() {
			msg := ""
			d, dd := []float64{float64(w), 1}, make([]float64, 2)
			for i := range 1000 {
				u := float64(i) * 1e-3
				if v, du := fn(0.5, u, 0); v != 2.5*(1+0.3*u)+math.Sin(0.5) || du != 2.5*0.3 {
					msg = "coefficient"
				}
				if g, du := law.EvalLaw(u, d, dd); !near(g, -(float64(w)+2)+u*u*u, roundoff) || !near(du, 3*u*u, roundoff) || dd[0] != -1 || dd[1] != -2 {
					msg = "node law"
				}
			}
			done <- msg
		}()
	}
	for range 4 {
		if msg := <-done; msg != "" {
			t.Errorf("concurrent evaluation of the %s differs", msg)
		}
	}
}
