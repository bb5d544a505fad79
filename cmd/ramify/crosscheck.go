package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"text/tabwriter"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/montecarlo/crosscheck"
	"github.com/ramify-dev/ramify/vertex"
)

const crosscheckExamples = `  ramify crosscheck examples/fork.toml --from fork
  ramify crosscheck net.toml --from hub --particles 1000000 --plot figs --json
  ramify crosscheck net.toml --from hub --fit-weights
  ramify crosscheck net.toml --from arm1@0.3 --positions-at 0.1,0.5,2
`

func runCrosscheck(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("crosscheck", "crosscheck [flags] FILE --from POINT", crosscheckExamples, stderr)
	wf := addWalkFlags(fs)
	level := fs.Float64("level", 0, "family-wise false-alarm level of the verdict (0: 0.01)")
	resolution := fs.Float64("resolution", 0, "smallest difference worth detecting: absolute for probabilities, relative otherwise (0: 0.02)")
	fit := fs.Bool("fit-weights", false, "estimate from the walkers the node weights that best explain them")
	occ := fs.Bool("occupation", false, "also compare the time spent on every edge")
	plot := fs.String("plot", "", "write SVG figures into this directory")
	draw := fs.String("draw", "", "draw the network coloured by its steady field, start marked, into this SVG file")
	method := fs.String("method", "auto", "PDE edge elements: exact, grid, or auto")
	probes := fs.StringArray("probe", nil, "nonlinear files: also compare the field with walkers started at POINT; repeatable")
	growth := fs.Bool("growth", true, "nonlinear files: where the law grows with u, walkers carry growth weights (false: that part becomes a source on the computed field)")
	posAt := fs.Float64Slice("positions-at", nil, "also compare where the walkers are at these times `T1,T2,...` with the forward (tracer) solution: a KS test of their places along the network per time")
	posCells := fs.Int("position-cells", 400, "grid cells per edge of the forward solution for --positions-at")
	challengers := fs.Int("challengers", 4, "controlled networks: random perturbations of the optimal policy that must do no better (besides the best constant policy)")
	asJSON := fs.Bool("json", false, "print one JSON object on standard output")
	file, code, ok := parseFlags(fs, args, stderr, true)
	if !ok {
		return code
	}
	if *wf.from == "" {
		return badFlag(stderr, "crosscheck", fmt.Errorf("--from POINT is required (NODE or EDGE@X)"))
	}
	m, err := graphpde.ParseMethod(*method)
	if err != nil {
		return badFlag(stderr, "crosscheck", err)
	}
	set, err := wf.settings(stderr)
	if err != nil {
		return badFlag(stderr, "crosscheck", err)
	}
	set.KeepSamples = true
	cset := &compare.Settings{Level: *level, Resolution: *resolution}
	if err := cset.Validate(); err != nil {
		return badFlag(stderr, "crosscheck", err)
	}
	inputs := []string{file}
	if err := checkOutputs(inputs, outTarget{flag: "--samples", path: *wf.samples},
		outTarget{flag: "--plot", path: *plot, dir: true}, outTarget{flag: "--draw", path: *draw}); err != nil {
		return badFlag(stderr, "crosscheck", err)
	}
	net, err := load(ctx, file)
	if err != nil {
		return fail(stderr, "crosscheck", err)
	}
	if len(*posAt) > 0 && (graphpde.Controlled(net) || graphpde.HasLaws(net)) {
		return badFlag(stderr, "crosscheck", fmt.Errorf("--positions-at is for linear networks without controls (%s)", file))
	}
	if graphpde.Controlled(net) {
		if len(*probes) > 0 || *fit || *occ || *plot != "" || *draw != "" {
			return badFlag(stderr, "crosscheck", fmt.Errorf("--probe, --fit-weights, --occupation, --plot and --draw do not apply to a controlled network (%s)", file))
		}
		return crosscheckControl(ctx, net, file, *wf.from, set, *level, *challengers, *wf.biasPass, *asJSON, stdout, stderr)
	}
	if graphpde.HasLaws(net) {
		return crosscheckNonlinear(ctx, net, file, append([]string{*wf.from}, *probes...), m, set, cset, *growth, *wf.biasPass, *asJSON, stdout, stderr)
	}
	if len(*probes) > 0 {
		return badFlag(stderr, "crosscheck", fmt.Errorf("--probe is for files with nonlinear laws (a linear file is compared from --from)"))
	}
	p, err := net.ParsePoint(*wf.from)
	if err != nil {
		return fail(stderr, "crosscheck", err)
	}
	var dens []crosscheck.Density
	if len(*posAt) > 0 {
		if *posCells <= 0 {
			return badFlag(stderr, "crosscheck", fmt.Errorf("--position-cells %d: must be > 0", *posCells))
		}
		times := slices.Clone(*posAt)
		slices.Sort(times)
		for i, t := range times {
			if !(t > 0) || math.IsInf(t, 0) {
				return badFlag(stderr, "crosscheck", fmt.Errorf("--positions-at %g: times must be finite numbers > 0", t))
			}
			if i > 0 && t == times[i-1] {
				// the same checks twice would count twice in the family
				return badFlag(stderr, "crosscheck", fmt.Errorf("--positions-at: time %g is given twice", t))
			}
		}
		set.PositionTimes = times
		fwd, err := interruptible(ctx, func() ([]graphpde.ForwardAmount, error) {
			return graphpde.ForwardAmounts(net, p, times, *posCells, 0)
		})
		if err != nil {
			return fail(stderr, "crosscheck", fmt.Errorf("--positions-at: %w", err))
		}
		for k, t := range times {
			dens = append(dens, crosscheck.Density{T: t, Edges: fwd[k].Edges, Nodes: fwd[k].Nodes})
		}
	}
	cc, err := crossCheck(ctx, net, p, *wf.from, m, set, cset, crossOptions{Fit: *fit, Occupation: *occ}, dens, *wf.biasPass)
	if err == nil && len(dens) > 0 {
		if note := releaseShift(net, p, *posCells); note != "" {
			cc.Notes = append(cc.Notes, note)
		}
	}
	if bar, ok := set.Recorder.(*progressBar); ok {
		bar.Done()
	}
	if err != nil {
		if pe := (*montecarlo.PositionError)(nil); errors.As(err, &pe) {
			err = inFile(net, file, err) // the node's line
		}
		return fail(stderr, "crosscheck", walkError(err, "the exit-time comparison keeps"))
	}
	if *wf.samples != "" {
		if err := writeSamples(*wf.samples, file, net, cc.walk, stderr, "crosscheck"); err != nil {
			return fail(stderr, "crosscheck", err)
		}
	}
	if *plot != "" {
		if err := cc.plot(*plot, inputs, net, stderr); err != nil {
			return fail(stderr, "crosscheck", fmt.Errorf("--plot %s: %w", *plot, err))
		}
	}
	if *draw != "" {
		if err := drawCrosscheck(ctx, *draw, inputs, net, p, *wf.from, m, stderr); err != nil {
			return fail(stderr, "crosscheck", err)
		}
	}
	if cc.walk.Status == montecarlo.Cancelled {
		fmt.Fprintf(stderr, "ramify crosscheck: interrupted: compared with the %d walkers that finished (of %d)\n", cc.walk.Finished, cc.walk.Particles)
	}
	if *asJSON {
		if err := writeJSON(stdout, cc.json()); err != nil {
			return fail(stderr, "crosscheck", err)
		}
	} else {
		cc.print(stdout)
	}
	return partialCode(cc.walk.Status == montecarlo.Cancelled)
}

// crossResult holds both engines' answers and their comparison.
type crossResult struct {
	from string
	walk *montecarlo.Result
	exit *graphpde.ExitStats
	*crosscheck.Result
	fitNote string // why --fit-weights fitted nothing
	// bias is the estimated bias of the approximate steps (nil where
	// every step was exact or --bias-pass=false).
	bias *biasOut
}

// widenByBias returns a copy of coarse whose value, hitting
// probabilities, killed fraction and mean exit time carry, in their
// standard errors, the estimated bias b = 2·(coarse − fine) of each
// quantity and its own standard error se_b = 2·√(se_c² + se_f²):
// se' = √(se_c² + b² + se_b²) (common practice, no source). The means stay
// those of coarse, so a bias the walkers cannot resolve does not turn into
// a false disagreement, while one far beyond the error bars still does.
func widenByBias(coarse, fine *montecarlo.Result) (*montecarlo.Result, *crosscheck.Widen) {
	w := *coarse
	// Each quantity's bias 2·(c − f), with the standard error of that
	// difference from the paired blocks (pairedSE).
	extra := func(c, f montecarlo.Estimate, num, den func(*montecarlo.Block) float64) float64 {
		b := 2 * (c.Mean - f.Mean)
		sb, _ := pairedSE(coarse, fine, c, f, 2, -2, num, den)
		return b*b + sb*sb
	}
	widen := func(c, f montecarlo.Estimate, num, den func(*montecarlo.Block) float64) montecarlo.Estimate {
		c.StdErr = math.Sqrt(c.StdErr*c.StdErr + extra(c, f, num, den))
		return c
	}
	w.Value = widen(coarse.Value, fine.Value, blockValue, blockN)
	w.ExitTime = widen(coarse.ExitTime, fine.ExitTime, blockTime, blockExited)
	// Probabilities are checked from their counts; the crosscheck adds the
	// extra variance to the binomial standard error.
	pw := &crosscheck.Widen{Hit: make([]float64, len(coarse.Hit)), Killed: extra(coarse.Killed, fine.Killed, blockKilled, blockN)}
	for v := range coarse.Hit {
		if v < len(fine.Hit) {
			pw.Hit[v] = extra(coarse.Hit[v], fine.Hit[v], blockHit(v), blockN)
		}
	}
	return &w, pw
}

// noFitReason says why --fit-weights found no junction to fit: there is
// none, the walkers left none, or at every junction the departures do not
// follow the weights alone (docs/walkers.md), so no weight explains them.
func noFitReason(net *graphpde.Network, res *montecarlo.Result) string {
	junctions, visited := 0, 0
	for v, nd := range net.Nodes {
		if nd.Law.Kind != vertex.Balance || len(net.Incident(v)) < 2 {
			continue
		}
		junctions++
		if v < len(res.Departures) && res.Departures[v] != nil {
			visited++
		}
	}
	switch {
	case junctions == 0:
		return "no weights fitted: the network has no junction (a balance node with two or more edge ends)"
	case visited == 0:
		return fmt.Sprintf("no weights fitted: the walkers left none of the %d junctions", junctions)
	}
	where := "at the junction the walkers reached"
	if visited > 1 {
		where = fmt.Sprintf("at each of the %d junctions the walkers reached", visited)
	}
	return "no weights fitted: " + where + ", the departures do not follow the end weights alone (an edge there has drift, varying coefficients, or the edges decay at different rates), so no weights can be read from them"
}

// crossOptions selects the optional parts of a cross-check.
type crossOptions = crosscheck.Options

// weightFit is the fitted weight of one edge end at a node, as printed.
type weightFit struct {
	Node   string `json:"node"`
	Edge   string `json:"edge"`
	File   num    `json:"file_weight"`
	Fitted num    `json:"fitted_weight"`
	StdErr num    `json:"stderr"`
}

// hasPayoff reports whether the value u(start) is informative: some payoff,
// source or injection in the network.
func hasPayoff(net *graphpde.Network) bool {
	for _, nd := range net.Nodes {
		if (nd.Law.Kind == vertex.Fixed && nd.Law.Value != 0) || (nd.Law.Kind == vertex.Balance && nd.Law.Inject != 0) {
			return true
		}
	}
	for i := range net.Edges {
		if net.Edges[i].F != 0 || (net.Edges[i].Profile != nil && net.Edges[i].Profile.F != nil) {
			return true
		}
	}
	return false
}

func crossCheck(ctx context.Context, net *graphpde.Network, p graphpde.Point, from string, m graphpde.Method,
	wset *montecarlo.Settings, cset *compare.Settings, opt crossOptions, dens []crosscheck.Density, biasPass bool) (*crossResult, error) {
	x, err := interruptible(ctx, func() (*graphpde.ExitStats, error) {
		// No Context: the survival function is evaluated again after the
		// walkers, also when Ctrl-C stopped them.
		return graphpde.ExitStatistics(net, p, &graphpde.ExitSettings{Method: m})
	})
	if err != nil {
		return nil, placed(net, err)
	}
	// The steady solve comes before the walkers: once they are interrupted,
	// the command only compares and prints.
	var sol *graphpde.Solution
	var solErr error
	if hasPayoff(net) {
		sol, solErr = interruptible(ctx, func() (*graphpde.Solution, error) {
			return graphpde.Solve(net, &graphpde.Settings{Method: m, Context: ctx})
		})
		if errors.Is(solErr, errInterrupted) {
			return nil, solErr
		}
	}
	var capNote string
	if wset.TimeCap == 0 {
		tcap, note, err := autoTimeCap(net, x, nil)
		if err != nil {
			return nil, err
		}
		if n := len(wset.PositionTimes); n > 0 && wset.PositionTimes[n-1] > tcap {
			tcap = wset.PositionTimes[n-1]
			note = fmt.Sprintf("time cap raised to the last position time %.4g", tcap)
		}
		set := *wset
		set.TimeCap, capNote = tcap, note
		wset = &set
	}
	wset.KeepBlocks = biasPass // pairs the bias pass with this run
	res, err := montecarlo.Run(ctx, net, p, wset)
	if err != nil {
		return nil, err
	}
	pde := &crosscheck.PDE{Hit: x.Hit, Killed: x.Killed, Mean: x.Mean, Occupation: x.Occupation, Positions: dens}
	if x.HasDistribution {
		pde.Survival = x.SurvivalAt
	}
	if hasPayoff(net) {
		var floating *graphpde.UnanchoredError
		switch {
		case errors.As(solErr, &floating):
			// Another component floats: the steady problem as a whole has
			// no unique solution, though the walkers' value from this start
			// is well defined. Say so rather than fail the whole check.
			pde.ValueNote = "value not compared: " + solErr.Error()
		case solErr != nil:
			return nil, placed(net, solErr)
		default:
			u, err := sol.At(p)
			if err != nil {
				return nil, err
			}
			pde.HasValue, pde.Value = true, u
		}
	}
	var bias *biasOut
	var biasNotes []string
	compared := res
	if biasPass {
		var fine *montecarlo.Result
		bias, fine, err = walkBias(ctx, net, p, *wset, res)
		switch {
		case errors.Is(err, errInterrupted):
			biasNotes = append(biasNotes, "the second run that estimates the bias of the approximate steps was interrupted: the checks are not widened by it")
		case err != nil:
			return nil, err
		case bias != nil:
			compared, opt.Widen = widenByBias(res, fine)
			biasNotes = append(biasNotes, biasLine(bias), "the value, hitting-probability, killed and mean-exit-time checks are widened by the estimated bias of each quantity, 2·(walkers − finer run), and its standard error, added in quadrature to the walkers' standard error")
			if len(res.PositionTimes) > 0 {
				opt.PositionsFine = fine
				biasNotes = append(biasNotes, "the position checks are widened by the estimated bias of the places: the shares still on the network and held at nodes like the values, the KS distance reduced by 3.4·D(walkers, finer run), for a bias of order 1/2 in the step (docs/walkers.md §10)")
			}
		}
	} else if needsBiasPass(res) {
		biasNotes = append(biasNotes, "no bias estimate (--bias-pass=false): the time stepping or frozen node visits bias the walkers by an unmeasured amount the checks do not allow for")
	}
	r, err := crosscheck.Run(net, p, pde, compared, cset, opt)
	if err != nil {
		return nil, err
	}
	if capNote != "" {
		r.Notes = append([]string{capNote}, r.Notes...)
	}
	r.Notes = append(r.Notes, biasNotes...)
	cc := &crossResult{from: from, walk: res, exit: x, Result: r, bias: bias}
	if opt.Fit && len(r.Fits) == 0 {
		cc.fitNote = noFitReason(net, res)
	}
	return cc, nil
}

type crossOut struct {
	Start       string          `json:"start"`
	Particles   int64           `json:"particles"`
	Finished    int64           `json:"finished"`
	Partial     bool            `json:"partial"`
	Seed        uint64          `json:"seed"`
	Checks      []compare.Check `json:"checks"`
	Verdict     string          `json:"verdict"`
	Explanation string          `json:"explanation"`
	Notes       []string        `json:"notes,omitempty"`
	Weights     []weightFit     `json:"fitted_weights,omitempty"`
	// BiasEstimate: the bias of the walkers' value from time stepping or
	// frozen node visits (absent where every step was exact).
	BiasEstimate *biasOut `json:"bias_estimate,omitempty"`
}

func (cc *crossResult) json() crossOut {
	return crossOut{Start: cc.from, Particles: cc.walk.Particles, Finished: cc.walk.Finished, Partial: cc.walk.Status == montecarlo.Cancelled,
		Seed: cc.walk.Seed, Checks: cc.Report.Checks, Verdict: string(cc.Report.Verdict), Explanation: cc.Report.Explain,
		Notes: cc.notes(), Weights: cc.fits(), BiasEstimate: cc.bias}
}

func (cc *crossResult) print(w io.Writer) {
	r := cc.walk
	fmt.Fprintf(w, "cross-check from %s: PDE against %d walkers (seed %d)\n", cc.from, r.Finished, r.Seed)
	if r.Status == montecarlo.Cancelled {
		fmt.Fprintf(w, "PARTIAL: interrupted after %d of %d walkers\n", r.Finished, r.Particles)
	}
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "quantity\tPDE\twalkers\t± stderr\tz or KS\tp\t")
	for _, c := range cc.Report.Checks {
		mark := "ok"
		if !c.Pass {
			mark = "DIFFERS"
		}
		if c.Kind == compare.KindLaw {
			if c.Slack > 0 {
				mark += fmt.Sprintf(" (allowing a bias of %.2g)", c.Slack)
			}
			fmt.Fprintf(tw, "%s\t\t\t\tD=%.4f\t%.3g\t%s\n", c.Quantity, c.Stat, c.P, mark)
			continue
		}
		if c.Bounded {
			fmt.Fprintf(tw, "%s\t%.6g\t%.4g – %.4g\t%.2g\t%+.2f\t%.3g\t%s\n", c.Quantity, c.PDE, c.Walker, c.Upper, c.StdErr, c.Z, c.P, mark)
			continue
		}
		fmt.Fprintf(tw, "%s\t%.6g\t%.6g\t%.2g\t%+.2f\t%.3g\t%s\n", c.Quantity, c.PDE, c.Walker, c.StdErr, c.Z, c.P, mark)
	}
	tw.Flush()
	for _, n := range cc.notes() {
		fmt.Fprintln(w, "note:", n)
	}
	fmt.Fprintf(w, "\nverdict: %s\n%s\n", cc.Report.Verdict, cc.Report.Explain)
	if len(cc.Fits) > 0 {
		fmt.Fprintln(w, "\nweights that best explain the walkers' departures (same total as the file's):")
		tw = tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
		fmt.Fprintln(tw, "node\tedge\tfile\tfitted\t± stderr")
		for _, f := range cc.fits() {
			fmt.Fprintf(tw, "%s\t%s\t%.4g\t%.4g\t%.2g\n", f.Node, f.Edge, f.File, f.Fitted, f.StdErr)
		}
		tw.Flush()
	}
}

// plot writes the survival and hitting-probability figures into dir (never
// over an input file) and says on stderr what it wrote.
func (cc *crossResult) plot(dir string, inputs []string, net *graphpde.Network, stderr io.Writer) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	var names []string
	var pde, walk, se []float64
	for v, nd := range net.Nodes {
		if nd.Law.Kind == vertex.Fixed {
			names = append(names, nd.ID)
			pde = append(pde, cc.exit.Hit[v])
			walk = append(walk, cc.walk.Hit[v].Mean)
			se = append(se, cc.walk.Hit[v].StdErr)
		}
	}
	path := filepath.Join(dir, "hits.svg")
	replaced, err := saveByName(path, inputs, func(tmp string) error {
		return compare.PlotHits(tmp, names, pde, walk, se)
	})
	if err != nil {
		return err
	}
	wrote(stderr, "crosscheck", path, replaced, "hitting probabilities, PDE and walkers")
	if !cc.LawCompared {
		return nil
	}
	times := crosscheck.ExitTimes(cc.walk)
	path = filepath.Join(dir, "survival.svg")
	sv := crosscheck.Survival{At: cc.exit.SurvivalAt}
	replaced, err = saveByName(path, inputs, func(tmp string) error {
		if err := compare.PlotSurvival(tmp, sv.Eval, times, cc.Level); err != nil {
			return err
		}
		if sv.Err != nil {
			return fmt.Errorf("survival plot: %w", sv.Err)
		}
		return nil
	})
	if err != nil {
		return err
	}
	wrote(stderr, "crosscheck", path, replaced, "survival function, PDE and walkers")
	return nil
}

// notes returns the comparison's notes and the reason no weight was fitted.
func (cc *crossResult) notes() []string {
	if cc.fitNote == "" {
		return cc.Notes
	}
	return append(slices.Clip(cc.Notes), cc.fitNote)
}

// fits returns the fitted weights as printed (null for a non-finite value).
func (cc *crossResult) fits() []weightFit {
	var out []weightFit
	for _, f := range cc.Fits {
		out = append(out, weightFit{Node: f.Node, Edge: f.Edge, File: num(f.File), Fitted: num(f.Fitted), StdErr: num(f.StdErr)})
	}
	return out
}

// drawCrosscheck draws the network coloured by its steady field (the value
// the walkers estimate) with the start point marked; a network with no
// steady field (a component with no fixed node, leak or decay) is drawn in
// grey.
func drawCrosscheck(ctx context.Context, path string, inputs []string, net *graphpde.Network, p graphpde.Point, from string, m graphpde.Method, stderr io.Writer) error {
	sol, err := interruptible(ctx, func() (*graphpde.Solution, error) {
		return graphpde.Solve(net, &graphpde.Settings{Method: m, Context: ctx})
	})
	title := net.Name
	if title == "" {
		title = inputs[0]
	}
	marks := []mark{{at: p, label: "start " + from}}
	var d *drawing
	if err != nil {
		if errors.Is(err, errInterrupted) {
			return err
		}
		d = &drawing{net: net, title: title + " (no steady field: " + err.Error() + ")", marks: marks, unit: "no field",
			value: func(int, float64) (float64, bool) { return 0, false },
			node:  func(int) (float64, bool) { return 0, false },
			show:  func(u float64) float64 { return u }}
	} else {
		d = fieldDrawing(net, sol, title, marks)
	}
	return writeDrawing(path, inputs, d, "crosscheck", stderr)
}

// releaseShift says how far the forward solution's release (the grid
// vertex nearest to the start, graphpde.ForwardDensity) lies from the
// walkers' start, when it does not coincide with it ("" otherwise).
func releaseShift(net *graphpde.Network, p graphpde.Point, cells int) string {
	if p.Edge < 0 {
		return ""
	}
	ed := &net.Edges[p.Edge]
	n := ed.Cells
	if n == 0 {
		n = cells
	}
	n = max(n, 2)
	h := ed.Length / float64(n)
	d := math.Abs(p.X - math.Round(p.X/h)*h)
	if d <= 1e-9*ed.Length {
		return ""
	}
	return fmt.Sprintf("the forward solution releases its tracer at the grid vertex nearest to the start, %.3g away from it on edge %q: choose --position-cells so that the start lies on a vertex", d, ed.ID)
}
