package netfile

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
)

// published7 is the relative accuracy of a reference value printed with 7
// significant digits: half a unit in the last digit, plus solver round-off.
const published7 = 2e-7

func solveText(t *testing.T, src string) (*graphpde.Network, *graphpde.Solution) {
	t.Helper()
	net, err := Read(strings.NewReader(src), "model.toml")
	if err != nil {
		t.Fatal(err)
	}
	sol, err := graphpde.Solve(net, nil)
	if err != nil {
		t.Fatal(err)
	}
	return net, sol
}

// TestWireFin checks the wire model on the copper pin fin of Incropera,
// DeWitt, Bergman and Lavine, Fundamentals of Heat and Mass Transfer, 6th
// ed. (2007), §3.6.2 (Table 3.4, cases A and B): D = 5 mm, L = 50 mm,
// k = 398 W/(m·K), h = 100 W/(m²·K), base 100 °C in air at 25 °C
// (θ_b = 75 K). Heat drawn from the base: 5.068618 W with an adiabatic tip,
// 5.160100 W with a convective tip; tip excess temperatures 59.43157 K and
// 58.79598 K (values evaluated from the book's formulas to 7 digits).
func TestWireFin(t *testing.T) {
	const fin = `[[node]]
id = "base"
fixed = "100 degC"
[[node]]
id = "tip"
%s
[[edge]]
id = "pin"
from = "base"
to = "tip"
length = "50 mm"
wire = { conductivity = "398 W/(m*K)", diameter = "5 mm", film = "100 W/(m^2*K)", ambient = "25 degC" }
`
	for _, c := range []struct {
		name      string
		tip       string
		q, thetaL float64
	}{
		{"adiabatic tip", "", 5.068618, 59.43157},
		{"convective tip", `convection = { film = "100 W/(m^2*K)", area = "19.634954 mm^2", ambient = "25 degC" }`, 5.160100, 58.79598},
	} {
		net, sol := solveText(t, fmt.Sprintf(fin, c.tip))
		q := sol.Flux[0][0]
		theta := sol.U[1] - 298.15
		if math.Abs(q-c.q) > published7*c.q || math.Abs(theta-c.thetaL) > published7*c.thetaL+1e-12*298 {
			t.Errorf("%s: q = %.8g W, θ(L) = %.8g K; want %.7g, %.7g", c.name, q, theta, c.q, c.thetaL)
		}
		p := net.Physical
		if p == nil || p.Field != "temperature" || p.FluxUnit != "W" || !p.Hazard || p.ShownUnit() != "°C" {
			t.Errorf("%s: physical description %+v", c.name, p)
		}
		if got := p.Shown(sol.U[0]); math.Abs(got-100) > 1e-12 {
			t.Errorf("base shown as %g °C", got)
		}
	}
}

// TestWireJoule checks Joule heating in a wire with no film, both ends held
// at T₀: T − T₀ = q'x(L − x)/(2kA) with q' = I²ρ_e/A (derived: uniform
// generation in a rod, Incropera 6th ed. §3.5.3 for the slab form), and
// with a linear temperature coefficient and a film to air at T₀ the
// problem stays linear: kA·θxx − c'θ + q' = 0 with θ = T − T₀,
// c' = hP − q'α, whose midpoint rise is (q'/c')(1 − 1/cosh(mL/2)),
// m² = c'/(kA) (derived). A slope that outgrows the film is refused.
func TestWireJoule(t *testing.T) {
	const wire = `[[node]]
id = "a"
fixed = "20 degC"
[[node]]
id = "b"
fixed = "20 degC"
[[edge]]
id = "w"
from = "a"
to = "b"
length = "1 m"
wire = { conductivity = "400 W/(m*K)", area = "1 mm^2", current = "10 A", resistivity = "1.7e-8 ohm*m"%s }
`
	k, A, I, rho0, L := 400.0, 1e-6, 10.0, 1.7e-8, 1.0
	qp := I * I * rho0 / A
	for _, c := range []struct {
		name  string
		extra string
		rise  float64
	}{
		{"constant resistivity", "", qp * L * L / (8 * k * A)},
		{"resistivity slope", `, resistivity_slope = "0.0039 1/K", resistivity_at = "20 degC", perimeter = "4 mm", film = "10 W/(m^2*K)", ambient = "20 degC"`, func() float64 {
			cp := 10*4e-3 - qp*0.0039
			m := math.Sqrt(cp / (k * A))
			return qp / cp * (1 - 1/math.Cosh(m*L/2))
		}()},
	} {
		_, sol := solveText(t, fmt.Sprintf(wire, c.extra))
		mid, err := sol.At(graphpde.Point{Node: -1, Edge: 0, X: 0.5})
		if err != nil {
			t.Fatal(err)
		}
		if rise := mid - 293.15; math.Abs(rise-c.rise) > 1e-9*c.rise {
			t.Errorf("%s: midpoint rise %.10g K, want %.10g", c.name, rise, c.rise)
		}
	}
	// Joule heat that outgrows the film loss is refused with a reason.
	bad := fmt.Sprintf(wire, `, resistivity_slope = "0.5 1/K"`)
	if _, err := Read(strings.NewReader(bad), "w.toml"); err == nil || !strings.Contains(err.Error(), "no steady state is guaranteed") {
		t.Errorf("runaway wire: %v", err)
	}
}

// TestCable checks the cable model against the passive cable of the
// references: d = 2 µm, R_m = 20 000 Ω·cm², R_i = 100 Ω·cm give
// λ = 1 mm and G∞ = π nS; a finite sealed cable clamped at 1 V draws
// G∞ tanh(L/λ) (G_in/G∞ = 0.4621172, 0.7615942, 0.9640276 for L/λ = 0.5,
// 1, 2) and its far end sits at 1/cosh(L/λ) (0.8868189, 0.6480543,
// 0.2658022). Source: Johnston and Wu, Foundations of Cellular
// Neurophysiology (1995), ch. 4, and Rall (1959), Exp. Neurol. 1:491–527,
// both from memory; the values evaluate the formulas.
func TestCable(t *testing.T) {
	const cable = `[[node]]
id = "clamp"
fixed = "1 V"
[[node]]
id = "end"
[[edge]]
id = "dendrite"
from = "clamp"
to = "end"
length = "%g mm"
cable = { diameter = "2 um", axial_resistivity = "100 ohm*cm", membrane_resistance = "20000 ohm*cm^2" }
`
	for _, c := range []struct {
		x, ratio, far float64
	}{{0.5, 0.4621172, 0.8868189}, {1, 0.7615942, 0.6480543}, {2, 0.9640276, 0.2658022}} {
		net, sol := solveText(t, fmt.Sprintf(cable, c.x))
		g := sol.Flux[0][0] / 1.0 // A at 1 V
		if r := g / (math.Pi * 1e-9); math.Abs(r-c.ratio) > published7*c.ratio {
			t.Errorf("L/λ = %g: G_in/G∞ = %.8g, want %.7g", c.x, r, c.ratio)
		}
		if math.Abs(sol.U[1]-c.far) > published7*c.far {
			t.Errorf("L/λ = %g: far end %.8g V, want %.7g", c.x, sol.U[1], c.far)
		}
		if p := net.Physical; p == nil || p.Hazard || p.FieldUnit != "V" || p.Flux != "axial current" {
			t.Errorf("cable physical description %+v", p)
		}
	}
}

// TestRCLine checks the RC line and the driver element with Ohm's law: a
// driver of 1 V behind 50 Ω into a 2 mm line of 10 kΩ/m (20 Ω) whose far
// end is grounded draws 1/70 A, and the near end sits at 20/70 V
// (derived; no leakage, so the line is a plain resistor when steady).
func TestRCLine(t *testing.T) {
	const rc = `[[node]]
id = "drv"
driver = { resistance = "50 ohm", voltage = "1 V" }
load = "5 fF"
[[node]]
id = "gnd"
fixed = "0 V"
[[edge]]
id = "wire"
from = "drv"
to = "gnd"
length = "2 mm"
rc = { resistance = "10 kohm/m", capacitance = "0.2 pF/mm" }
`
	net, sol := solveText(t, rc)
	if i := sol.Flux[0][1]; math.Abs(i-1.0/70) > 1e-14 {
		t.Errorf("current %.15g A, want 1/70", i)
	}
	if math.Abs(sol.U[0]-20.0/70) > 1e-14 {
		t.Errorf("near end %.15g V, want 20/70", sol.U[0])
	}
	if got := net.Nodes[0].Law.Capacity; math.Abs(got-5e-15) > 1e-29 {
		t.Errorf("load capacity %g F", got)
	}
	if got := net.Edges[0].Rho; math.Abs(got-2e-10) > 1e-24 {
		t.Errorf("capacitance per length %g F/m, want 2e-10", got)
	}
}

// TestChannel checks the channel model: steady advection–dispersion with
// decay in a long channel, C(x) = C₀ e^{rx}, r = (v − √(v² + 4DRk))/(2D)
// (derived from D·Cxx − v·Cx − Rk·C = 0; the standard steady solution, e.g.
// Bear, Dynamics of Fluids in Porous Media, 1972, from memory). The far end
// is 50 decay lengths away, so the end condition does not show at x = 1 m.
func TestChannel(t *testing.T) {
	const ch = `[[node]]
id = "in"
fixed = "2 mg/L"
[[node]]
id = "out"
[[edge]]
id = "c"
from = "in"
to = "out"
length = "40 m"
channel = { area = "0.01 m^2", porosity = 0.3, velocity = "1 m/d", dispersivity = "0.5 m", half_life = "10 d", retardation = 2 }
`
	net, sol := solveText(t, ch)
	v := 1.0 / 86400
	D := 0.5 * v
	k := math.Ln2 / (10 * 86400)
	r := (v - math.Sqrt(v*v+4*D*2*k)) / (2 * D)
	want := 2e-3 * math.Exp(r*1)
	got, err := sol.At(graphpde.Point{Node: -1, Edge: 0, X: 1})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(got-want) > 1e-9*want {
		t.Errorf("C(1 m) = %.10g kg/m^3, want %.10g", got, want)
	}
	p := net.Physical
	if p == nil || p.Hazard || p.FieldUnit != "kg/m^3" || p.ShownUnit() != "mg/L" || math.Abs(p.Edges[0].Carry-0.003*v) > 1e-20 {
		t.Errorf("channel physical description %+v", p)
	}
}

func TestModelErrors(t *testing.T) {
	base := "[[node]]\nid = \"a\"\nfixed = 0\n[[node]]\nid = \"b\"\n[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\n"
	for _, c := range []struct {
		name, extra, msg string
		line             int
	}{
		{"raw and model", "diffusivity = 1\nwire = { conductivity = 1, diameter = 1 }\n", "diffusivity is set by the wire model", 11},
		{"two models", "wire = { conductivity = 1, diameter = 1 }\ncable = { diameter = 1 }\n", "give one model", 12},
		{"unknown model key", "wire = { conductivity = 1, diameter = 1, colour = 3 }\n", `unknown key "colour"`, 11},
		{"wrong dimension", "wire = { conductivity = \"1 W/m\", diameter = 1 }\n", `wire.conductivity = "1 W/m": has dimension`, 11},
		{"missing key", "cable = { diameter = \"1 um\" }\n", `missing key "axial_resistivity"`, 11},
		{"film without ambient", "wire = { conductivity = 1, diameter = 1, film = 5 }\n", `missing key "ambient"`, 11},
		{"negative conductivity", "wire = { conductivity = -1, diameter = 1 }\n", "wire.conductivity = -1 must be a finite number > 0", 11},
		{"porosity", "channel = { area = 1, porosity = 2, dispersion = 1 }\n", "porosity = 2 must be at most 1", 11},
		{"unbalanced flows", "channel = { area = 1, velocity = 1, dispersion = 1 }\n[[node]]\nid = \"c\"\nfixed = 0\n[[edge]]\nid = \"f\"\nfrom = \"b\"\nto = \"c\"\nlength = 1\nchannel = { area = 2, velocity = 1, dispersion = 1 }\n", "channel flows do not balance", 5},
		{"mixed fields", "wire = { conductivity = 1, diameter = 1 }\n[[node]]\nid = \"c\"\nfixed = 0\n[[edge]]\nid = \"f\"\nfrom = \"b\"\nto = \"c\"\nlength = 1\ncable = { diameter = 1, axial_resistivity = 1, membrane_resistance = 1 }\n", "different fields", 0},
	} {
		_, err := Read(strings.NewReader(base+c.extra), "m.toml")
		e, ok := err.(*Error)
		if !ok || !strings.Contains(err.Error(), c.msg) || e.Line != c.line {
			t.Errorf("%s: error %v, want line %d and %q", c.name, err, c.line, c.msg)
		}
	}
}

// TestWireExpressions checks that a wire whose resistivity is an expression
// in u (solved by the nonlinear solver) gives the field of the same wire
// written with resistivity_slope (solved as a linear problem), to the
// nonlinear solver's tolerance, and that the current may name a parameter.
func TestWireExpressions(t *testing.T) {
	const wire = `[parameters]
amps = 10
[[node]]
id = "a"
fixed = "20 degC"
[[node]]
id = "b"
fixed = "20 degC"
[[edge]]
id = "w"
from = "a"
to = "b"
length = "1 m"
cells = 1024
wire = { conductivity = "400 W/(m*K)", area = "1 mm^2", perimeter = "4 mm", film = "10 W/(m^2*K)", ambient = "20 degC", %s }
`
	linear := fmt.Sprintf(wire, `current = "10 A", resistivity = "1.7e-8 ohm*m", resistivity_slope = "0.0039 1/K", resistivity_at = "20 degC"`)
	expr := fmt.Sprintf(wire, `current = "amps", resistivity = "1.7e-8*(1 + 0.0039*(u - 293.15))"`)
	_, lin := solveText(t, linear)
	net, err := Read(strings.NewReader(expr), "expr.toml")
	if err != nil {
		t.Fatal(err)
	}
	if net.Edges[0].Law == nil {
		t.Fatal("the expression wire has no law")
	}
	res, err := graphpde.SolveNonlinear(net, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, x := range []float64{0.1, 0.5, 0.9} {
		p := graphpde.Point{Node: -1, Edge: 0, X: x}
		want, _ := lin.At(p)
		got, _ := res.Solution.At(p)
		// The nonlinear grid solve is second order: 64 cells left 0.065 K at
		// x = 0.1 (a decay length √(kA/c') ≈ 0.11 m is 7 cells); 1024 cells
		// should leave 256 times less, about 3e-4 K.
		if math.Abs(got-want) > 1e-3 {
			t.Errorf("x = %g: expression wire %.8g K, linear wire %.8g K", x, got, want)
		}
	}
}
