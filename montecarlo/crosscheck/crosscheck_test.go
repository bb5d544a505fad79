package crosscheck_test

import (
	"context"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/montecarlo/crosscheck"
	"github.com/ramify-dev/ramify/vertex"
	"github.com/ramify-dev/ramify/vertex/vertextest"
)

// biasedStar returns the biased star of the shared cases (arms L = 1, 2, 3,
// weights 0.5, 0.3, 0.2, a = ½; closed forms derived in docs/walkers.md:
// P(end j) = 30/43, 9/43, 4/43, E τ = 102/43) as a network and the PDE
// answers from those closed forms.
func biasedStar(t *testing.T) (*graphpde.Network, *vertextest.Case, *crosscheck.PDE) {
	t.Helper()
	var c *vertextest.Case
	for _, k := range vertextest.Cases() {
		if k.Name == "biased star" {
			c = &k
			break
		}
	}
	if c == nil {
		t.Fatal("no biased star among the shared cases")
	}
	net := &graphpde.Network{}
	for _, n := range c.Nodes {
		if _, err := net.AddNode(graphpde.Node{ID: n.ID, Law: n.Law}); err != nil {
			t.Fatal(err)
		}
	}
	for _, e := range c.Edges {
		if _, err := net.AddEdge(graphpde.Edge{ID: e.ID, From: e.From, To: e.To, Length: e.Length,
			A: e.A, C: e.C, F: e.F, Rho: e.Rho, Weight: [2]float64{e.WFrom, e.WTo}}); err != nil {
			t.Fatal(err)
		}
	}
	pde := &crosscheck.PDE{HasValue: true, Value: c.Value, Hit: make([]float64, len(c.Nodes)), Killed: c.Killed, Mean: c.MeanExit}
	for v, n := range c.Nodes {
		pde.Hit[v] = c.Hit[n.ID]
	}
	return net, c, pde
}

// TestRunAgreesAndDetects checks the library cross-check end to end on the
// biased star: walkers against the closed forms must agree (the family-wise
// false-alarm level is 1%, and the seed is fixed), with the split
// frequencies at the centre compared because the walker side reports them
// exact there; and a PDE whose hitting probabilities are off by 0.05 (25
// standard errors at 10⁵ walkers) must be declared to disagree. Without a
// survival function the law is not compared, and a note says so.
func TestRunAgreesAndDetects(t *testing.T) {
	net, c, pde := biasedStar(t)
	res, err := montecarlo.Run(context.Background(), net, c.Start, &montecarlo.Settings{Particles: 100000, Seed: 3, KeepSamples: true})
	if err != nil {
		t.Fatal(err)
	}
	if !res.SplitExact[c.Start.Node] {
		t.Fatal("the walker side does not report exact splits at the centre of a star of plain arms")
	}
	r, err := crosscheck.Run(net, c.Start, pde, res, nil, crosscheck.Options{Fit: true})
	if err != nil {
		t.Fatal(err)
	}
	if r.Report.Verdict != compare.Agree {
		t.Errorf("verdict %s (%s), want agree", r.Report.Verdict, r.Report.Explain)
	}
	splits := 0
	for _, ch := range r.Report.Checks {
		if strings.HasPrefix(ch.Quantity, "split") {
			splits++
		}
	}
	if splits == 0 {
		t.Errorf("no split-frequency check among %d checks", len(r.Report.Checks))
	}
	if len(r.Fits) != 3 || r.LawCompared {
		t.Errorf("%d fitted weights (want 3), law compared %v (want false)", len(r.Fits), r.LawCompared)
	}
	if len(r.Notes) == 0 {
		t.Error("no note that the exit-time law was not compared")
	}

	bad := *pde
	bad.Hit = append([]float64(nil), pde.Hit...)
	bad.Hit[1] -= 0.05
	bad.Hit[2] += 0.05
	r, err = crosscheck.Run(net, c.Start, &bad, res, nil, crosscheck.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Report.Verdict != compare.Disagree {
		t.Errorf("wrong hitting probabilities: verdict %s (%s), want disagree", r.Report.Verdict, r.Report.Explain)
	}
}

// TestSplitExactWhereTheWeightsRule checks which junctions the walker side
// reports as splitting by the weights exactly: not where an arm drifts, nor
// where the arms decay at different rates (their departures lean towards
// the arm that decays less), but where they decay at one rate.
func TestSplitExactWhereTheWeightsRule(t *testing.T) {
	build := func(b, c2 float64) *graphpde.Network {
		net := &graphpde.Network{}
		hub, _ := net.AddNode(graphpde.Node{ID: "hub"})
		for i, e := range []graphpde.Edge{{ID: "p", Length: 1, A: 1, C: 0.5}, {ID: "q", Length: 1, A: 1, B: b, C: c2}} {
			end, _ := net.AddNode(graphpde.Node{ID: string(rune('x' + i)), Law: vertex.Law{Kind: vertex.Fixed}})
			e.From, e.To = hub, end
			if _, err := net.AddEdge(e); err != nil {
				t.Fatal(err)
			}
		}
		return net
	}
	for _, tc := range []struct {
		name  string
		b, c  float64
		exact bool
	}{
		{"one decay rate", 0, 0.5, true},
		{"different decay rates", 0, 2, false},
		{"drift on an arm", 0.3, 0.5, false},
	} {
		res, err := montecarlo.Run(context.Background(), build(tc.b, tc.c), vertex.AtNode(0), &montecarlo.Settings{Particles: 100, Seed: 1})
		if err != nil {
			t.Fatal(err)
		}
		if res.SplitExact[0] != tc.exact || res.SplitExact[1] {
			t.Errorf("%s: SplitExact = %v, want hub %v and fixed nodes false", tc.name, res.SplitExact, tc.exact)
		}
	}
}

// TestRunComparesTheLaw runs the whole comparison with the PDE side's own
// answers for the biased star (graphpde.ExitStatistics: hitting
// probabilities, mean and the survival function by Laplace inversion), so
// that the exit-time law is compared too (a KS test on the tabulated
// survival function): consistent engines must agree at the family-wise
// level 1% with a fixed seed. The same walkers against a survival function
// of a lifetime 10% longer (S(t/1.1), a shift of several KS critical
// distances at 10⁵ walkers) must disagree.
func TestRunComparesTheLaw(t *testing.T) {
	net, c, _ := biasedStar(t)
	x, err := graphpde.ExitStatistics(net, c.Start, nil)
	if err != nil {
		t.Fatal(err)
	}
	res, err := montecarlo.Run(context.Background(), net, c.Start, &montecarlo.Settings{Particles: 100000, Seed: 11, KeepSamples: true})
	if err != nil {
		t.Fatal(err)
	}
	pde := &crosscheck.PDE{Hit: x.Hit, Killed: x.Killed, Mean: x.Mean, Survival: x.SurvivalAt}
	r, err := crosscheck.Run(net, c.Start, pde, res, nil, crosscheck.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if !r.LawCompared || r.Report.Verdict != compare.Agree {
		t.Errorf("law compared %v, verdict %s (%s); want true, agree", r.LawCompared, r.Report.Verdict, r.Report.Explain)
	}
	stretched := *pde
	stretched.Survival = func(t float64) (float64, error) { return x.SurvivalAt(t / 1.1) }
	r, err = crosscheck.Run(net, c.Start, &stretched, res, nil, crosscheck.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Report.Verdict != compare.Disagree {
		t.Errorf("stretched law: verdict %s (%s), want disagree", r.Report.Verdict, r.Report.Explain)
	}
}

// TestCensoredBounds checks the cross-check with many walkers still out at
// the time cap (0.3 on the biased star, whose mean exit time is 102/43): the
// hitting probabilities and the value are compared as bounds that hold the
// closed forms, the mean exit time is left out, and the verdict is
// inconclusive, not disagree (it used to compare the censored frequencies
// as if complete). A PDE answer below the walkers' lower bound by 0.05 (25
// standard errors) is still found to disagree.
func TestCensoredBounds(t *testing.T) {
	net, c, pde := biasedStar(t)
	res, err := montecarlo.Run(context.Background(), net, c.Start, &montecarlo.Settings{Particles: 100000, Seed: 5, TimeCap: 0.3, KeepSamples: true})
	if err != nil {
		t.Fatal(err)
	}
	if q := res.CensoredFraction(); q < 0.3 {
		t.Fatalf("censored fraction %g: the test needs many walkers still out", q)
	}
	r, err := crosscheck.Run(net, c.Start, pde, res, nil, crosscheck.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Report.Verdict != compare.Inconclusive || !strings.Contains(r.Report.Explain, "time cap") {
		t.Errorf("verdict %s (%s), want inconclusive because of the time cap", r.Report.Verdict, r.Report.Explain)
	}
	bounded := 0
	for _, ch := range r.Report.Checks {
		if ch.Quantity == "exit-time:mean" {
			t.Errorf("the mean exit time is compared although walkers were censored")
		}
		if ch.Bounded {
			bounded++
			if !ch.Pass || ch.PDE < ch.Walker-4*ch.StdErr || ch.PDE > ch.Upper+4*ch.StdErr {
				t.Errorf("%s: PDE %g outside the bounds [%g, %g] ± %g", ch.Quantity, ch.PDE, ch.Walker, ch.Upper, ch.StdErr)
			}
		}
	}
	if bounded < 3 {
		t.Errorf("%d bounded checks, want the value and the hitting probabilities", bounded)
	}

	bad := *pde
	bad.Hit = append([]float64(nil), pde.Hit...)
	bad.Hit[1] = res.Hit[1].Mean - 0.05
	r, err = crosscheck.Run(net, c.Start, &bad, res, nil, crosscheck.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Report.Verdict != compare.Disagree {
		t.Errorf("PDE below the lower bound: verdict %s (%s), want disagree", r.Report.Verdict, r.Report.Explain)
	}
}

// TestPayoffRange checks the range of payoffs a censored walker could still
// collect: the fixed values and 0 (killed); unbounded with a source or an
// injection.
func TestPayoffRange(t *testing.T) {
	build := func(inject, f float64) *graphpde.Network {
		net := &graphpde.Network{}
		hub, _ := net.AddNode(graphpde.Node{ID: "hub", Law: vertex.Law{Kind: vertex.Balance, Inject: inject}})
		for i, g := range []float64{-1, 2} {
			end, _ := net.AddNode(graphpde.Node{ID: string(rune('x' + i)), Law: vertex.Law{Kind: vertex.Fixed, Value: g}})
			if _, err := net.AddEdge(graphpde.Edge{ID: string(rune('p' + i)), From: hub, To: end, Length: 1, A: 1, F: f}); err != nil {
				t.Fatal(err)
			}
		}
		return net
	}
	if lo, hi, ok := crosscheck.PayoffRange(build(0, 0)); !ok || lo != -1 || hi != 2 {
		t.Errorf("fixed values −1 and 2: [%g, %g] %v", lo, hi, ok)
	}
	if _, _, ok := crosscheck.PayoffRange(build(0.5, 0)); ok {
		t.Errorf("an injection leaves the payoff bounded")
	}
	if _, _, ok := crosscheck.PayoffRange(build(0, 0.5)); ok {
		t.Errorf("a source leaves the payoff bounded")
	}
}
