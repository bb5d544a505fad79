package netfile

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/formula"
	"github.com/ramify-dev/ramify/vertex"
)

// exprFile uses every expression-valued key (an invented scenario: a heated
// fork with a radiating junction and a tapered arm).
const exprFile = `[network]
name = "expression keys"

[parameters]
k0 = 2.0
beta = 0.5
q = 3.0
sigma = 0.1
lambda = 1.5

[defaults]
cells = 8
source = "q"

[[node]]
id = "hot"
fixed = "1 + 0.5*sin(t)"
initial = "k0/2"

[[node]]
id = "hub"
loss = "sigma*u^4"

[[node]]
id = "tip"
law = "-(d.arm + 2*d[\"loop.from\"] + 2*d.loop.to) + beta*u - 1"

[[node]]
id = "feed"
inject = "q*k0"

[[edge]]
id = "trunk"
from = "hot"
to = "hub"
length = "250 mm"
diffusivity = "k0*(1 + beta*u)"
decay = "0.1*x"
initial = "x*(1 - x)"

[[edge]]
id = "arm"
from = "hub"
to = "tip"
length = 2
diffusivity = "1 + x"
capacity = "2 - 0.25*x"
source = 0

[[edge]]
id = "loop"
from = "tip"
to = "tip"
length = 1
equation = "uxx + lambda*exp(u) - abs(ux)"
weights = [1, 2]

[[edge]]
id = "lead"
from = "feed"
to = "hub"
length = 1
diffusivity = "2*3"
drift = "sin(t)*x"
initial = 0.25
`

// derivTol bounds the difference between two evaluations of the same law
// by closures built from the same expression: they must agree exactly, but
// a hand formula in a different order may differ in the last bits.
const derivTol = 1e-14

func TestReadExpressions(t *testing.T) {
	net, err := Read(strings.NewReader(exprFile), "expr.toml")
	if err != nil {
		t.Fatal(err)
	}
	if net.Params == nil || len(net.Params.Names) != 5 || net.Params.Names[4] != "lambda" || net.Params.Values[4] != 1.5 {
		t.Fatalf("parameters: %+v", net.Params)
	}
	node := func(id string) *graphpde.Node { v, _ := net.NodeIndex(id); return &net.Nodes[v] }
	edge := func(id string) *graphpde.Edge { e, _ := net.EdgeIndex(id); return &net.Edges[e] }

	hot := node("hot")
	if hot.Law.Kind != vertex.Fixed || hot.Law.Value != 1 || hot.Time == nil || !hot.Time.UsesT || hot.Time.Fixed(1) != 1+0.5*math.Sin(1) {
		t.Errorf("hot: law %+v time %+v", hot.Law, hot.Time)
	}
	if hot.Initial == nil || *hot.Initial != 1 {
		t.Errorf("hot initial: %v, want 1", hot.Initial)
	}
	hub := node("hub")
	if hub.Nonlinear == nil || hub.Nonlinear.Loss == nil {
		t.Fatalf("hub: no loss law")
	}
	if v, du := hub.Nonlinear.Loss(2); v != 0.1*16 || math.Abs(du-0.1*32) > derivTol {
		t.Errorf("hub loss(2) = %g, %g; want 1.6, 3.2", v, du)
	}
	tip := node("tip")
	if tip.Nonlinear == nil || tip.Nonlinear.General == nil {
		t.Fatalf("tip: no general law")
	}
	// Incident order at tip: arm (to end), loop (from end), loop (to end).
	d, dd := []float64{1, 2, 3}, make([]float64, 3)
	g, du := tip.Nonlinear.General(4, d, dd)
	if want := -(1 + 2*2 + 2*3) + 0.5*4 - 1.0; g != want || du != 0.5 || dd[0] != -1 || dd[1] != -2 || dd[2] != -2 {
		t.Errorf("tip law: G = %g (want %g), dG/du = %g, dG/dd = %v", g, want, du, dd)
	}
	feed := node("feed")
	if feed.Law.Inject != 6 || feed.Time == nil || feed.Time.UsesT || feed.Time.Inject(0) != 6 {
		t.Errorf("feed: inject %g, time %+v", feed.Law.Inject, feed.Time)
	}

	trunk := edge("trunk")
	if trunk.Length != 0.25 {
		t.Errorf("trunk length %g, want 0.25 (from \"250 mm\")", trunk.Length)
	}
	if trunk.Law == nil || trunk.Law.A == nil || !trunk.Law.A.UsesU || trunk.Law.A.Src != "k0*(1 + beta*u)" {
		t.Fatalf("trunk: diffusivity law %+v", trunk.Law)
	}
	if v, du := trunk.Law.A.Fn(0, 2, 0); v != 4 || du != 1 {
		t.Errorf("trunk a(2) = %g, %g; want 4, 1", v, du)
	}
	// source = "q" from [defaults]: parameters only, a law with the value
	// in the plain field for the engines that read constants.
	if trunk.F != 3 || trunk.Law.F == nil || !trunk.Law.F.UsesP {
		t.Errorf("trunk source: F = %g, law %+v", trunk.F, trunk.Law.F)
	}
	// decay = "0.1*x": a profile, which the linear engines read.
	x := 0.2
	if trunk.Profile == nil || trunk.Profile.C == nil || trunk.Profile.C(x) != 0.1*x || trunk.Profile.SrcC != "0.1*x" {
		t.Errorf("trunk decay profile: %+v", trunk.Profile)
	}
	if trunk.Law.Initial == nil || trunk.Law.Initial.Src != "x*(1 - x)" {
		t.Errorf("trunk initial: %+v", trunk.Law.Initial)
	}
	if v, _ := trunk.Law.Initial.Fn(x, 0, 0); v != x*(1-x) {
		t.Errorf("trunk initial(0.2) = %g", v)
	}
	arm := edge("arm")
	if arm.Law != nil || arm.Profile == nil || arm.Profile.A == nil || arm.Profile.Rho == nil || arm.F != 0 {
		t.Fatalf("arm: law %+v profile %+v F %g", arm.Law, arm.Profile, arm.F)
	}
	if a, _, _, _, rho := arm.Coeffs(1); a != 2 || rho != 1.75 {
		t.Errorf("arm coefficients at x = 1: a = %g, ρ = %g; want 2, 1.75", a, rho)
	}
	if w := arm.EndWeight(1); w != 3 {
		t.Errorf("arm default weight at its to end: %g, want the diffusivity there, 3", w)
	}
	loop := edge("loop")
	if loop.Law == nil || loop.Law.Equation == nil || loop.Weight != [2]float64{1, 2} || loop.A != 0 {
		t.Fatalf("loop: %+v", loop)
	}
	e, eu, eux, euxx := loop.Law.Equation.Fn(0, 0, -1, 2)
	if e != 2+1.5-1 || eu != 1.5 || eux != 1 || euxx != 1 {
		t.Errorf("loop equation: %g %g %g %g", e, eu, eux, euxx)
	}
	lead := edge("lead")
	if lead.A != 6 || lead.Law == nil || lead.Law.A != nil || lead.Law.B == nil || !lead.Law.B.UsesT {
		t.Errorf("lead: A = %g, law %+v", lead.A, lead.Law)
	}
	if lead.Law.Initial == nil || lead.Law.Initial.Src != "0.25" {
		t.Errorf("lead initial: %+v", lead.Law.Initial)
	}

	// A sweep changes a parameter: every law that reads it follows.
	if err := net.Params.Set("k0", 4); err != nil {
		t.Fatal(err)
	}
	if v, _ := trunk.Law.A.Fn(0, 2, 0); v != 8 {
		t.Errorf("after k0 = 4: trunk a(2) = %g, want 8", v)
	}
	if v := feed.Time.Inject(0); v != 12 {
		t.Errorf("after k0 = 4: feed inject %g, want 12", v)
	}
}

func TestContractCasesRead(t *testing.T) {
	for _, c := range []struct{ name, src string }{
		{"quasirod", `[[node]]
id = "cold"
fixed = 0.0
[[node]]
id = "hot"
fixed = 1.0
[[edge]]
id = "rod"
from = "cold"
to = "hot"
length = 1.0
diffusivity = "1 + u"
cells = 400
`},
		{"bratu", `[parameters]
lambda = 1.0
[[node]]
id = "left"
fixed = 0.0
[[node]]
id = "right"
fixed = 0.0
[[edge]]
id = "slab"
from = "left"
to = "right"
length = 1.0
equation = "uxx + lambda*exp(u)"
weight = 1.0
cells = 400
`},
	} {
		net, err := Read(strings.NewReader(c.src), c.name+".toml")
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		l := net.Edges[0].Law
		switch c.name {
		case "quasirod":
			if v, du := l.A.Fn(0.3, 0.5, 0); v != 1.5 || du != 1 || net.Edges[0].Weight != [2]float64{} {
				t.Errorf("quasirod: a(0.5) = %g, %g; weights %v", v, du, net.Edges[0].Weight)
			}
		case "bratu":
			if e, eu, _, euxx := l.Equation.Fn(0.5, 0, 0, -1); e != 0 || eu != 1 || euxx != 1 {
				t.Errorf("bratu: E = %g, ∂u = %g, ∂uxx = %g", e, eu, euxx)
			}
		}
	}
}

// TestExpressionErrors checks that a bad expression, or a key that breaks
// the rules of expressions, is one *Error naming the file, the line, the
// key and (for a variable the key may not use) the variable.
func TestExpressionErrors(t *testing.T) {
	const edge = twoNodes + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\n"
	const node = "[[node]]\nid = \"n\"\n"
	for _, tc := range []struct {
		name string
		src  string
		line int
		msg  string
		v    formula.Var
	}{
		{"diffusivity with ux", edge + "diffusivity = \"1 + ux\"\n", 12, `diffusivity = "1 + ux": column 5: variable ux is not allowed here (allowed: x, u, t)`, formula.UX},
		{"capacity with u", edge + "diffusivity = 1\ncapacity = \"1 + u\"\n", 13, "capacity = \"1 + u\": column 5: variable u is not allowed", formula.U},
		{"equation with t", edge + "equation = \"uxx - t\"\nweight = 1\n", 12, "variable t is not allowed here (allowed: x, u, ux, uxx)", formula.T},
		{"edge initial with u", edge + "diffusivity = 1\ninitial = \"u\"\n", 13, "initial = \"u\": column 1: variable u", formula.U},
		{"fixed with x", node + "fixed = \"x\"\n", 3, `fixed = "x": column 1: variable x is not allowed here (allowed: t)`, formula.X},
		{"inject with u", node + "inject = \"2*u\"\n", 3, "variable u", formula.U},
		{"loss with ux", node + "loss = \"ux\"\n", 3, "variable ux", formula.UX},
		{"node initial with t", node + "initial = \"t\"\n", 3, "variable t is not allowed here (allowed: only numbers)", formula.T},
		{"law with x", twoNodes + node + "law = \"x + d.e\"\n" + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"n\"\nlength = 1\ndiffusivity = 1\n", 9, "law = \"x + d.e\": column 1: variable x", formula.X},
		{"law names a far edge", twoNodes + node + "law = \"u - d.e\"\n" + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n", 9, `no edge "e" meets this node`, 0},
		{"law not a string", node + "law = 2\n", 3, "law must be a string", 0},
		{"equation not a string", edge + "equation = 2\nweight = 1\n", 12, "equation must be a string", 0},
		{"equation without weights", edge + "equation = \"uxx\"\n", 12, "must give weight or weights", 0},
		{"equation with diffusivity", edge + "equation = \"uxx\"\ndiffusivity = 1\nweight = 1\n", 13, "diffusivity is not allowed with equation", 0},
		{"expression for length", edge + "diffusivity = 1\ncells = 2\nweight = \"2*3\"\n", 14, "weight must be a number, not a string", 0},
		{"unknown function", edge + "diffusivity = \"floor(u)\"\n", 12, `unknown function "floor"`, 0},
		{"syntax", edge + "diffusivity = \"1 + \"\n", 12, "the expression ends too early", 0},
		{"unknown parameter", edge + "diffusivity = \"kappa*u\"\n", 12, `unknown name "kappa"`, 0},
		{"negative constant", edge + "diffusivity = \"1 - 2\"\n", 12, "diffusivity = -1 must be a finite number > 0", 0},
		{"negative profile", edge + "diffusivity = \"1 - 2*x\"\n", 12, `diffusivity = "1 - 2*x" is 0 at x = 0.5: must be a finite number > 0`, 0},
		{"profile log of 0", edge + "diffusivity = 1\nsource = \"log(x)\"\n", 13, `source = "log(x)" is -Inf at x = 0: must be a finite number (log(x) = -Inf at x = 0 (column 1))`, 0},
		{"negative with parameters", "[parameters]\nc = -1\n" + edge + "diffusivity = 1\ndecay = \"c\"\n", 15, "decay = -1 must be a finite number ≥ 0 (with the parameters of the file)", 0},
		{"fixed NaN at t = 0", node + "fixed = \"log(t)\"\n", 3, `fixed = "log(t)" is -Inf at t = 0`, 0},
		{"loss on a fixed node", node + "fixed = 1\nloss = \"u\"\n", 4, "loss is not allowed on a fixed node", 0},
		{"loss with leak", node + "leak = 1\nloss = \"u^3\"\n", 3, "leak is not allowed with loss", 0},
		{"loss and law", node + "loss = \"u^3\"\nlaw = \"u\"\n", 3, "give loss or law, not both", 0},
		{"inject expression on fixed", node + "fixed = 1\ninject = \"t\"\n", 4, "inject is not allowed on a fixed node", 0},
		{"parameter name", "[parameters]\n\"k 0\" = 1\n", 2, `parameter name "k 0" must be letters`, 0},
		{"parameter name digit", "[parameters]\n2k = 1\n", 2, "not starting with a digit", 0},
		{"parameter reserved", "[parameters]\nexp = 1\n", 2, `parameter name "exp" is taken`, 0},
		{"parameter variable", "[parameters]\nux = 1\n", 2, `parameter name "ux" is taken`, 0},
		{"parameter expression", "[parameters]\nk = \"2*3\"\n", 2, "parameter k must be a number, not an expression", 0},
		{"parameter NaN", "[parameters]\nk = nan\n", 2, "k = NaN must be a finite number", 0},
		{"parameters not a table", "parameters = 3\n", 1, "parameters must be a table", 0},
	} {
		_, err := Read(strings.NewReader(tc.src), "x.toml")
		var fe *Error
		if !errors.As(err, &fe) {
			t.Errorf("%s: error %v, want an *Error", tc.name, err)
			continue
		}
		if fe.Line != tc.line || !strings.Contains(fe.Error(), tc.msg) || !strings.HasPrefix(fe.Error(), "x.toml:") {
			t.Errorf("%s: got %q (line %d), want line %d and %q", tc.name, fe.Error(), fe.Line, tc.line, tc.msg)
		}
		var ce *formula.Error
		if tc.v != 0 && (!errors.As(err, &ce) || ce.Var != tc.v) {
			t.Errorf("%s: the cause %v does not name the variable %v", tc.name, fe.Err, tc.v)
		}
	}
}

// TestWriteExpressions checks that Write writes parameters and expressions
// back: the file it writes reads to the same laws (compared at sample
// points) and writes again to the same text.
func TestWriteExpressions(t *testing.T) {
	net, err := Read(strings.NewReader(exprFile), "expr.toml")
	if err != nil {
		t.Fatal(err)
	}
	var first bytes.Buffer
	if err := Write(&first, net); err != nil {
		t.Fatal(err)
	}
	back, err := Read(bytes.NewReader(first.Bytes()), "written.toml")
	if err != nil {
		t.Fatalf("reading what Write wrote: %v\n%s", err, first.String())
	}
	var second bytes.Buffer
	if err := Write(&second, back); err != nil {
		t.Fatal(err)
	}
	if first.String() != second.String() {
		t.Errorf("written twice, the files differ:\n%s\n---\n%s", first.String(), second.String())
	}
	for _, want := range []string{"[parameters]\nk0 = 2.0\n", `fixed = "1 + 0.5*sin(t)"`, `loss = "sigma*u^4"`, `law = "-(d.arm + 2*d[\"loop.from\"] + 2*d.loop.to) + beta*u - 1"`,
		`inject = "q*k0"`, `diffusivity = "k0*(1 + beta*u)"`, `decay = "0.1*x"`, `source = "q"`, `capacity = "2 - 0.25*x"`, `equation = "uxx + lambda*exp(u) - abs(ux)"`,
		`initial = "x*(1 - x)"`, "initial = 0.25\n", "initial = 1.0\n", `drift = "sin(t)*x"`, "diffusivity = 6.0\n"} {
		if !strings.Contains(first.String(), want) {
			t.Errorf("written file lacks %s:\n%s", want, first.String())
		}
	}
	// The laws read back agree with the originals.
	for i := range net.Edges {
		a, b := &net.Edges[i], &back.Edges[i]
		for _, x := range []float64{0, 0.1, 0.25} {
			a1, b1, c1, f1, r1 := a.Coeffs(x)
			a2, b2, c2, f2, r2 := b.Coeffs(x)
			if a1 != a2 || b1 != b2 || c1 != c2 || f1 != f2 || r1 != r2 {
				t.Errorf("edge %s at x = %g: coefficients differ", a.ID, x)
			}
		}
		if (a.Law == nil) != (b.Law == nil) {
			t.Errorf("edge %s: law lost", a.ID)
			continue
		}
		if a.Law != nil && a.Law.A != nil {
			v1, d1 := a.Law.A.Fn(0.1, 0.7, 0.3)
			v2, d2 := b.Law.A.Fn(0.1, 0.7, 0.3)
			if v1 != v2 || d1 != d2 {
				t.Errorf("edge %s: diffusivity law differs", a.ID)
			}
		}
	}
	// A law set in Go without an expression cannot be written.
	net.Edges[0].Law.A = &graphpde.Coef{Fn: func(x, u, t float64) (float64, float64) { return 1, 0 }}
	if err := Write(&bytes.Buffer{}, net); err == nil || !strings.Contains(err.Error(), "not given as an expression") {
		t.Errorf("writing a Go law: %v", err)
	}
}

// TestDefaultsExpressions: expressions in [defaults] apply to every edge
// that does not give the key; an edge's own number replaces a default
// expression; an equation in [defaults] makes every edge nonlinear.
func TestDefaultsExpressions(t *testing.T) {
	net, err := Read(strings.NewReader(twoNodes+`[parameters]
k = 2
[defaults]
length = 1
diffusivity = "k*(1 + u)"
[[edge]]
id = "e1"
from = "a"
to = "b"
[[edge]]
id = "e2"
from = "a"
to = "b"
diffusivity = 3
`), "d.toml")
	if err != nil {
		t.Fatal(err)
	}
	if l := net.Edges[0].Law; l == nil || l.A == nil || l.A.Src != "k*(1 + u)" {
		t.Errorf("e1: law %+v, want the default diffusivity", l)
	}
	if e := net.Edges[1]; e.Law != nil || e.A != 3 {
		t.Errorf("e2: law %+v, A = %g; want the plain 3", e.Law, e.A)
	}
	net, err = Read(strings.NewReader(twoNodes+`[defaults]
length = 1
diffusivity = 1
equation = "uxx - u^3"
weight = 1
[[edge]]
id = "e1"
from = "a"
to = "b"
`), "d.toml")
	if err != nil {
		t.Fatal(err)
	}
	if l := net.Edges[0].Law; l == nil || l.Equation == nil || l.A != nil {
		t.Errorf("default equation: law %+v", l)
	}
	_, err = Read(strings.NewReader(twoNodes+`[defaults]
length = 1
equation = "uxx - u^3"
weight = 1
[[edge]]
id = "e1"
from = "a"
to = "b"
source = 1
`), "d.toml")
	if err == nil || !strings.Contains(err.Error(), "d.toml:15: edge \"e1\": source is not allowed with equation") {
		t.Errorf("edge source with a default equation: %v", err)
	}
}

// TestTimeDependence: the data that depend on t are listed for the note of
// a steady solve (which uses their values at t = 0).
func TestTimeDependence(t *testing.T) {
	net, err := Read(strings.NewReader(exprFile), "expr.toml")
	if err != nil {
		t.Fatal(err)
	}
	got := strings.Join(graphpde.TimeDependence(net), "; ")
	if want := `node "hot": fixed; edge "lead": drift`; got != want {
		t.Errorf("TimeDependence: %q, want %q", got, want)
	}
}

// TestHasLaws: a coefficient that reads parameters only keeps the network
// linear (the engines read its value in the plain field); one in u or t
// does not.
func TestHasLaws(t *testing.T) {
	for _, c := range []struct {
		source string
		laws   bool
	}{{`"q"`, false}, {`"2*q"`, false}, {`"q*x"`, false}, {`"q*u"`, true}, {`"q*t"`, true}, {`1`, false}} {
		net, err := Read(strings.NewReader(twoNodes+"[parameters]\nq = 2\n[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\nsource = "+c.source+"\n"), "h.toml")
		if err != nil {
			t.Fatal(err)
		}
		if got := graphpde.HasLaws(net); got != c.laws {
			t.Errorf("source = %s: HasLaws %v, want %v", c.source, got, c.laws)
		}
	}
}
