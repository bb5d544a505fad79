package main

import (
	"context"
	"encoding/json"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/graph/path"
	"gonum.org/v1/gonum/graph/simple"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/netfile"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/crosscheck"
	"github.com/ramify-dev/ramify/vertex"
)

// pushRight: maximise the probability of reaching the right end of a unit
// track with drift −2 or +2 and a = 1. Pushing right everywhere is optimal
// and P(x) = (1 − e^{−2x})/(1 − e^{−2}) (scale function of u” + 2u';
// Karlin & Taylor, A Second Course in Stochastic Processes, 1981, §15.3);
// pushing left gives (e^{2x} − 1)/(e² − 1).
const pushRight = `[network]
objective = "max"
[[node]]
id = "left"
fixed = 0.0
[[node]]
id = "right"
fixed = 1.0
[[edge]]
id = "track"
from = "left"
to = "right"
length = 1.0
diffusivity = 1.0
controls = [ { drift = -2.0 }, { drift = 2.0 } ]
`

func pushRightP(x float64) float64 { return -math.Expm1(-2*x) / -math.Expm1(-2) }

func TestControlSolveJSON(t *testing.T) {
	f := writeFile(t, "push.toml", pushRight)
	code, out, errs := runCLI(t, context.Background(), "solve", f, "--json", "--probe", "track@0.25")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Status string `json:"status"`
		Probes []struct {
			U float64 `json:"u"`
		} `json:"probes"`
		Policy struct {
			Edges []struct {
				ID     string `json:"id"`
				Pieces []struct {
					From, To float64
					Control  int
				} `json:"pieces"`
			} `json:"edges"`
			Nodes []any `json:"nodes"`
		} `json:"policy"`
		Iterations int `json:"policy_iterations"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	// The policy is constant, so the edge is solved exactly: round-off.
	if u := got.Probes[0].U; math.Abs(u-pushRightP(0.25)) > 1e-12 {
		t.Errorf("P(0.25) = %.15f, want %.15f", u, pushRightP(0.25))
	}
	if len(got.Policy.Edges) != 1 || len(got.Policy.Edges[0].Pieces) != 1 || got.Policy.Edges[0].Pieces[0].Control != 1 || got.Policy.Edges[0].Pieces[0].To != 1 {
		t.Errorf("policy %+v, want control 1 on [0, 1]", got.Policy)
	}
	if got.Status != "converged" || got.Iterations < 1 || got.Iterations > 10 {
		t.Errorf("status %s after %d evaluations", got.Status, got.Iterations)
	}
}

// junctionGame: a hub between a reward end (u = 1, length 1) and a loss
// end (u = 0, length 2), pure diffusion; the controller picks the hub's end
// weights and, on the reward arm, whether it decays. With weights α₁, α₂
// and no decay U = α₁/(α₁ + α₂/2) (derived by hand): (3, 1) gives 6/7,
// (1, 3) gives 0.4; decay only lowers the reward. Every arm has constant
// coefficients and no drift, so the walkers are exact (walk on intervals
// and stars): the checks carry no discretisation bias.
const junctionGame = `[network]
objective = "max"
[[node]]
id = "hub"
controls = [ { g = 1.0, b = 3.0 }, { g = 3.0, b = 1.0 } ]
[[node]]
id = "good"
fixed = 1.0
[[node]]
id = "bad"
fixed = 0.0
[[edge]]
id = "g"
from = "hub"
to = "good"
length = 1.0
diffusivity = 1.0
controls = [ { decay = 2.0 }, { decay = 0.0 } ]
[[edge]]
id = "b"
from = "hub"
to = "bad"
length = 2.0
diffusivity = 1.0
`

// TestControlWalkersCheckPolicy: the walkers following the computed policy
// reproduce the optimum (two-sided), a strictly worse policy read from a
// file is seen as worse by many standard errors, and if that worse policy
// were offered as "optimal", the real optimum refutes it (one-sided).
// Fixed seeds; bounds in standard errors (the gap between the two policies
// at the hub is 6/7 − 0.4·(killed share) ≈ 0.5, over 100 standard errors at
// 20 000 walkers).
func TestControlWalkersCheckPolicy(t *testing.T) {
	ctx := context.Background()
	f := writeFile(t, "game.toml", junctionGame)
	code, out, errs := runCLI(t, ctx, "crosscheck", f, "--from", "hub", "--particles", "20000", "--seed", "3", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var cc struct {
		Verdict     string  `json:"verdict"`
		Optimum     float64 `json:"optimum"`
		Challengers []struct {
			Name           string
			Walker, StdErr float64
			Margin         float64
			Pass           bool
		} `json:"challengers"`
	}
	if err := json.Unmarshal([]byte(out), &cc); err != nil {
		t.Fatal(err)
	}
	if cc.Verdict != "agree" || math.Abs(cc.Optimum-6.0/7) > 1e-12 {
		t.Errorf("verdict %s, optimum %.15g: %s", cc.Verdict, cc.Optimum, out)
	}
	if len(cc.Challengers) == 0 {
		t.Fatal("no challengers")
	}
	for _, c := range cc.Challengers {
		if c.Margin/c.StdErr < 5 {
			t.Errorf("challenger %s: margin %.4g ± %.2g, want clearly worse", c.Name, c.Margin, c.StdErr)
		}
	}
	// A worse policy from a file: weights (1, 3), no decay: U = 0.4.
	pol := writeFile(t, "worse.json", `{"policy": {"edges": [{"id": "g", "pieces": [{"from": 0, "to": 1, "control": 1}]}], "nodes": [{"id": "hub", "control": 0}]}}`)
	walk := func(args ...string) (float64, float64) {
		code, out, errs := runCLI(t, ctx, append([]string{"walk", f, "--from", "hub", "--particles", "20000", "--json"}, args...)...)
		if code != 0 {
			t.Fatalf("walk exit %d: %s", code, errs)
		}
		var w struct {
			Value struct{ Mean, StdErr float64 } `json:"value"`
		}
		if err := json.Unmarshal([]byte(out), &w); err != nil {
			t.Fatal(err)
		}
		return w.Value.Mean, w.Value.StdErr
	}
	worse, wse := walk("--policy", pol, "--seed", "4")
	if math.Abs(worse-0.4) > 4*wse {
		t.Errorf("walkers under the worse policy: %.5f ± %.5f, want 0.4", worse, wse)
	}
	best, bse := walk("--seed", "5")
	if math.Abs(best-6.0/7) > 4*bse {
		t.Errorf("walkers under the optimal policy: %.5f ± %.5f, want %.5f", best, bse, 6.0/7)
	}
	r := crosscheck.Policy(6.0/7, crosscheck.PolicyRun{Walker: best, StdErr: bse}, []crosscheck.PolicyRun{{Name: "worse", Walker: worse, StdErr: wse}}, false, 0)
	if r.Verdict != "agree" || r.Margin/r.MarginErr < 10 {
		t.Errorf("worse challenger: %s, margin %.3g ± %.2g: %s", r.Verdict, r.Margin, r.MarginErr, r.Explain)
	}
	r = crosscheck.Policy(0.4, crosscheck.PolicyRun{Walker: worse, StdErr: wse}, []crosscheck.PolicyRun{{Name: "real optimum", Walker: best, StdErr: bse}}, false, 0)
	if r.Verdict != "disagree" || !strings.Contains(r.Explain, "not optimal") {
		t.Errorf("a suboptimal 'optimum' was not refuted: %s: %s", r.Verdict, r.Explain)
	}
}

func TestControlRefusalsAndPolicyErrors(t *testing.T) {
	ctx := context.Background()
	f := writeFile(t, "push.toml", pushRight)
	for _, args := range [][]string{
		{"exit", f, "--from", "track@0.5"},
		{"evolve", f, "--until", "1"},
		{"spectrum", f},
	} {
		code, _, errs := runCLI(t, ctx, args...)
		if code == 0 || !strings.Contains(errs, "has controls") {
			t.Errorf("%v: exit %d, %q", args, code, errs)
		}
	}
	bad := writeFile(t, "bad.json", `{"edges": [{"id": "rail", "pieces": [{"from": 0, "to": 1, "control": 0}]}], "nodes": []}`)
	code, _, errs := runCLI(t, ctx, "walk", f, "--from", "track@0.5", "--policy", bad)
	if code == 0 || !strings.Contains(errs, "bad.json") || !strings.Contains(errs, `"rail"`) {
		t.Errorf("bad policy: exit %d, %q", code, errs)
	}
	short := writeFile(t, "short.json", `{"edges": [{"id": "track", "pieces": [{"from": 0, "to": 0.5, "control": 1}]}], "nodes": []}`)
	code, _, errs = runCLI(t, ctx, "walk", f, "--from", "track@0.5", "--policy", short)
	if code == 0 || !strings.Contains(errs, "pieces end at 0.5") {
		t.Errorf("short policy: exit %d, %q", code, errs)
	}
}

// TestViscositySweepCourier: the least expected time of the courier
// example tends, as every diffusivity is scaled by ε → 0, to the least
// travel time at full speed: a shortest path in the directed graph whose
// arc from From to To takes length / (the largest drift towards To) and
// back length / (the largest drift towards From). The reference is gonum's
// Dijkstra (graph/path) from the lifts over the reversed arcs. The sweep's
// limit is extrapolated linearly from ε = 0.01 and 0.001; the bound 1e−3
// is the size of the ε = 0.001 gap (the extrapolation removes most of it).
func TestViscositySweepCourier(t *testing.T) {
	code, out, errs := runCLI(t, context.Background(), "solve", "../../examples/courier.toml", "--viscosity-scale", "0.1,0.01,0.001", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Probes []struct {
			At    string
			U     []float64
			Limit float64
		}
		Status string
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	net, err := netfile.ReadFile("../../examples/courier.toml")
	if err != nil {
		t.Fatal(err)
	}
	g := simple.NewWeightedDirectedGraph(0, math.Inf(1))
	for _, ed := range net.Edges {
		up, down := 0.0, 0.0 // fastest drift towards To, towards From
		for _, c := range ed.ControlSet() {
			up, down = math.Max(up, c.B), math.Max(down, -c.B)
		}
		// Reversed arcs: from the lifts outwards.
		if up > 0 {
			g.SetWeightedEdge(g.NewWeightedEdge(simple.Node(ed.To), simple.Node(ed.From), ed.Length/up))
		}
		if down > 0 {
			g.SetWeightedEdge(g.NewWeightedEdge(simple.Node(ed.From), simple.Node(ed.To), ed.Length/down))
		}
	}
	dist := map[string]float64{}
	for v, nd := range net.Nodes {
		if nd.Law.Kind == vertex.Fixed {
			sp := path.DijkstraFrom(simple.Node(v), g)
			for w, nw := range net.Nodes {
				d := sp.WeightTo(int64(w))
				if old, ok := dist[nw.ID]; !ok || d < old {
					dist[nw.ID] = d
				}
			}
		}
	}
	if got.Status != "converged" || len(got.Probes) == 0 {
		t.Fatalf("status %s, %d probes", got.Status, len(got.Probes))
	}
	for _, p := range got.Probes {
		if math.Abs(p.Limit-dist[p.At]) > 1e-3 {
			t.Errorf("%s: limit %.6f (values %v), shortest travel time %.6f", p.At, p.Limit, p.U, dist[p.At])
		}
	}
}

// TestControlWalkerCoverage: the error bars of walkers that follow the
// optimal policy of the junction game cover the optimum 6/7 as a normal
// law says: of 100 runs of 4000 walkers (seeds 1…100), |z| < 2 in at least
// 88 (expected 95.4; the bound is 3.5 binomial standard errors below), and
// the mean z is within 4/√100 of 0. The walkers are exact there, so a
// failure means wrong error bars or a wrong policy network.
func TestControlWalkerCoverage(t *testing.T) {
	net, err := netfile.Read(strings.NewReader(junctionGame), "game.toml")
	if err != nil {
		t.Fatal(err)
	}
	res, err := graphpde.SolveControl(net, nil)
	if err != nil {
		t.Fatal(err)
	}
	pn, _, err := net.Apply(res.Policy)
	if err != nil {
		t.Fatal(err)
	}
	hub, _ := net.NodeIndex("hub")
	in, sum := 0, 0.0
	const runs = 100
	for seed := uint64(1); seed <= runs; seed++ {
		r, err := montecarlo.Run(context.Background(), pn, vertex.AtNode(hub), &montecarlo.Settings{Particles: 4000, Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		z := (r.Value.Mean - 6.0/7) / r.Value.StdErr
		sum += z
		if math.Abs(z) < 2 {
			in++
		}
	}
	if in < 88 || math.Abs(sum/runs) > 0.4 {
		t.Errorf("|z| < 2 in %d of %d runs, mean z %.3f", in, runs, sum/runs)
	}
}
