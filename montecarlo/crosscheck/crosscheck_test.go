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
