package montecarlo_test

import (
	"context"
	"errors"
	"math"
	"reflect"
	"testing"

	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/montecarlo/internal/exitlaw"
	"github.com/ramify-dev/ramify/vertex"
)

// bonf is the bound in standard errors for one of the several estimates a
// test checks at once: 4.5 sd has a two-sided tail of 7e−6, so even 100
// checks at once fail by chance less than once in a thousand runs.
const bonf = 4.5

func near(t *testing.T, what string, e montecarlo.Estimate, want float64) {
	t.Helper()
	if e.N == 0 || math.IsNaN(e.Mean) || math.Abs(e.Mean-want) > bonf*e.StdErr+1e-12 {
		t.Errorf("%s = %.6g ± %.2g (N=%d), want %.6g (z = %.2f)", what, e.Mean, e.StdErr, e.N, want, (e.Mean-want)/e.StdErr)
	}
}

func run(t *testing.T, net montecarlo.Network, st vertex.Point, set montecarlo.Settings) *montecarlo.Result {
	t.Helper()
	res, err := montecarlo.Run(context.Background(), net, st, &set)
	if err != nil {
		t.Fatalf("Run: %v", err)
	}
	return res
}

func onEdge(e int, x float64) vertex.Point { return vertex.OnEdge(e, x) }

// TestInterval checks walkers on one edge between absorbing nodes against
// docs/references.md B1 (Karatzas & Shreve, Brownian Motion and Stochastic
// Calculus 2nd ed. §2.8; Borodin & Salminen, Handbook of Brownian Motion 2nd
// ed. Part II ch. 1 §3 — both from memory; moments derived there): for the
// generator ½d²/dx² on (0, L), P(exit at L) = x/L and E τ = x(L − x). Trap 4
// of docs/references.md: for the generator D d²/dx² (D = a/ρ) times divide by 2D.
func TestInterval(t *testing.T) {
	for _, c := range []struct {
		name   string
		a, rho float64
		wantT  float64
	}{
		{"B1 a=1/2", 0.5, 1, 0.21},
		{"same D=1/2 with a=2 rho=4", 2, 4, 0.21},
		{"a=1 halves the time", 1, 1, 0.105},
		{"D=1/8 doubles it... by 4", 0.25, 2, 0.84},
	} {
		t.Run(c.name, func(t *testing.T) {
			net := interval(tEdge{L: 1, a: c.a, r: c.rho}, 0, 1)
			res := run(t, net, onEdge(0, 0.3), montecarlo.Settings{Particles: 40000, Seed: 1})
			near(t, "P(exit at L)", res.Hit[1], 0.3)
			near(t, "value", res.Value, 0.3)
			near(t, "E tau", res.ExitTime, c.wantT)
			near(t, "occupation", res.Occupation[0], c.wantT)
			if !res.Stats.Exact {
				t.Errorf("interval run not reported exact: %+v", res.Stats)
			}
		})
	}
}

// intervalSurvival is P(τ > t) from x on (0, L) for the generator
// D d²/dx² absorbed at both ends: the sine series of the backward heat
// equation, Σ_{n odd} 4/(nπ) sin(nπx/L) exp(−n²π²Dt/L²) (separation of
// variables; docs/references.md B2 is its special case x = L/2).
func intervalSurvival(x, L, D, t float64) float64 {
	if t < 1e-3*L*L/D {
		return 1 // below 1e−40 of the mass for the starts used here
	}
	var s float64
	for n := 1; ; n += 2 {
		fn := float64(n)
		ex := fn * fn * math.Pi * math.Pi * D * t / (L * L)
		if ex > 60 {
			break
		}
		s += 4 / (fn * math.Pi) * math.Sin(fn*math.Pi*x/L) * math.Exp(-ex)
	}
	return s
}

// TestExitLawKS applies the one-sample KS test to the walkers' exit times
// against the exact law: an interval (several walk-on-interval steps per
// walker), the same interval cut in two by a Kirchhoff node (node steps too),
// and an equal-arm star with biased splitting, whose distance from the centre
// is reflected Brownian motion so that τ has the docs/references.md B2 law for
// every split (derived there, S1 check (i)).
func TestExitLawKS(t *testing.T) {
	const L, D, x0 = 2.0, 0.5, 0.6
	chain := &tNet{}
	a, b, c := chain.node(fixed(0)), chain.node(kirchhoff), chain.node(fixed(1))
	chain.edge(tEdge{from: a, to: b, L: 0.8, a: 0.5})
	chain.edge(tEdge{from: b, to: c, L: 1.2, a: 0.5})
	eq := star(kirchhoff, []starArm{{L: 1, a: 0.5, rho: 1, alpha: 0.5}, {L: 1, a: 0.5, rho: 1, alpha: 0.3}, {L: 1, a: 0.5, rho: 1, alpha: 0.2}})
	for _, cs := range []struct {
		name string
		net  montecarlo.Network
		st   vertex.Point
		cdf  func(float64) float64
	}{
		{"interval", interval(tEdge{L: L, a: 0.5}, 0, 1), onEdge(0, x0), func(t float64) float64 { return 1 - intervalSurvival(x0, L, D, t) }},
		{"chain", chain, onEdge(0, x0), func(t float64) float64 { return 1 - intervalSurvival(x0, L, D, t) }},
		{"equal-arm star", eq, vertex.AtNode(0), exitlaw.CDF},
	} {
		t.Run(cs.name, func(t *testing.T) {
			res := run(t, cs.net, cs.st, montecarlo.Settings{Particles: 50000, Seed: 3, KeepSamples: true})
			x := make([]float64, len(res.Samples))
			for i, s := range res.Samples {
				x[i] = s.Time
			}
			d, p := ksTest(x, cs.cdf)
			if p < 1e-3 {
				t.Errorf("KS D = %.4g, p = %.3g", d, p)
			}
		})
	}
}

// TestStarS1 checks the star with unequal arms and biased splitting of
// docs/references.md S1 (derived there and in docs/exit-statistics.md §5, checked by Monte
// Carlo): generator ½d², L = (1, 2, 3), p = (0.5, 0.3, 0.2); from the centre
// P(hit) = 30/43, 9/43, 4/43 and E τ = 102/43; from x = 0.5 on arm 1,
// E τ = 1.4360465 and P(end 1) = 0.8488372. The weights α = p with a = ½
// give w ∝ p.
func TestStarS1(t *testing.T) {
	net := star(kirchhoff, []starArm{
		{L: 1, a: 0.5, rho: 1, alpha: 0.5, g: 1},
		{L: 2, a: 0.5, rho: 1, alpha: 0.3},
		{L: 3, a: 0.5, rho: 1, alpha: 0.2},
	})
	res := run(t, net, vertex.AtNode(0), montecarlo.Settings{Particles: 100000, Seed: 5})
	for k, want := range []float64{30.0 / 43, 9.0 / 43, 4.0 / 43} {
		near(t, "hit", res.Hit[k+1], want)
	}
	near(t, "E tau", res.ExitTime, 102.0/43)
	near(t, "value", res.Value, 30.0/43)
	res = run(t, net, onEdge(0, 0.5), montecarlo.Settings{Particles: 100000, Seed: 6})
	near(t, "E tau from arm 1", res.ExitTime, 1.4360465)
	near(t, "P(end 1) from arm 1", res.Hit[1], 0.8488372)
}

// TestUnequalArms checks a Kirchhoff junction of arms with unequal
// diffusivities and capacities (conservative weights α = a). The first
// departures from the centre follow w_e = α_e sqrt(ρ_e/a_e) = sqrt(a_e ρ_e)
// (docs/walkers.md §3, derived there; docs/references.md trap 5: not ∝ a_e). The
// hitting probabilities are the PDE closed form (α_j/L_j)/Σ(α_i/L_i), which
// ignores ρ, and E τ = Σ α_e ρ_e L_e/(2a_e) / Σ(α_e/L_e) (docs/exit-statistics.md §5
// check values with the capacity per length restored; derivation in starCentre).
func TestUnequalArms(t *testing.T) {
	arms := []starArm{
		{L: 1, a: 1, rho: 1, alpha: 1},
		{L: 1.5, a: 4, rho: 0.5, alpha: 4},
		{L: 0.7, a: 0.25, rho: 2, alpha: 0.25},
	}
	net := star(kirchhoff, arms)
	res := run(t, net, vertex.AtNode(0), montecarlo.Settings{Particles: 100000, Seed: 7})
	var sw, sh float64
	for _, a := range arms {
		sw += math.Sqrt(a.a * a.rho)
		sh += a.alpha / a.L
	}
	dep := res.Departures[0]
	var tot int64
	for _, d := range dep {
		tot += d
	}
	for k, a := range arms {
		p := math.Sqrt(a.a*a.rho) / sw
		fr := float64(dep[k]) / float64(tot)
		if se := math.Sqrt(p * (1 - p) / float64(tot)); math.Abs(fr-p) > bonf*se {
			t.Errorf("arm %d: departure frequency %.5f, want sqrt(aρ) share %.5f ± %.1g", k, fr, p, se)
		}
		near(t, "hit", res.Hit[k+1], a.alpha/a.L/sh)
	}
	near(t, "E tau", res.ExitTime, starCentre(0, 0, timeArms(arms)))
}

// TestNodeLaws checks leak, injection, node capacity and a split override at
// the centre of a star against the exact closed form of starCentre
// (docs/node-laws.md §2 balance law; mean lifetime from
// docs/exit-statistics.md §2 with the node capacity as
// a source and the leak kept). P(killed) is the value with payoff 1 at every
// end subtracted from one. The arms are plain, so these visits are exact in
// law (the laws themselves are checked in TestVisitLawError and
// TestLeakyStartLaw).
func TestNodeLaws(t *testing.T) {
	base := []starArm{
		{L: 1, a: 1, rho: 1, alpha: 1, g: 2},
		{L: 2, a: 0.5, rho: 3, alpha: 0.5, g: -1},
		{L: 0.5, a: 2, rho: 1, alpha: 1.5, g: 0.5},
	}
	for _, c := range []struct {
		name     string
		law      vertex.Law
		split    []float64
		lawExact bool
	}{
		{"leak", vertex.Law{Kind: vertex.Balance, Leak: 1.5}, nil, true},
		{"injection", vertex.Law{Kind: vertex.Balance, Inject: 0.7}, nil, true},
		{"capacity", vertex.Law{Kind: vertex.Balance, Capacity: 2}, nil, true},
		{"all three", vertex.Law{Kind: vertex.Balance, Leak: 0.4, Inject: -0.3, Capacity: 0.5}, nil, true},
		{"split override", vertex.Law{Kind: vertex.Balance, Leak: 0.4}, []float64{0.2, 0.5, 0.3}, true},
		{"split, no leak", kirchhoff, []float64{0.2, 0.5, 0.3}, true},
	} {
		t.Run(c.name, func(t *testing.T) {
			arms := slicesClone(base)
			if c.split != nil {
				// The override replaces α's proportions and keeps Σα
				// (vertex.ApplySplit).
				var sa, ss float64
				for k := range arms {
					sa += arms[k].alpha
					ss += c.split[k]
				}
				for k := range arms {
					arms[k].alpha = c.split[k] / ss * sa
				}
			}
			net := star(c.law, base)
			net.nodes[0].split = c.split
			res := run(t, net, vertex.AtNode(0), montecarlo.Settings{Particles: 50000, Seed: 9})
			beta, gamma, cap := c.law.Leak, c.law.Inject, c.law.Capacity
			near(t, "value", res.Value, starCentre(beta, gamma, arms))
			near(t, "E tau", res.ExitTime, starCentre(beta, cap, timeArms(arms)))
			ones := slicesClone(arms)
			for k := range ones {
				ones[k].g = 1
			}
			near(t, "P(killed)", res.Killed, 1-starCentre(beta, 0, ones))
			// From a point on arm 2 the walker first reaches the centre or
			// the end: value through armValue.
			res = run(t, net, onEdge(1, 0.8), montecarlo.Settings{Particles: 50000, Seed: 10})
			u0 := starCentre(beta, gamma, arms)
			near(t, "value on arm", res.Value, armValue(arms[1], u0, 0.8))
			if res.Stats.Exact != c.lawExact {
				t.Errorf("Exact = %v, want %v", res.Stats.Exact, c.lawExact)
			}
		})
	}
}

func slicesClone(a []starArm) []starArm { return append([]starArm(nil), a...) }

// TestDecaySource checks edges with decay and source: the interval with the
// cosh/sinh closed form of starCentre's arm formula (docs/references.md C2 is the
// f = 0 case: V(x)/V0 = cosh((L−x)/λ)/cosh(L/λ) for a sealed end), and stars
// whose arms decay at one common rate (an independent clock) or at different
// rates (package starlaw's per-arm decomposition); both are exact in law.
func TestDecaySource(t *testing.T) {
	t.Run("interval", func(t *testing.T) {
		s := starArm{L: 1.5, a: 0.8, c: 1.2, f: 0.9, rho: 1.3, g: 0.3}
		net := interval(tEdge{L: s.L, a: s.a, c: s.c, f: s.f, r: s.rho}, 2, s.g)
		res := run(t, net, onEdge(0, 0.6), montecarlo.Settings{Particles: 100000, Seed: 11})
		near(t, "value", res.Value, armValue(s, 2, 0.6))
		tm := timeArms([]starArm{s})[0]
		near(t, "E lifetime", res.ExitTime, armValue(tm, 0, 0.6))
		h := s
		h.f, h.g = 0, 0
		near(t, "P(hit start node)", res.Hit[0], armValue(h, 1, 0.6))
	})
	t.Run("sealed cable C2", func(t *testing.T) {
		// docs/references.md C2 [S]: V(L)/V0 = 0.6480543 at L/λ = 1, λ =
		// sqrt(a/c). A sealed end is a Kirchhoff node of degree one.
		net := &tNet{}
		a, b := net.node(fixed(1)), net.node(kirchhoff)
		net.edge(tEdge{from: a, to: b, L: 1, a: 1, c: 1})
		res := run(t, net, vertex.AtNode(b), montecarlo.Settings{Particles: 100000, Seed: 12})
		near(t, "V(L)/V0", res.Value, 0.6480543)
	})
	for _, cs := range []struct {
		name     string
		rates    [3]float64
		law      vertex.Law
		lawExact bool
	}{
		{"common rate", [3]float64{0.5, 0.5, 0.5}, kirchhoff, true},
		{"common rate, injection", [3]float64{0.5, 0.5, 0.5}, vertex.Law{Kind: vertex.Balance, Inject: 0.6}, true},
		{"different rates", [3]float64{0.5, 2, 0}, kirchhoff, true},
		{"different rates, leak", [3]float64{0.5, 2, 0}, vertex.Law{Kind: vertex.Balance, Inject: 0.6, Leak: 0.3, Capacity: 0.4}, true},
	} {
		t.Run(cs.name, func(t *testing.T) {
			arms := []starArm{
				{L: 1, a: 1, rho: 1, alpha: 1, g: 1, f: 0.5},
				{L: 2, a: 2, rho: 2, alpha: 2, g: 0, f: -0.2},
				{L: 1.5, a: 0.5, rho: 0.5, alpha: 0.5, g: 2},
			}
			for k := range arms {
				arms[k].c = cs.rates[k] * arms[k].rho
			}
			net := star(cs.law, arms)
			res := run(t, net, vertex.AtNode(0), montecarlo.Settings{Particles: 100000, Seed: 13})
			l := cs.law
			near(t, "value", res.Value, starCentre(l.Leak, l.Inject, arms))
			near(t, "E lifetime", res.ExitTime, starCentre(l.Leak, l.Capacity, timeArms(arms)))
			if res.Stats.Exact != cs.lawExact {
				t.Errorf("Exact = %v, want %v", res.Stats.Exact, cs.lawExact)
			}
		})
	}
}

// TestCoverage checks the error bars: over 2000 independent runs of 500
// walkers on the B1 interval, the nominal 95% intervals mean ± 1.96 stderr
// cover the exact P = 0.3 and E τ = 0.21 in 93–97% of runs. The binomial sd
// of the coverage is 0.49%, so the band is ±4 sd; the Wald interval's own
// coverage at n = 500 is within 0.5% of nominal.
func TestCoverage(t *testing.T) {
	net := interval(tEdge{L: 1, a: 0.5}, 0, 1)
	const runs = 2000
	var cp, ct int
	for i := range runs {
		res := run(t, net, onEdge(0, 0.3), montecarlo.Settings{Particles: 500, Seed: uint64(1000 + i), Workers: 1})
		if math.Abs(res.Value.Mean-0.3) <= 1.96*res.Value.StdErr {
			cp++
		}
		if math.Abs(res.ExitTime.Mean-0.21) <= 1.96*res.ExitTime.StdErr {
			ct++
		}
	}
	for _, c := range []struct {
		what string
		n    int
	}{{"value", cp}, {"exit time", ct}} {
		f := float64(c.n) / runs
		t.Logf("coverage of %s: %.4f", c.what, f)
		if f < 0.93 || f > 0.97 {
			t.Errorf("coverage of %s: %.3f, want 0.93–0.97", c.what, f)
		}
	}
}

// mixedNet has every kind of step: law-exact nodes, a leaky node with
// capacity, a decaying edge and a time-stepping edge with drift.
func mixedNet() *tNet {
	n := &tNet{}
	a := n.node(fixed(1))
	b := n.node(kirchhoff)
	c := n.node(vertex.Law{Kind: vertex.Balance, Leak: 0.3, Capacity: 0.2, Inject: 0.1})
	d := n.node(fixed(0))
	n.edge(tEdge{from: a, to: b, L: 1, a: 1})
	n.edge(tEdge{from: b, to: c, L: 0.7, a: 0.5, c: 0.2})
	n.edge(tEdge{from: c, to: d, L: 1, a: 1, b: 0.5})
	n.edge(tEdge{from: b, to: b, L: 0.9, a: 2})
	return n
}

// TestReproducible checks that the same seed gives the same result for 1, 2
// and 3 workers, bit for bit (blocks are merged in block order), on the mixed
// network and on a star whose sticky, leaky centre draws from the visit-law
// tables.
func TestReproducible(t *testing.T) {
	sticky := star(vertex.Law{Kind: vertex.Balance, Leak: 0.5, Capacity: 0.3, Inject: 0.2}, []starArm{
		{L: 1, a: 1, rho: 1, alpha: 1, g: 1},
		{L: 0.5, a: 2, rho: 1, alpha: 1.5, f: 0.4},
	})
	for _, c := range []struct {
		net   *tNet
		start int
	}{{mixedNet(), 1}, {sticky, 0}} {
		var ref *montecarlo.Result
		for _, w := range []int{1, 2, 3} {
			res := run(t, c.net, vertex.AtNode(c.start), montecarlo.Settings{Particles: 5*montecarlo.BlockSize + 17, Seed: 42, Workers: w, Step: 0.005})
			res.Stats.Elapsed, res.Stats.Prepare, res.Stats.TableTime = 0, 0, 0
			if ref == nil {
				ref = res
				continue
			}
			if !reflect.DeepEqual(ref, res) {
				t.Errorf("workers=%d: result differs from workers=1:\n%+v\n%+v", w, res, ref)
			}
		}
	}
}

type cancelAfter struct {
	cancel context.CancelFunc
	calls  int
}

func (c *cancelAfter) Progress(done, total int64) {
	c.calls++
	if c.calls == 2 {
		c.cancel()
	}
}

// TestCancel cancels after the second completed block: the run stops early,
// returns Partial without error, and its estimates cover whole blocks.
func TestCancel(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	rec := &cancelAfter{cancel: cancel}
	set := montecarlo.Settings{Particles: 200 * montecarlo.BlockSize, Seed: 1, Workers: 2, Recorder: rec}
	res, err := montecarlo.Run(ctx, interval(tEdge{L: 1, a: 0.5}, 0, 1), onEdge(0, 0.3), &set)
	if err != nil {
		t.Fatal(err)
	}
	if res.Status != montecarlo.Cancelled {
		t.Fatalf("not partial: %+v", res.Status)
	}
	if res.Finished < 2*montecarlo.BlockSize || res.Finished >= set.Particles || res.Finished%montecarlo.BlockSize != 0 {
		t.Errorf("Finished = %d, want whole blocks, at least 2, fewer than all", res.Finished)
	}
	if res.Value.N != res.Finished {
		t.Errorf("Value.N = %d, Finished = %d", res.Value.N, res.Finished)
	}
	near(t, "partial value", res.Value, 0.3)
}

// TestCensoring uses a time cap at which a known fraction of walkers is still
// out: from the centre of (0, 2) with generator ½d², P(τ > 1) = 0.3707774
// (docs/references.md B2). Censored walkers are reported, not counted as exits:
// the exit-time mean is that of τ given τ ≤ 1, below the cap.
func TestCensoring(t *testing.T) {
	net := interval(tEdge{L: 2, a: 0.5}, 0, 1)
	res := run(t, net, onEdge(0, 1), montecarlo.Settings{Particles: 50000, Seed: 2, TimeCap: 1})
	cens := montecarlo.Estimate{Mean: res.CensoredFraction(), N: res.Finished,
		StdErr: math.Sqrt(0.3707774 * (1 - 0.3707774) / float64(res.Finished))}
	near(t, "censored fraction", cens, 0.3707774)
	if res.ExitTime.N+res.Censored != res.Finished {
		t.Errorf("exits %d + censored %d != finished %d", res.ExitTime.N, res.Censored, res.Finished)
	}
	if res.ExitTime.Mean >= 1 {
		t.Errorf("exit time mean %g includes censored walkers", res.ExitTime.Mean)
	}
	if h := res.Hit[0].Mean + res.Hit[1].Mean; math.Abs(h-(1-res.CensoredFraction())) > 1e-12 {
		t.Errorf("hits %g + censored %g != 1", h, res.CensoredFraction())
	}
}

// TestErrors checks that bad input gives the documented error type.
func TestErrors(t *testing.T) {
	good := interval(tEdge{L: 1, a: 0.5}, 0, 1)
	badW := interval(tEdge{L: 1, a: 0.5}, 0, 1)
	badW.nodes[0].law = kirchhoff
	badW.edges[0].w = [2]float64{-1, 0}
	badSplit := star(kirchhoff, []starArm{{L: 1, a: 1, rho: 1, alpha: 1}, {L: 1, a: 1, rho: 1, alpha: 1}})
	badSplit.nodes[0].split = []float64{0, 0}
	badA := interval(tEdge{L: 1, a: 0}, 0, 1)
	var startErr *vertex.PointError
	var weightErr *montecarlo.WeightError
	var memErr *montecarlo.MemoryError
	var coefErr *montecarlo.CoefficientError
	for _, c := range []struct {
		name   string
		net    montecarlo.Network
		st     vertex.Point
		set    montecarlo.Settings
		target any
	}{
		{"no such node", good, vertex.AtNode(5), montecarlo.Settings{}, &startErr},
		{"zero point (node 0 and edge 0)", good, vertex.Point{}, montecarlo.Settings{}, &startErr},
		{"no such edge", good, onEdge(3, 0.1), montecarlo.Settings{}, &startErr},
		{"off the edge", good, onEdge(0, 1.5), montecarlo.Settings{}, &startErr},
		{"NaN position", good, onEdge(0, math.NaN()), montecarlo.Settings{}, &startErr},
		{"negative weight", badW, onEdge(0, 0.5), montecarlo.Settings{}, &weightErr},
		{"all-zero split", badSplit, vertex.AtNode(0), montecarlo.Settings{}, &weightErr},
		{"zero diffusivity", badA, onEdge(0, 0.5), montecarlo.Settings{}, &coefErr},
		{"samples too big", good, onEdge(0, 0.5), montecarlo.Settings{Particles: 1 << 40, KeepSamples: true}, &memErr},
	} {
		t.Run(c.name, func(t *testing.T) {
			res, err := montecarlo.Run(context.Background(), c.net, c.st, &c.set)
			if err == nil || res != nil {
				t.Fatalf("got res %v, err %v", res != nil, err)
			}
			if !errors.As(err, c.target) {
				t.Errorf("error %T %q is not %T", err, err, c.target)
			}
		})
	}
	t.Run("all censored", func(t *testing.T) {
		n := &tNet{}
		a, b := n.node(kirchhoff), n.node(kirchhoff)
		n.edge(tEdge{from: a, to: b, L: 1, a: 1})
		res, err := montecarlo.Run(context.Background(), n, vertex.AtNode(0), &montecarlo.Settings{Particles: 100, TimeCap: 5})
		var ce *montecarlo.CensoredError
		if !errors.As(err, &ce) || res == nil || res.Censored != 100 || ce.Censored != 100 {
			t.Fatalf("err %v, res %+v", err, res)
		}
	})
}

// TestSelfLoop checks a node carrying a self-loop (both ends count in the
// star, each arm at most half the loop): node b joins a fixed node a (edge
// L = 1, a = 1) and a loop (L = 0.9, a = 2, α = a). On the loop
// T = T0 + ρx(Ls − x)/(2a_s), leaving T0 unchanged at both ends, so the
// balance law gives T0 = (ρ_v + α₁ρL₁/(2a₁) + α_sρL_s/a_s)/(β + α₁/L₁) and
// u(b) = (α₁g/L₁ + γ)/(β + α₁/L₁) (derived here from docs/node-laws.md §2).
func TestSelfLoop(t *testing.T) {
	for _, law := range []vertex.Law{kirchhoff, {Kind: vertex.Balance, Leak: 0.5, Capacity: 0.3}} {
		n := &tNet{}
		a, b := n.node(fixed(1)), n.node(law)
		n.edge(tEdge{from: a, to: b, L: 1, a: 1})
		n.edge(tEdge{from: b, to: b, L: 0.9, a: 2})
		res := run(t, n, vertex.AtNode(b), montecarlo.Settings{Particles: 40000, Seed: 17})
		den := law.Leak + 1
		near(t, "E tau", res.ExitTime, (law.Capacity+0.5+2*0.9/2)/den)
		near(t, "value", res.Value, 1/den)
		// Occupation of the loop: the same problem with the source
		// restricted to the loop (docs/exit-statistics.md §4): α_sρL_s/a_s/den.
		near(t, "loop occupation", res.Occupation[1], 0.9/den)
	}
}

// TestQuantiles checks the reported exit-time quantiles of the equal-arm
// star (docs/references.md B2 law, see TestExitLawKS) against the exact ones; a
// sample p-quantile has standard error sqrt(p(1−p)/n)/f(q_p).
func TestQuantiles(t *testing.T) {
	eq := star(kirchhoff, []starArm{{L: 1, a: 0.5, rho: 1, alpha: 0.2}, {L: 1, a: 0.5, rho: 1, alpha: 0.8}})
	const n = 100000
	res := run(t, eq, vertex.AtNode(0), montecarlo.Settings{Particles: n, Seed: 19})
	if len(res.Quantiles) != 5 {
		t.Fatalf("got %d quantiles, want the 5 defaults", len(res.Quantiles))
	}
	for _, q := range res.Quantiles {
		lo, hi := 0.0, 10.0
		for range 100 {
			mid := (lo + hi) / 2
			if exitlaw.CDF(mid) < q.P {
				lo = mid
			} else {
				hi = mid
			}
		}
		se := math.Sqrt(q.P*(1-q.P)/n) / exitlaw.Density(lo)
		if math.Abs(q.T-lo) > bonf*se {
			t.Errorf("quantile %g: %.5g, exact %.5g ± %.2g", q.P, q.T, lo, se)
		}
	}
	// The spread of the law: sd of τ₁ is sqrt(2/3) (docs/references.md B2).
	if sd := math.Sqrt(2.0 / 3); math.Abs(res.ExitSD-sd) > bonf*math.Sqrt(6.1/n)/(2*sd) {
		t.Errorf("ExitSD = %g, want %g", res.ExitSD, sd)
	}
}

// TestOneWaySplit checks that a zero entry in a split override is legal and
// means what it says: from the centre of a two-arm star whose split sends
// every walker along arm 0, every walker ends at that arm's end, whatever the
// weights, and none ever leaves along arm 1.
func TestOneWaySplit(t *testing.T) {
	net := star(kirchhoff, []starArm{{L: 1, a: 1, rho: 1, alpha: 1, g: 1}, {L: 0.5, a: 1, rho: 1, alpha: 3}})
	net.nodes[0].split = []float64{1, 0}
	res, err := montecarlo.Run(context.Background(), net, vertex.AtNode(0), &montecarlo.Settings{Particles: 5000, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	if res.Hit[1].Mean != 1 || res.Hit[2].Mean != 0 {
		t.Errorf("hits %v, %v: want 1 and 0", res.Hit[1].Mean, res.Hit[2].Mean)
	}
	if d := res.Departures[0]; d[1] != 0 || d[0] == 0 {
		t.Errorf("departures %v: want none along arm 1", d)
	}
}

// ksTest returns the Kolmogorov–Smirnov distance of the sample x from the
// distribution function cdf and its p-value (compare.Distribution with no
// censoring: Stephens' finite-n correction of Kolmogorov's limit law).
func ksTest(x []float64, cdf func(float64) float64) (d, p float64) {
	c := compare.Distribution("ks", x, 0, 0, func(t float64) float64 { return 1 - cdf(t) })
	return c.Stat, c.P
}
