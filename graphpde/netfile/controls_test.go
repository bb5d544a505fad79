package netfile

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
)

const corridorBase = `[[node]]
id = "west"
fixed = 0.0
[[node]]
id = "east"
fixed = 0.0
[[edge]]
id = "hall"
from = "west"
to = "east"
length = 2.0
cells = 400
weight = 1.0
`

// TestControlFormEqualsEquation: the least expected time to leave [0, 2]
// at drift speed ≤ 1, once as the fully nonlinear equation
// 0.5 uxx − |ux| + 1 = 0 (Newton on the monotone grid scheme) and once as
// the control problem min over b = ±1 of [0.5 uxx + b ux + 1] (policy
// iteration): the same value. Both are checked against the closed form
// u(x) = x − (e^{2(x−1)} − e^{−2})/2 on [0, 1] (derived: the optimal drift
// points to the nearer end, and ½u” − u' + 1 = 0 with u(0) = 0, u'(1) = 0).
// Tolerances: the control scheme is O(h²) (graphpde's
// TestControlBangBangClosedForm: below 0.5 h²); the equation's scheme is
// central where |ux|·h ≤ 1 (everywhere here at 400 cells) and second
// order away from the kink at x = 1: measured 9.7e−6 from the closed form
// and 2.5e−6 from the control form at x = 1, h = 0.005; the bounds are
// 0.5 h² = 1.25e−5 for the control form and 3e−5 for the equation and for
// the two apart (common practice, no source).
func TestControlFormEqualsEquation(t *testing.T) {
	eq := `[network]
name = "equation"
` + corridorBase + `equation = "0.5*uxx - abs(ux) + 1"
`
	ctl := `[network]
objective = "min"
` + corridorBase + `diffusivity = 0.5
source = 1.0
controls = [ { drift = -1.0 }, { drift = 1.0 } ]
`
	nq, err := Read(strings.NewReader(eq), "eq.toml")
	if err != nil {
		t.Fatal(err)
	}
	nres, err := graphpde.SolveNonlinear(nq, nil)
	if err != nil || nres.Status != graphpde.Converged {
		t.Fatalf("nonlinear: %v %v", err, nres)
	}
	nc, err := Read(strings.NewReader(ctl), "ctl.toml")
	if err != nil {
		t.Fatal(err)
	}
	cres, err := graphpde.SolveControl(nc, nil)
	if err != nil || cres.Status != graphpde.Converged {
		t.Fatalf("control: %v %v", err, cres)
	}
	for _, x := range []float64{0.2, 0.5, 1, 1.6} {
		pt := "hall@" + fmtF(x)
		u1 := at(t, nq, nres.Solution, pt)
		u2 := at(t, nc, cres.Solution, pt)
		y := math.Min(x, 2-x)
		want := y - (math.Exp(2*(y-1))-math.Exp(-2))/2
		t.Logf("x = %g: equation %.8f, controls %.8f, closed form %.8f", x, u1, u2, want)
		if math.Abs(u1-u2) > 3e-5 {
			t.Errorf("x = %g: equation %.8f vs controls %.8f", x, u1, u2)
		}
		if math.Abs(u2-want) > 1.25e-5 {
			t.Errorf("x = %g: controls %.8f vs closed form %.8f", x, u2, want)
		}
		if math.Abs(u1-want) > 3e-5 {
			t.Errorf("x = %g: equation %.8f vs closed form %.8f", x, u1, want)
		}
	}
}

func fmtF(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// TestControlFileErrors: every mistake in the controls names the file and
// the line.
func TestControlFileErrors(t *testing.T) {
	edge := `[[node]]
id = "a"
fixed = 0.0
[[node]]
id = "b"
fixed = 1.0
[[edge]]
id = "e"
from = "a"
to = "b"
length = 1.0
diffusivity = 1.0
`
	for _, tc := range []struct{ name, src, want string }{
		{"no objective", edge + "controls = [ { drift = 1.0 } ]\n", `case.toml:8: edge "e": has controls but the network has no objective`},
		{"empty list", "[network]\nobjective = \"max\"\n" + edge + "controls = []\n", "controls is empty"},
		{"not elliptic", "[network]\nobjective = \"max\"\n" + edge + "controls = [ { drift = 1.0 }, { diffusivity = -1.0 } ]\n", "would not be elliptic"},
		{"bad objective", "[network]\nobjective = \"best\"\n" + edge + "controls = [ { drift = 1.0 } ]\n", `case.toml:2: [network]: objective "best": want "min" or "max"`},
		{"objective alone", "[network]\nobjective = \"min\"\n" + edge, "objective is given but no edge or node has controls"},
		{"unknown key", "[network]\nobjective = \"min\"\n" + edge + "controls = [ { drfit = 1.0 } ]\n", `unknown key "drfit" (did you mean "drift"?)`},
		{"negative decay", "[network]\nobjective = \"min\"\n" + edge + "controls = [ { decay = -1.0 } ]\n", "decay = -1 must be a finite number ≥ 0"},
		{"node on fixed", "[network]\nobjective = \"min\"\n[[node]]\nid = \"a\"\nfixed = 0.0\ncontrols = [ { e = 1.0 } ]\n", "not allowed on a fixed node"},
		{"foreign edge", "[network]\nobjective = \"min\"\n" + edge + "[[node]]\nid = \"c\"\ncontrols = [ { e = 1.0 } ]\n[[edge]]\nid = \"f\"\nfrom = \"c\"\nto = \"b\"\nlength = 1.0\ndiffusivity = 1.0\n", `"e" is not an edge at this node`},
		{"zero weight", "[network]\nobjective = \"min\"\n" + edge + "[[node]]\nid = \"c\"\ncontrols = [ { f = 0.0 } ]\n[[edge]]\nid = \"f\"\nfrom = \"c\"\nto = \"b\"\nlength = 1.0\ndiffusivity = 1.0\n", "must be a finite number > 0"},
	} {
		_, err := Read(strings.NewReader(tc.src), "case.toml")
		if err == nil {
			t.Errorf("%s: no error", tc.name)
			continue
		}
		if !strings.Contains(err.Error(), tc.want) || !strings.HasPrefix(err.Error(), "case.toml:") {
			t.Errorf("%s: error %q, want it to contain %q and start with the file and line", tc.name, err, tc.want)
		}
	}
}

// TestControlFileRead: a node's end weights and an edge's controls with
// the coefficients it does not override filled from the edge.
func TestControlFileRead(t *testing.T) {
	src := `[network]
objective = "max"
[[node]]
id = "hub"
controls = [ { arm1 = 1.0, arm2 = 3.0 }, { arm1 = 3.0, arm2 = 1.0 } ]
[[node]]
id = "x"
fixed = 1.0
[[node]]
id = "y"
fixed = 0.0
[[edge]]
id = "arm1"
from = "hub"
to = "x"
length = 1.0
diffusivity = 0.5
source = 2.0
controls = [ { drift = -1.0 }, { drift = 1.0, diffusivity = 2.0 } ]
[[edge]]
id = "arm2"
from = "hub"
to = "y"
length = 2.0
diffusivity = 1.0
`
	net, err := Read(strings.NewReader(src), "case.toml")
	if err != nil {
		t.Fatal(err)
	}
	if net.Objective != graphpde.Maximize {
		t.Errorf("objective %v", net.Objective)
	}
	cs := net.Edges[0].ControlSet()
	want := []graphpde.EdgeControl{{A: 0.5, B: -1, F: 2}, {A: 2, B: 1, F: 2}}
	if len(cs) != 2 || cs[0] != want[0] || cs[1] != want[1] {
		t.Errorf("edge controls %+v, want %+v", cs, want)
	}
	nc := net.Nodes[0].Controls
	if len(nc) != 2 || nc[0].Weights["arm1"] != 1 || nc[1].Weights["arm2"] != 1 {
		t.Errorf("node controls %+v", nc)
	}
}

// TestControlWithLawsRefused: a controlled file whose other edges carry a
// law in u is refused by the solver with a reason (policy iteration needs
// the rest linear).
func TestControlWithLawsRefused(t *testing.T) {
	src := `[network]
objective = "min"
[[node]]
id = "a"
fixed = 0.0
[[node]]
id = "b"
[[node]]
id = "c"
fixed = 1.0
[[edge]]
id = "x"
from = "a"
to = "b"
length = 1.0
diffusivity = 1.0
controls = [ { drift = 1.0 }, { drift = -1.0 } ]
[[edge]]
id = "y"
from = "b"
to = "c"
length = 1.0
diffusivity = "1 + u*u"
`
	net, err := Read(strings.NewReader(src), "case.toml")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := graphpde.SolveControl(net, nil); err == nil || !strings.Contains(err.Error(), "laws") {
		t.Errorf("error %v, want a refusal naming the laws", err)
	}
}
