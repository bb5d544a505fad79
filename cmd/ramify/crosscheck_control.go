package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"text/tabwriter"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/montecarlo/crosscheck"
)

// crosscheck on a controlled network: walkers under the computed optimal
// policy against the computed value (two-sided), and challengers — the
// best constant policy and random perturbations of the optimal one — that
// must do no better (one-sided); Bonferroni over the family.

// sameValue is the relative difference below which a challenger's PDE
// value counts as the optimum itself (the solves agree to about 1e−10;
// common practice, no source).
const sameValue = 1e-9

// perturbSegments is the number of equal stretches of each controlled edge
// that a random perturbation re-draws independently.
const perturbSegments = 4

// walkPolicyNet runs the walkers on the linear network of a policy with
// the automatic time cap of walk.
func walkPolicyNet(ctx context.Context, pn *graphpde.Network, p graphpde.Point, set montecarlo.Settings) (*montecarlo.Result, error) {
	if set.TimeCap == 0 {
		x, xerr := interruptible(ctx, func() (*graphpde.ExitStats, error) {
			return graphpde.ExitStatistics(pn, p, &graphpde.ExitSettings{Quantiles: []float64{}, Context: ctx})
		})
		if errors.Is(xerr, errInterrupted) {
			return nil, xerr
		}
		tcap, _, err := autoTimeCap(pn, x, xerr)
		if err != nil {
			return nil, err
		}
		set.TimeCap = tcap
	}
	return montecarlo.Run(ctx, pn, p, &set)
}

// challengerPolicies returns the best constant policy (by the PDE value at
// p) and n random perturbations of opt, with their names.
func challengerPolicies(net *graphpde.Network, opt *graphpde.Policy, p graphpde.Point, n int, seed uint64, obj graphpde.Objective) ([]*graphpde.Policy, []string, error) {
	var pols []*graphpde.Policy
	var names []string
	maxK := 0
	for e := range net.Edges {
		maxK = max(maxK, len(net.Edges[e].ControlSet()))
	}
	for v := range net.Nodes {
		maxK = max(maxK, len(net.Nodes[v].Controls))
	}
	bestK, bestV := -1, 0.0
	for k := 0; k < maxK; k++ {
		pn, _, err := net.Apply(graphpde.ConstantPolicy(net, k))
		if err != nil {
			return nil, nil, err
		}
		sol, err := graphpde.Solve(pn, nil)
		if err != nil {
			continue // a constant policy may leave the problem ill-posed
		}
		u, err := sol.At(p)
		if err != nil || math.IsNaN(u) {
			continue
		}
		if bestK < 0 || (obj == graphpde.Minimize && u < bestV) || (obj == graphpde.Maximize && u > bestV) {
			bestK, bestV = k, u
		}
	}
	if bestK >= 0 {
		pols = append(pols, graphpde.ConstantPolicy(net, bestK))
		names = append(names, fmt.Sprintf("constant %d (the best constant policy)", bestK))
	}
	rng := rand.New(rand.NewPCG(seed, 0x636f6e74726f6c)) // a stream of its own
	for i := 0; i < n; i++ {
		q := &graphpde.Policy{Edges: make([][]graphpde.PolicyPiece, len(net.Edges)), Nodes: append([]int(nil), opt.Nodes...)}
		for e := range net.Edges {
			cs := net.Edges[e].ControlSet()
			if len(cs) == 0 {
				continue
			}
			L := net.Edges[e].Length
			for s := 0; s < perturbSegments; s++ {
				lo, hi := L*float64(s)/perturbSegments, L*float64(s+1)/perturbSegments
				if s == perturbSegments-1 {
					hi = L
				}
				k := opt.ControlAt(e, (lo+hi)/2)
				if rng.IntN(2) == 0 {
					k = rng.IntN(len(cs))
				}
				q.Edges[e] = append(q.Edges[e], graphpde.PolicyPiece{From: lo, To: hi, Control: k})
			}
		}
		for v, k := range q.Nodes {
			if k >= 0 && rng.IntN(2) == 0 {
				q.Nodes[v] = rng.IntN(len(net.Nodes[v].Controls))
			}
		}
		pols = append(pols, q)
		names = append(names, fmt.Sprintf("perturbation %d", i+1))
	}
	return pols, names, nil
}

type challengerOut struct {
	Name   string `json:"name"`
	PDE    num    `json:"pde"`
	Walker num    `json:"walker"`
	StdErr num    `json:"stderr"`
	Margin num    `json:"margin"`
	Pass   bool   `json:"pass"`
}

type controlCrossOut struct {
	Network     string          `json:"network"`
	From        string          `json:"from"`
	Objective   string          `json:"objective"`
	Verdict     string          `json:"verdict"`
	Explain     string          `json:"explain"`
	Optimum     num             `json:"optimum"`
	Walker      estOut          `json:"walker"`
	Checks      []compare.Check `json:"checks"`
	Challengers []challengerOut `json:"challengers"`
	Closest     string          `json:"closest,omitempty"`
	Margin      num             `json:"margin"`
	Threshold   float64         `json:"threshold"`
	Policy      *policyOut      `json:"policy"`
	// BiasEstimate: frozen node visits under the optimal policy (absent
	// where every visit is exact).
	BiasEstimate *biasOut `json:"bias_estimate,omitempty"`
	Notes        []string `json:"notes,omitempty"`
}

// crosscheckControl is runCrosscheck for a controlled network.
func crosscheckControl(ctx context.Context, net *graphpde.Network, file, from string, set *montecarlo.Settings, level float64, nChallengers int, biasPass bool, asJSON bool, stdout, stderr io.Writer) int {
	p, err := net.ParsePoint(from)
	if err != nil {
		return fail(stderr, "crosscheck", err)
	}
	pn, res, notes, err := followPolicy(ctx, net, "")
	if err != nil {
		return fail(stderr, "crosscheck", err)
	}
	optimum, err := res.Solution.At(p)
	if err != nil {
		return fail(stderr, "crosscheck", err)
	}
	obj := net.Objective
	run := func(pnet *graphpde.Network, seed uint64) (*montecarlo.Result, error) {
		s := *set
		s.Seed = seed
		r, err := walkPolicyNet(ctx, pnet, p, s)
		if err != nil {
			return nil, walkError(err, "")
		}
		if r.Status == montecarlo.Cancelled {
			return nil, errInterrupted
		}
		return r, nil
	}
	set.KeepBlocks = biasPass // pairs the bias pass with this run
	wr, err := run(pn, set.Seed)
	if err != nil {
		return fail(stderr, "crosscheck", err)
	}
	notes = append(notes, frozenNotes(pn, wr.Frozen)...)
	var bias *biasOut
	if biasPass {
		if bias, err = starBias(ctx, pn, p, *set, wr); err != nil {
			return fail(stderr, "crosscheck", walkError(err, ""))
		}
	}
	pols, names, err := challengerPolicies(net, res.Policy, p, nChallengers, set.Seed, obj)
	if err != nil {
		return fail(stderr, "crosscheck", err)
	}
	var ch []crosscheck.PolicyRun
	for i, q := range pols {
		qn, _, err := net.Apply(q)
		if err != nil {
			return fail(stderr, "crosscheck", err)
		}
		pde := math.NaN()
		if sol, err := graphpde.Solve(qn, nil); err == nil {
			pde, _ = sol.At(p)
		}
		if math.Abs(pde-optimum) <= sameValue*(1+math.Abs(optimum)) {
			notes = append(notes, fmt.Sprintf("challenger %s left out: its value by the PDE equals the optimum (it is the optimal policy, or ties with it)", names[i]))
			continue
		}
		r, err := run(qn, set.Seed+uint64(i)+1)
		if err != nil {
			return fail(stderr, "crosscheck", err)
		}
		ch = append(ch, crosscheck.PolicyRun{Name: names[i], PDE: pde, Walker: r.Value.Mean, StdErr: r.Value.StdErr, N: r.Value.N})
	}
	opt := crosscheck.PolicyRun{Name: "optimal", PDE: optimum, Walker: wr.Value.Mean, StdErr: wr.Value.StdErr, N: wr.Value.N}
	if bias != nil {
		// Widen the two-sided comparison by the estimated bias and its
		// own error, added in quadrature (common practice, no source).
		b, bse := float64(bias.Estimate), float64(bias.StdErr)
		opt.StdErr = math.Sqrt(opt.StdErr*opt.StdErr + b*b + bse*bse)
		notes = append(notes, biasLine(bias), fmt.Sprintf("the comparison under the optimal policy is widened by that bias: its standard error %.2g becomes %.2g", wr.Value.StdErr, opt.StdErr))
	}
	pr := crosscheck.Policy(optimum, opt, ch, obj == graphpde.Minimize, level)
	out := controlCrossOut{Network: net.Name, From: from, Objective: obj.String(), Verdict: string(pr.Verdict), Explain: pr.Explain,
		Optimum: num(optimum), Walker: estOut{num(opt.Walker), num(wr.Value.StdErr)}, Checks: pr.Checks, Margin: num(pr.Margin),
		Threshold: pr.Threshold, Policy: policyJSON(net, res.Policy), Notes: notes, BiasEstimate: bias}
	for i, c := range ch {
		sign := 1.0
		if obj == graphpde.Maximize {
			sign = -1
		}
		out.Challengers = append(out.Challengers, challengerOut{Name: c.Name, PDE: num(c.PDE), Walker: num(c.Walker), StdErr: num(c.StdErr),
			Margin: num(sign * (c.Walker - optimum)), Pass: pr.Checks[i+1].Pass})
	}
	if pr.Closest >= 0 {
		out.Closest = ch[pr.Closest].Name
	}
	code := 0 // like every cross-check: the verdict is in the output, not the exit status
	if asJSON {
		if err := writeJSON(stdout, out); err != nil {
			return fail(stderr, "crosscheck", err)
		}
		return code
	}
	w := stdout
	fmt.Fprintf(w, "controlled network, objective %s, from %s\n", obj, from)
	for _, n := range notes {
		fmt.Fprintln(w, "note:", n)
	}
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "policy\tPDE value\twalkers\t± stderr\tmargin\ttest")
	fmt.Fprintf(tw, "optimal (computed)\t%s\t%s\t%s\t—\ttwo-sided, z = %.2f\n", fmtNum(optimum), fmtNum(opt.Walker), fmtNum(opt.StdErr), pr.Checks[0].Z)
	for i, c := range ch {
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\tone-sided, %.1f se\n", c.Name, fmtNum(c.PDE), fmtNum(c.Walker), fmtNum(c.StdErr), fmtNum(float64(out.Challengers[i].Margin)), pr.Checks[i+1].Z)
	}
	tw.Flush()
	fmt.Fprintf(w, "(margin: the challenger's walker value minus the optimum, positive = worse; a check fails when its p-value is below %.2g = level/%d)\n", pr.Threshold, 1+len(ch))
	fmt.Fprintf(w, "\nverdict: %s\n%s\n", pr.Verdict, pr.Explain)
	return code
}
