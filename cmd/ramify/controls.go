package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/ramify-dev/ramify/examples"
	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/netfile"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex"
)

// Controlled networks: solve gives the optimal value and policy (policy
// iteration), walk and crosscheck follow a policy; the other commands
// refuse them.

// controlRefusal returns the error of a command that has no meaning for a
// controlled network, or nil for a network without controls.
func controlRefusal(net *graphpde.Network, file, cmd string) error {
	if !graphpde.Controlled(net) {
		return nil
	}
	return fmt.Errorf("%s has controls: '%s' does not handle controlled networks; 'ramify solve' gives the optimal value and policy, 'ramify walk' and 'ramify crosscheck' follow a policy", file, cmd)
}

// solveControlled runs policy iteration (interruptible: Ctrl-C stops
// between two evaluations and keeps the last).
func solveControlled(ctx context.Context, net *graphpde.Network, m graphpde.Method, cells int, eps float64) (*graphpde.ControlResult, error) {
	set := &graphpde.ControlSettings{Cells: cells, ViscosityScale: eps, Context: ctx,
		Linear: &graphpde.Settings{Method: m}}
	if m == graphpde.MethodGrid {
		set.GridOnly = true
	}
	return graphpde.SolveControl(net, set)
}

// controlOut is what a controlled solve adds to the JSON of a steady solve.
type controlOut struct {
	Objective        string     `json:"objective,omitempty"`
	Policy           *policyOut `json:"policy,omitempty"`
	PolicyIterations *int       `json:"policy_iterations,omitempty"`
	PolicySwitches   []int      `json:"policy_switches,omitempty"`
	ViscosityScale   *float64   `json:"viscosity_scale,omitempty"`
}

type policyPieceOut struct {
	From    float64 `json:"from"`
	To      float64 `json:"to"`
	Control int     `json:"control"`
}

type policyEdgeOut struct {
	ID     string           `json:"id"`
	Pieces []policyPieceOut `json:"pieces"`
}

type policyNodeOut struct {
	ID      string `json:"id"`
	Control int    `json:"control"`
}

// policyOut is the contract's "policy": {"edges": [{"id", "pieces":
// [{"from", "to", "control"}]}], "nodes": [{"id", "control"}]}.
type policyOut struct {
	Edges []policyEdgeOut `json:"edges"`
	Nodes []policyNodeOut `json:"nodes"`
}

func policyJSON(net *graphpde.Network, p *graphpde.Policy) *policyOut {
	out := &policyOut{Edges: []policyEdgeOut{}, Nodes: []policyNodeOut{}}
	for e, ps := range p.Edges {
		if len(ps) == 0 {
			continue
		}
		eo := policyEdgeOut{ID: net.Edges[e].ID}
		for _, q := range ps {
			eo.Pieces = append(eo.Pieces, policyPieceOut{q.From, q.To, q.Control})
		}
		out.Edges = append(out.Edges, eo)
	}
	for v, k := range p.Nodes {
		if k >= 0 {
			out.Nodes = append(out.Nodes, policyNodeOut{net.Nodes[v].ID, k})
		}
	}
	return out
}

func controlJSON(net *graphpde.Network, res *graphpde.ControlResult, obj graphpde.Objective) controlOut {
	it := res.Iterations
	out := controlOut{Objective: obj.String(), Policy: policyJSON(net, res.Policy), PolicyIterations: &it, PolicySwitches: res.Switches}
	if res.ViscosityScale != 1 {
		e := res.ViscosityScale
		out.ViscosityScale = &e
	}
	return out
}

// readPolicy reads a policy in the JSON shape of solve's "policy" (the
// whole solve output, or only its "policy" object) for net. Errors name the
// file.
func readPolicy(path string, net *graphpde.Network) (*graphpde.Policy, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var wrap struct {
		Policy *policyOut `json:"policy"`
		policyOut
	}
	if err := json.Unmarshal(data, &wrap); err != nil {
		return nil, fmt.Errorf("%s: not a policy in JSON: %v", path, err)
	}
	po := &wrap.policyOut
	if wrap.Policy != nil {
		po = wrap.Policy
	}
	p := &graphpde.Policy{Edges: make([][]graphpde.PolicyPiece, len(net.Edges)), Nodes: make([]int, len(net.Nodes))}
	for v := range p.Nodes {
		p.Nodes[v] = -1
	}
	for _, eo := range po.Edges {
		e, ok := net.EdgeIndex(eo.ID)
		if !ok {
			return nil, fmt.Errorf("%s: policy names edge %q, which the network does not have", path, eo.ID)
		}
		for _, q := range eo.Pieces {
			p.Edges[e] = append(p.Edges[e], graphpde.PolicyPiece{From: q.From, To: q.To, Control: q.Control})
		}
	}
	for _, no := range po.Nodes {
		v, ok := net.NodeIndex(no.ID)
		if !ok {
			return nil, fmt.Errorf("%s: policy names node %q, which the network does not have", path, no.ID)
		}
		p.Nodes[v] = no.Control
	}
	if err := p.Check(net); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return p, nil
}

// printControl adds the policy iteration summary and the policy to a
// human-readable solve.
func printControl(w io.Writer, net *graphpde.Network, res *graphpde.ControlResult, obj graphpde.Objective, rows int) {
	word := map[graphpde.Objective]string{graphpde.Minimize: "minimised", graphpde.Maximize: "maximised"}[obj]
	fmt.Fprintf(w, "controls: payoff %s by policy iteration, %s (%v)", word, plural(res.Iterations, "evaluation"), res.Status)
	if res.ViscosityScale != 1 {
		fmt.Fprintf(w, ", diffusivities scaled by %g", res.ViscosityScale)
	}
	fmt.Fprintln(w)
	for _, n := range res.Notes {
		fmt.Fprintln(w, "note:", n)
	}
	shown := 0
	for e, ps := range res.Policy.Edges {
		if len(ps) == 0 {
			continue
		}
		if rows >= 0 && shown >= rows {
			fmt.Fprintln(w, "... more controlled edges (--all prints them, --json gives everything)")
			break
		}
		shown++
		var parts []string
		for _, q := range ps {
			parts = append(parts, fmt.Sprintf("[%s, %s] %d", fmtNum(q.From), fmtNum(q.To), q.Control))
		}
		fmt.Fprintf(w, "policy on edge %s: %s\n", net.Edges[e].ID, strings.Join(parts, ", "))
	}
	for v, k := range res.Policy.Nodes {
		if k >= 0 {
			fmt.Fprintf(w, "policy at node %s: %d\n", net.Nodes[v].ID, k)
		}
	}
	fmt.Fprintln(w, "(control indices count from 0 in the order of each controls list)")
}

// followPolicy returns the linear network that walkers follow on a
// controlled network: the policy read from policyFile, or else the optimal
// one computed by policy iteration (then also its result), with notes that
// say which.
func followPolicy(ctx context.Context, net *graphpde.Network, policyFile string) (*graphpde.Network, *graphpde.ControlResult, []string, error) {
	var notes []string
	var pol *graphpde.Policy
	var res *graphpde.ControlResult
	if policyFile != "" {
		p, err := readPolicy(policyFile, net)
		if err != nil {
			return nil, nil, nil, err
		}
		pol = p
		notes = append(notes, "walkers follow the policy of "+policyFile)
	} else {
		r, err := solveControlled(ctx, net, graphpde.MethodAuto, 0, 0)
		if err != nil {
			return nil, nil, nil, err
		}
		if r.Status != graphpde.Converged {
			return nil, nil, nil, fmt.Errorf("policy iteration did not converge (%v): %s", r.Status, strings.Join(r.Notes, "; "))
		}
		res, pol = r, r.Policy
		notes = append(notes, fmt.Sprintf("walkers follow the optimal policy found by policy iteration (%s; --policy FILE.json follows another)", plural(r.Iterations, "evaluation")))
	}
	pn, note, err := net.Apply(pol)
	if err != nil {
		return nil, nil, nil, err
	}
	if note != "" {
		notes = append(notes, note)
	}
	return pn, res, notes, nil
}

// frozenNotes names the nodes whose visits froze coefficients that vary
// within their star (a policy switching next to them): those visits are
// approximate.
func frozenNotes(net *graphpde.Network, frozen []bool) []string {
	var ids []string
	for v, f := range frozen {
		if f {
			ids = append(ids, net.Nodes[v].ID)
		}
	}
	if len(ids) == 0 {
		return nil
	}
	return []string{fmt.Sprintf("visits to %s freeze coefficients that change within the node's star (the policy switches next to it): approximate, with a bias that shrinks with --star-fraction; every other node visit is exact in law", strings.Join(ids, ", "))}
}

// pushMarks is the number of chevrons drawn along a controlled edge.
const pushMarks = 8

// drawPush draws chevrons along edge e (length L, drawn by path from t = 0
// at its From node to t = 1) pointing the way the policy pushes there.
func drawPush(b *strings.Builder, push func(e int, x float64) int, e int, L float64, path func(t float64) (float64, float64)) {
	for k := 0; k < pushMarks; k++ {
		t := (float64(k) + 0.5) / pushMarks
		dir := push(e, t*L)
		x, y := path(t)
		if dir == 0 {
			fmt.Fprintf(b, `<circle cx="%.1f" cy="%.1f" r="2" fill="black"/>`, x, y)
			continue
		}
		xa, ya := path(t - 0.01)
		xb, yb := path(t + 0.01)
		ang := math.Atan2(yb-ya, xb-xa) * 180 / math.Pi
		if dir < 0 {
			ang += 180
		}
		fmt.Fprintf(b, `<path d="M -5 -5 L 3 0 L -5 5" fill="none" stroke="black" stroke-width="2" transform="translate(%.1f %.1f) rotate(%.1f)"/>`, x, y, ang)
	}
	b.WriteString("\n")
}

// policyDrawing adds the policy to a drawing of a controlled network's
// solution: chevrons where the chosen drift pushes along an edge (sign of
// the drift of the policy network), node labels with their control.
func policyDrawing(d *drawing, ctlNet *graphpde.Network, res *graphpde.ControlResult) {
	pn := res.Solution.Net
	d.push = func(e int, x float64) int {
		if len(ctlNet.Edges[e].ControlSet()) == 0 {
			return 0
		}
		_, b, _, _, _ := pn.Edges[e].Coeffs(x)
		switch {
		case b > 0:
			return 1
		case b < 0:
			return -1
		}
		return 0
	}
	d.legend = "chevrons: the way the optimal control pushes along each controlled stretch (dots: no drift)"
	var nodes []string
	for v, k := range res.Policy.Nodes {
		if k >= 0 {
			nodes = append(nodes, fmt.Sprintf("%s → %d", ctlNet.Nodes[v].ID, k))
		}
	}
	if len(nodes) > 0 {
		d.legend += "; node controls: " + strings.Join(nodes, ", ")
	}
}

// parseScales reads --viscosity-scale: empty, one ε > 0, or a strictly
// decreasing comma-separated list of them.
func parseScales(s string) ([]float64, error) {
	if s == "" {
		return nil, nil
	}
	var out []float64
	for _, f := range strings.Split(s, ",") {
		v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil || !(v > 0) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("--viscosity-scale %q: %q is not a number > 0", s, f)
		}
		if n := len(out); n > 0 && !(v < out[n-1]) {
			return nil, fmt.Errorf("--viscosity-scale %q: a list must decrease", s)
		}
		out = append(out, v)
	}
	return out, nil
}

type sweepProbeOut struct {
	At    string `json:"at"`
	U     []num  `json:"u"`
	Limit num    `json:"limit"`
}

type viscosityOut struct {
	Network string          `json:"network"`
	Scales  []float64       `json:"scales"`
	Probes  []sweepProbeOut `json:"probes"`
	Evals   []int           `json:"policy_iterations"`
	Status  string          `json:"status"`
	Notes   []string        `json:"notes,omitempty"`
}

// viscositySweep solves a controlled network at every scale (largest
// first) and extrapolates every probe to ε → 0, linearly in ε from the two
// smallest scales (the vanishing-viscosity gap is observed linear in ε on
// the shortest-path test, docs/controls.md §4). Without probes it reports
// every balance node.
func viscositySweep(ctx context.Context, net *graphpde.Network, file string, m graphpde.Method, cells int, scales []float64, specs []string, pts []graphpde.Point, asJSON bool, stdout, stderr io.Writer) int {
	if len(pts) == 0 {
		for v, nd := range net.Nodes {
			if nd.Law.Kind == vertex.Balance {
				specs = append(specs, nd.ID)
				pts = append(pts, vertex.AtNode(v))
			}
		}
	}
	out := viscosityOut{Network: net.Name, Scales: scales, Status: "converged",
		Notes: []string{"limit: linear extrapolation in ε from the two smallest scales"}}
	vals := make([][]float64, len(pts))
	var prev *graphpde.ControlResult
	for _, eps := range scales {
		set := &graphpde.ControlSettings{Cells: cells, ViscosityScale: eps, Context: ctx,
			Linear: &graphpde.Settings{Method: m}, GridOnly: m == graphpde.MethodGrid, From: prev}
		res, err := graphpde.SolveControl(net, set)
		prev = res
		if err != nil {
			return fail(stderr, "solve", fmt.Errorf("--viscosity-scale %g: %w", eps, err))
		}
		if res.Status != graphpde.Converged {
			out.Status = res.Status.String()
			out.Notes = append(out.Notes, fmt.Sprintf("ε = %g: %v: %s", eps, res.Status, strings.Join(res.Notes, "; ")))
		}
		out.Evals = append(out.Evals, res.Iterations)
		for i, p := range pts {
			vals[i] = append(vals[i], probe(res.Solution, p))
		}
	}
	n := len(scales)
	e1, e2 := scales[n-2], scales[n-1]
	for i := range pts {
		u1, u2 := vals[i][n-2], vals[i][n-1]
		lim := u2 - e2*(u1-u2)/(e1-e2)
		po := sweepProbeOut{At: specs[i], Limit: num(lim)}
		for _, u := range vals[i] {
			po.U = append(po.U, num(u))
		}
		out.Probes = append(out.Probes, po)
	}
	if asJSON {
		if err := writeJSON(stdout, out); err != nil {
			return fail(stderr, "solve", err)
		}
		return 0
	}
	tw := tabwriter.NewWriter(stdout, 2, 4, 2, ' ', 0)
	fmt.Fprint(tw, "point")
	for _, e := range scales {
		fmt.Fprintf(tw, "\tε = %g", e)
	}
	fmt.Fprintln(tw, "\tε → 0")
	for _, po := range out.Probes {
		fmt.Fprint(tw, po.At)
		for _, u := range po.U {
			fmt.Fprintf(tw, "\t%s", fmtNum(float64(u)))
		}
		fmt.Fprintf(tw, "\t%s\n", fmtNum(float64(po.Limit)))
	}
	tw.Flush()
	fmt.Fprintf(stdout, "policy evaluations per scale: %v; %s\n", out.Evals, out.Status)
	for _, n := range out.Notes {
		fmt.Fprintln(stdout, "note:", n)
	}
	return 0
}

// benchControls measures policy iteration on the courier example against
// a linear solve of the network of its optimal policy on the same grid,
// best of 3 alternating runs.
func benchControls(w io.Writer, size string) error {
	cells := 256
	if size == "large" {
		cells = 4096
	}
	src, err := examples.Files.ReadFile("courier.toml")
	if err != nil {
		return err
	}
	net, err := netfile.Read(bytes.NewReader(src), "courier.toml")
	if err != nil {
		return err
	}
	evalT, whole, lin := math.Inf(1), math.Inf(1), math.Inf(1)
	evals := 0
	for range 3 {
		res, err := graphpde.SolveControl(net, &graphpde.ControlSettings{Cells: cells})
		if err != nil {
			return err
		}
		pn, _, err := net.Apply(res.Policy)
		if err != nil {
			return err
		}
		t0 := time.Now()
		if _, err := graphpde.Solve(pn, &graphpde.Settings{Method: graphpde.MethodGrid, Cells: cells}); err != nil {
			return err
		}
		lin = math.Min(lin, time.Since(t0).Seconds())
		evals = res.Iterations
		evalT = math.Min(evalT, res.SolveTime.Seconds()/float64(res.Iterations))
		whole = math.Min(whole, res.Elapsed.Seconds())
	}
	fmt.Fprintf(w, "policy iteration, examples/courier.toml at %d cells per tunnel (best of 3):\n", cells)
	fmt.Fprintf(w, "  %d evaluations (target ≤ 10); one evaluation = %.2f linear solves of the policy's network (target ≤ 1.3); the whole iteration = %.1f linear solves (%.3g s)\n",
		evals, evalT/lin, whole/lin, whole)
	return nil
}

// biasOut estimates the bias that the walkers' approximate steps put into
// their value: frozen node visits (coefficients that change within a
// node's star, frozen at the node) and Euler–Maruyama time stepping on
// edges with drift or varying coefficients. Both errors are first order,
// O(ε) in the star radius (docs/controls.md §3) and O(dt) in the step
// (docs/walkers.md), so a second run with the same seed at half the star
// fraction and/or half the step has about half the bias: with b = Cε or
// Cdt, coarse − finer = b/2, the coarse run's bias is twice that
// difference and the finer run's bias once it; the first-order
// (Richardson) value 2·finer − coarse removes it (derived). The two runs
// walk block k of their walkers from the same random stream, so their
// block sums are paired and positively correlated: standard errors of
// the estimate and the extrapolation come from the blocks' differences
// (montecarlo.PairedStdErr), which carry that covariance; with fewer than
// montecarlo.MinPairedBlocks blocks (or without the coarse run's blocks)
// they combine as if the runs were independent, an upper bound.
type biasOut struct {
	// Halved names the knobs halved in the finer run: "star_fraction"
	// (frozen visits), "step" (time stepping), or both.
	Halved []string `json:"halved"`
	// Estimate is the estimated bias of the reported value (the run at
	// StarFraction and the requested step): 2·(coarse − finer).
	Estimate          num     `json:"estimate"`
	StdErr            num     `json:"stderr"`
	StarFraction      float64 `json:"star_fraction"`
	FinerStarFraction float64 `json:"finer_star_fraction"`
	// Step is --step (0: each edge's automatic step) and FinerStepFactor
	// the factor on every edge's step in the finer run (½, or 1 where no
	// edge is time-stepped).
	Step            float64 `json:"step"`
	FinerStepFactor float64 `json:"finer_step_factor"`
	FinerValue      estOut  `json:"finer_value"`
	// Extrapolated is 2·finer − coarse, free of the first-order bias.
	Extrapolated estOut `json:"extrapolated"`
	// PairedBlocks is the number of paired blocks of walkers the standard
	// errors come from; 0 when they combine the runs' standard errors as
	// if independent.
	PairedBlocks int `json:"paired_blocks"`
}

// Quantities of a run as ratios of block sums, for montecarlo.PairedStdErr.
var (
	blockN      = func(b *montecarlo.Block) float64 { return float64(b.N) }
	blockValue  = func(b *montecarlo.Block) float64 { return b.ValueSum }
	blockTime   = func(b *montecarlo.Block) float64 { return b.TimeSum }
	blockExited = func(b *montecarlo.Block) float64 { return float64(b.Exited) }
	blockKilled = func(b *montecarlo.Block) float64 { return float64(b.Killed) }
)

// blockHit is the hit count of node v in a block, as a PairedStdErr
// numerator (NaN without kept hits, which PairedStdErr's callers check).
func blockHit(v int) func(b *montecarlo.Block) float64 {
	return func(b *montecarlo.Block) float64 {
		if v >= len(b.Hits) {
			return math.NaN()
		}
		return float64(b.Hits[v])
	}
}

// pairedSE is the standard error of α·coarse + β·fine for the quantity
// num/den of two runs with paired blocks, or, where they do not pair, of
// the runs taken as independent (ok false).
func pairedSE(coarse, fine *montecarlo.Result, c, f montecarlo.Estimate, alpha, beta float64, num, den func(*montecarlo.Block) float64) (se float64, ok bool) {
	if s, ok := montecarlo.PairedStdErr(coarse.Blocks, fine.Blocks, alpha, beta, num, den); ok && !math.IsNaN(s) {
		return s, true
	}
	return math.Hypot(alpha*c.StdErr, beta*f.StdErr), false
}

// anyFrozen reports whether some node visit froze varying coefficients.
func anyFrozen(frozen []bool) bool {
	for _, f := range frozen {
		if f {
			return true
		}
	}
	return false
}

// needsBiasPass reports whether the walkers of r took approximate steps
// whose bias a finer pass can estimate: frozen visits or time stepping.
func needsBiasPass(r *montecarlo.Result) bool {
	return anyFrozen(r.Frozen) || !r.Stats.Exact
}

// walkBias re-runs the walkers of coarse with the same seed at half the
// star fraction (set.StarFraction, 0 meaning the default 1/8) where some
// visit was frozen and at half the step where some edge was time-stepped,
// both in one finer run, and returns the bias estimate and the finer run;
// nil when every step was exact.
func walkBias(ctx context.Context, net *graphpde.Network, p graphpde.Point, set montecarlo.Settings, coarse *montecarlo.Result) (*biasOut, *montecarlo.Result, error) {
	if !needsBiasPass(coarse) || coarse.Finished == 0 || coarse.Status == montecarlo.Cancelled {
		return nil, nil, nil
	}
	frac := set.StarFraction
	if frac == 0 {
		frac = 1.0 / 8
	}
	b := &biasOut{StarFraction: frac, FinerStarFraction: frac, Step: set.Step, FinerStepFactor: 1}
	// With position records near approximate small stars, the places
	// also depend on the star fraction of the visits around them
	// (measured at a drifting junction: the step alone explains about
	// two thirds of the bias of the places).
	if anyFrozen(coarse.Frozen) || (len(set.PositionTimes) > 0 && coarse.PositionApprox) {
		b.Halved = append(b.Halved, "star_fraction")
		b.FinerStarFraction = frac / 2
	}
	if !coarse.Stats.Exact {
		b.Halved = append(b.Halved, "step")
		b.FinerStepFactor = 0.5
	}
	scale := set.StepScale
	if scale == 0 {
		scale = 1
	}
	set.StarFraction = b.FinerStarFraction
	set.StepScale = scale * b.FinerStepFactor
	set.Seed = coarse.Seed
	set.Recorder = nil
	set.TimeCap = coarse.TimeCap
	set.KeepSamples = false
	// Position times are kept: crosscheck widens its position checks by
	// the difference of the two runs' places.
	set.KeepBlocks = true
	fine, err := montecarlo.Run(ctx, net, p, &set)
	if err != nil {
		return nil, nil, err
	}
	if fine.Status == montecarlo.Cancelled {
		return nil, nil, errInterrupted
	}
	c, f := coarse.Value, fine.Value
	seB, paired := pairedSE(coarse, fine, c, f, 2, -2, blockValue, blockN)
	seX, _ := pairedSE(coarse, fine, c, f, -1, 2, blockValue, blockN)
	if paired {
		b.PairedBlocks = len(fine.Blocks)
	}
	b.Estimate, b.StdErr = num(2*(c.Mean-f.Mean)), num(seB)
	b.FinerValue = estOut{num(f.Mean), num(f.StdErr)}
	b.Extrapolated = estOut{num(2*f.Mean - c.Mean), num(seX)}
	return b, fine, nil
}

// starBias is walkBias without the finer run (controlled networks).
func starBias(ctx context.Context, net *graphpde.Network, p graphpde.Point, set montecarlo.Settings, coarse *montecarlo.Result) (*biasOut, error) {
	b, _, err := walkBias(ctx, net, p, set, coarse)
	return b, err
}

// biasKnobs says in words what the finer run halved.
func biasKnobs(b *biasOut) (what, order string) {
	var ws, os []string
	for _, h := range b.Halved {
		switch h {
		case "star_fraction":
			ws = append(ws, fmt.Sprintf("star fraction %g (instead of %g)", b.FinerStarFraction, b.StarFraction))
			os = append(os, "the frozen node visits' error is O(ε) in the star radius")
		case "step":
			ws = append(ws, "half the time step")
			os = append(os, "the time stepping's error is O(dt)")
		}
	}
	return strings.Join(ws, " and "), strings.Join(os, " and ")
}

// biasLine is the human-readable form of a bias estimate.
func biasLine(b *biasOut) string {
	what, order := biasKnobs(b)
	return fmt.Sprintf("bias of the approximate steps: a second run with the same seed at %s gives %.6g ± %.2g; %s, so the value above carries a bias of about 2·(difference) = %.3g ± %.2g, and the first-order extrapolation 2·finer − coarse is %.6g ± %.2g",
		what, float64(b.FinerValue.Mean), float64(b.FinerValue.StdErr), order, float64(b.Estimate), float64(b.StdErr), float64(b.Extrapolated.Mean), float64(b.Extrapolated.StdErr))
}
