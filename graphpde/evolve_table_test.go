package graphpde

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// tableNode attaches a table to node v of net (its fixed value or its
// injection, as the node's kind says).
func tableNode(t *testing.T, net *Network, v int, ts, vs []float64, steps bool) {
	t.Helper()
	tab, err := NewTimeTable(ts, vs, steps)
	if err != nil {
		t.Fatal(err)
	}
	nd := &net.Nodes[v]
	tm := &NodeTime{UsesT: true, Src: "table", Table: tab}
	if nd.Law.Kind == vertex.Fixed {
		tm.Fixed, nd.Law.Value = tab.At, tab.At(0)
	} else {
		tm.Inject, nd.Law.Inject = tab.At, tab.At(0)
	}
	nd.Time = tm
}

// TestExactStepShift: by time invariance (derived), the exact transient of
// a unit step switched on at t0 equals the constant-data transient shifted
// by t0, and is 0 before t0. Checked on the RC line for a step of the
// driving node's fixed value, and for a step of an injection at the open
// end (the drive held at 0). Both sides are Talbot inversions of the same
// transform at the same times (t − t0), so they must agree to round-off:
// tolerance 1e-9.
func TestExactStepShift(t *testing.T) {
	const t0, tol = 0.37, 1e-9
	far := Point{Node: 1, Edge: -1}
	mid := Point{Node: -1, Edge: 0, X: 0.5}
	for _, inject := range []bool{false, true} {
		ref, stepped := rcLine(t), rcLine(t)
		v := 0
		if inject {
			ref.Nodes[0].Law.Value, stepped.Nodes[0].Law.Value = 0, 0
			ref.Nodes[1].Law.Inject = 1
			v = 1
		}
		tableNode(t, stepped, v, []float64{0, t0}, []float64{0, 1}, true)
		const every = 0.01
		a, err := Evolve(ref, &EvolveSettings{Until: 1, Every: every, Probes: []Point{far, mid}, Method: MethodExact})
		if err != nil {
			t.Fatal(err)
		}
		b, err := Evolve(stepped, &EvolveSettings{Until: 1 + t0, Every: every, Probes: []Point{far, mid}, Method: MethodExact})
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for i, tt := range b.Times {
			for k := range b.Probes {
				want := 0.0
				if j := int(math.Round((tt - t0) / every)); tt > t0 && math.Abs(a.Times[j]-(tt-t0)) < 1e-12 {
					want = a.Probes[k][j]
				} else if tt > t0 {
					continue // no shifted time in the reference
				}
				worst = math.Max(worst, math.Abs(b.Probes[k][i]-want))
			}
		}
		t.Logf("inject %v: largest difference from the shifted constant-data transient %.2e", inject, worst)
		if worst > tol {
			t.Errorf("inject %v: the step at t0 differs from the shifted transient by %.2e", inject, worst)
		}
	}
}

// rcRamp is the response of the RC line (a = ρ = 1, length 1, open far
// end, initially 0) at x to a unit ramp u(0, t) = t: the integral over
// time of its step response 1 − Σ_n (4/((2n+1)π)) sin(k_n x) e^{−k_n² t},
// k_n = (2n+1)π/2 (separation of variables with u_x(1) = 0; derived),
//
//	R(x, t) = t − Σ_n (4/((2n+1)π)) sin(k_n x) (1 − e^{−k_n² t})/k_n².
//
// The terms fall like n⁻³: 2·10⁵ of them leave an error below 1e-11.
func rcRamp(x, t float64) float64 {
	if t <= 0 {
		return 0
	}
	r := t
	for n := range 200000 {
		k := float64(2*n+1) * math.Pi / 2
		r -= 4 / (float64(2*n+1) * math.Pi) * math.Sin(k*x) * -math.Expm1(-k*k*t) / (k * k)
	}
	return r
}

// TestExactRampRCLine: a schedule that ramps the drive of the RC line
// linearly from 0 to 1 over [0, 1] and holds it gives, by superposition,
// R(x, t) − R(x, t − 1) (rcRamp, derived). The exact method inverts a
// ramp at 0 and a ramp of slope −1 delayed by 1 to about 1e-10: tolerance
// 1e-8 at the open end and the middle.
func TestExactRampRCLine(t *testing.T) {
	net := rcLine(t)
	tableNode(t, net, 0, []float64{0, 1}, []float64{0, 1}, false)
	probes := []Point{{Node: 1, Edge: -1}, {Node: -1, Edge: 0, X: 0.5}}
	xs := []float64{1, 0.5}
	r, err := Evolve(net, &EvolveSettings{Until: 2.5, Every: 0.25, Probes: probes, Method: MethodExact})
	if err != nil {
		t.Fatal(err)
	}
	worst := 0.0
	for i, tt := range r.Times {
		for k, x := range xs {
			want := rcRamp(x, tt) - rcRamp(x, tt-1)
			worst = math.Max(worst, math.Abs(r.Probes[k][i]-want))
		}
	}
	t.Logf("largest difference from the closed form %.2e", worst)
	if worst > 1e-8 {
		t.Errorf("ramp response differs from the closed form by %.2e", worst)
	}
}

// TestExactTableAgainstGrid: steps and a piecewise linear table on the RC
// line (drive) and at its open end (injection), exact against the TR-BDF2
// stepper at tol 1e-7 on 400 cells. The stepper sees the data through
// their values, so the table's corners and jumps cost it accuracy that
// its error control must recover; measured 1.4e-6 for both, tolerance
// 1e-5.
func TestExactTableAgainstGrid(t *testing.T) {
	probes := []Point{{Node: 1, Edge: -1}, {Node: -1, Edge: 0, X: 0.3}}
	for _, steps := range []bool{false, true} {
		net := func() *Network {
			n := rcLine(t)
			tableNode(t, n, 0, []float64{0.1, 0.4, 0.8, 1.2}, []float64{0, 1, 0.2, 0.5}, steps)
			tableNode(t, n, 1, []float64{0.3, 0.6}, []float64{0.5, -0.5}, steps)
			return n
		}
		ex, err := Evolve(net(), &EvolveSettings{Until: 2, Every: 0.1, Probes: probes, Method: MethodExact})
		if err != nil {
			t.Fatal(err)
		}
		gr, err := Evolve(net(), &EvolveSettings{Until: 2, Every: 0.1, Probes: probes, Cells: 400, Tol: 1e-7})
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for k := range probes {
			for i := range ex.Times {
				worst = math.Max(worst, math.Abs(ex.Probes[k][i]-gr.Probes[k][i]))
			}
		}
		t.Logf("steps %v: largest difference exact − grid %.2e (%d grid steps)", steps, worst, gr.Stats.Steps)
		if worst > 1e-5 {
			t.Errorf("steps %v: exact and grid differ by %.2e", steps, worst)
		}
	}
}

// TestExactRefusesExpressionOfT: a fixed value given as an expression of t
// has no exact transform here; the error names the node and the key and
// suggests the stepper or a table.
func TestExactRefusesExpressionOfT(t *testing.T) {
	net := rcLine(t)
	net.Nodes[0].Time = &NodeTime{Fixed: func(t float64) float64 { return math.Sin(t) }, UsesT: true, Src: "sin(t)"}
	_, err := Evolve(net, &EvolveSettings{Until: 1, Probes: []Point{{Node: 1, Edge: -1}}, Method: MethodExact})
	var me *ModelError
	if !errors.As(err, &me) || me.ID != "drive" || !strings.Contains(err.Error(), "grid") || !strings.Contains(err.Error(), "schedule") {
		t.Errorf("error %v, want a ModelError on node drive suggesting grid or a schedule", err)
	}
}

// TestTimeTableExpand: a table's value at 0+ plus its steps and ramps
// reproduces At at any t > 0 (rows before, at and after 0).
func TestTimeTableExpand(t *testing.T) {
	for _, steps := range []bool{false, true} {
		tab, err := NewTimeTable([]float64{-1, 0, 0.5, 2, 3}, []float64{4, 1, 3, -2, 0.5}, steps)
		if err != nil {
			t.Fatal(err)
		}
		g0, ks := tab.expand()
		for _, tt := range []float64{1e-9, 0.2, 0.5, 0.7, 2, 2.5, 3, 10} {
			got := g0
			for _, k := range ks {
				if d := tt - k.At; d > 0 || (d == 0 && k.Order == 1) {
					if k.Order == 1 {
						got += k.C
					} else {
						got += k.C * d
					}
				}
			}
			if math.Abs(got-tab.At(tt)) > 1e-12 {
				t.Errorf("steps %v, t = %g: expansion %g, table %g", steps, tt, got, tab.At(tt))
			}
		}
	}
}
