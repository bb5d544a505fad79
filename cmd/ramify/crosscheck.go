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

	"gonum.org/v1/gonum/interp"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/vertex"
)

const crosscheckExamples = `  ramify crosscheck examples/fork.toml --from fork
  ramify crosscheck net.toml --from hub --particles 1000000 --plot figs --json
  ramify crosscheck net.toml --from hub --fit-weights
`

func runCrosscheck(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("crosscheck", "crosscheck [flags] FILE --from POINT", crosscheckExamples, stderr)
	wf := addWalkFlags(fs)
	level := fs.Float64("level", 0, "family-wise false-alarm level of the verdict (0: 0.01)")
	resolution := fs.Float64("resolution", 0, "smallest difference worth detecting: absolute for probabilities, relative otherwise (0: 0.02)")
	fit := fs.Bool("fit-weights", false, "estimate from the walkers the node weights that best explain them")
	occ := fs.Bool("occupation", false, "also compare the time spent on every edge")
	plot := fs.String("plot", "", "write SVG figures into this directory")
	method := fs.String("method", "auto", "PDE edge elements: exact, grid, or auto")
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
		outTarget{flag: "--plot", path: *plot, dir: true}); err != nil {
		return badFlag(stderr, "crosscheck", err)
	}
	net, err := load(ctx, file)
	if err != nil {
		return fail(stderr, "crosscheck", err)
	}
	p, err := net.ParsePoint(*wf.from)
	if err != nil {
		return fail(stderr, "crosscheck", err)
	}
	cc, err := crosscheck(ctx, net, p, *wf.from, m, set, cset, crossOptions{fit: *fit, occupation: *occ})
	if bar, ok := set.Recorder.(*progressBar); ok {
		bar.Done()
	}
	if err != nil {
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
	from   string
	walk   *montecarlo.Result
	exit   *graphpde.ExitStats
	report compare.Report
	fits   []weightFit
	notes  []string
	level  float64
	// lawCompared is set when the exit-time law was compared (and can be
	// drawn).
	lawCompared bool
}

// crossOptions selects the optional parts of a cross-check.
type crossOptions struct {
	fit        bool // estimate node weights from the walkers' departures
	occupation bool // compare edge occupation times too
}

// weightFit is the fitted weight of one edge end at a node.
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

// payoffScale is the magnitude against which the resolution of the value
// u(start) is read: the largest fixed value, or |u| itself if larger, so that
// a small probability-like value of payoffs in [0, 1] is judged on the
// payoffs' scale and not relative to its own size.
func payoffScale(net *graphpde.Network, u float64) float64 {
	s := math.Abs(u)
	for _, nd := range net.Nodes {
		if nd.Law.Kind == vertex.Fixed {
			s = math.Max(s, math.Abs(nd.Law.Value))
		}
	}
	return s
}

// splitComparable reports whether the walkers' departures from v follow the
// star rule w_e/Σw exactly, so that their frequencies can be compared with
// the weights: every edge at v is stepped exactly (constant coefficients, no
// drift) and all of them decay at one rate c/ρ (with different rates the
// departures at a finite star radius lean towards the arms that decay less).
func splitComparable(net *graphpde.Network, v int) bool {
	rate := math.NaN()
	for _, end := range net.Incident(v) {
		e := &net.Edges[end.Edge]
		if !e.Constant() || e.B != 0 {
			return false
		}
		k := e.C / e.Rho
		if !math.IsNaN(rate) && math.Abs(k-rate) > 1e-12*math.Max(k, rate) {
			return false
		}
		rate = k
	}
	return true
}

// starWeights returns the weights w_e = α_e·sqrt(ρ_e/a_e) of the ends at v
// (docs/walkers.md §3) and the scales sqrt(a_e/ρ_e) that turn them back into α.
func starWeights(net *graphpde.Network, v int) (w, scale, alpha []float64) {
	inc := net.Incident(v)
	w, scale, alpha = make([]float64, len(inc)), make([]float64, len(inc)), make([]float64, len(inc))
	for k, end := range inc {
		e := &net.Edges[end.Edge]
		x := 0.0
		if end.Side == 1 {
			x = e.Length
		}
		a, _, _, _, rho := e.Coeffs(x)
		alpha[k] = e.EndWeight(end.Side)
		scale[k] = math.Sqrt(a / rho)
		w[k] = alpha[k] / scale[k]
	}
	return w, scale, alpha
}

func crosscheck(ctx context.Context, net *graphpde.Network, p graphpde.Point, from string, m graphpde.Method,
	wset *montecarlo.Settings, cset *compare.Settings, opt crossOptions) (*crossResult, error) {
	x, err := interruptible(ctx, func() (*graphpde.ExitStats, error) {
		return graphpde.ExitStatistics(net, p, &graphpde.ExitSettings{Method: m})
	})
	if err != nil {
		return nil, err
	}
	// The steady solve comes before the walkers: once they are interrupted,
	// the command only compares and prints.
	var sol *graphpde.Solution
	var solErr error
	if hasPayoff(net) {
		sol, solErr = interruptible(ctx, func() (*graphpde.Solution, error) {
			return graphpde.Solve(net, &graphpde.Settings{Method: m})
		})
		if errors.Is(solErr, errInterrupted) {
			return nil, solErr
		}
	}
	res, err := montecarlo.Run(ctx, net, p, wset)
	if err != nil {
		return nil, err
	}
	cc := &crossResult{from: from, walk: res, exit: x, level: cset.Level}
	if cc.level == 0 {
		cc.level = 0.01
	}
	var checks []compare.Check
	if hasPayoff(net) {
		var floating *graphpde.UnanchoredError
		switch {
		case errors.As(solErr, &floating):
			// Another component floats: the steady problem as a whole has
			// no unique solution, though the walkers' value from this start
			// is well defined. Say so rather than fail the whole check.
			cc.notes = append(cc.notes, "value not compared: "+solErr.Error())
		case solErr != nil:
			return nil, solErr
		default:
			u, err := sol.At(p)
			if err != nil {
				return nil, err
			}
			c := compare.Mean("value", u, res.Value.Mean, res.Value.StdErr)
			c.Scale = payoffScale(net, c.PDE)
			checks = append(checks, c)
		}
	}
	// Probabilities of where walkers end, as proportions of all finished
	// walkers (censored ones included: they ended nowhere).
	count := func(e montecarlo.Estimate) int64 { return int64(math.Round(e.Mean * float64(res.Finished))) }
	for v, nd := range net.Nodes {
		if nd.Law.Kind == vertex.Fixed {
			checks = append(checks, compare.Proportion("hit:"+nd.ID, x.Hit[v], count(res.Hit[v]), res.Finished))
		}
	}
	if x.Killed > 1e-9 || res.Killed.Mean > 0 {
		checks = append(checks, compare.Proportion("killed", x.Killed, count(res.Killed), res.Finished))
	}
	if res.Censored == 0 {
		checks = append(checks, compare.Mean("exit-time:mean", x.Mean, res.ExitTime.Mean, res.ExitTime.StdErr))
	} else {
		cc.notes = append(cc.notes, fmt.Sprintf("%d walkers were still out at the time cap %g: the mean exit time of the others is biased and is not compared; the distribution check accounts for them", res.Censored, res.TimeCap))
	}
	atFixed := p.Edge < 0 && net.Nodes[p.Node].Law.Kind == vertex.Fixed
	switch {
	case atFixed:
		cc.notes = append(cc.notes, "the start is a fixed node: every walker is absorbed at once, so the exit-time law is a point mass at 0 and is not compared")
	case x.HasDistribution:
		cc.lawCompared = true
		times := exitTimes(res)
		sv := survivalFunc{at: x.SurvivalAt}
		ch := compare.Distribution("exit-time:distribution", times, res.TimeCap, int(res.Censored), survivalTable(sv.eval, times))
		if sv.err != nil {
			return nil, fmt.Errorf("exit-time law from the PDE: %w", sv.err)
		}
		checks = append(checks, ch)
	default:
		cc.notes = append(cc.notes, "the exit-time distribution is not available from the PDE for this network; it is not compared")
	}
	for e := range net.Edges {
		if e < len(res.Occupation) && e < len(x.Occupation) && res.Censored == 0 && opt.occupation {
			checks = append(checks, compare.Mean("occupation:"+net.Edges[e].ID, x.Occupation[e], res.Occupation[e].Mean, res.Occupation[e].StdErr))
		}
	}
	// Split frequencies are compared at junctions with enough departures to
	// resolve the resolution: a binomial frequency near ½ has standard error
	// 0.5/sqrt(n), and 4 of them must fit within it. Rarely visited
	// junctions would only make the verdict inconclusive; they are counted
	// in a note (their effect still shows in the hitting probabilities).
	res2 := compare.DefaultResolution
	if cset.Resolution != 0 {
		res2 = cset.Resolution
	}
	minDepartures := int64(math.Ceil(4 * 0.5 / res2 * 4 * 0.5 / res2))
	sparse := 0
	for v, nd := range net.Nodes {
		if nd.Law.Kind != vertex.Balance || v >= len(res.Departures) || res.Departures[v] == nil || len(net.Incident(v)) < 2 || !splitComparable(net, v) {
			continue
		}
		var departed int64
		for _, d := range res.Departures[v] {
			departed += d
		}
		enough := departed >= minDepartures
		if !enough {
			sparse++
			if !opt.fit {
				continue
			}
		}
		w, scale, alpha := starWeights(net, v)
		var sw float64
		for _, x := range w {
			sw += x
		}
		implied := make([]float64, len(w))
		ends := make([]string, len(w))
		for k, end := range net.Incident(v) {
			implied[k] = w[k] / sw
			ends[k] = net.Edges[end.Edge].ID
			if net.Edges[end.Edge].From == net.Edges[end.Edge].To {
				ends[k] += [2]string{"(from end)", "(to end)"}[end.Side]
			}
		}
		if enough {
			checks = append(checks, compare.SplitChecks(nd.ID, ends, res.Departures[v], implied)...)
		}
		if opt.fit {
			var total float64
			for _, a := range alpha {
				total += a
			}
			fw, fse := compare.FitWeights(res.Departures[v], scale, total)
			for k := range fw {
				cc.fits = append(cc.fits, weightFit{Node: nd.ID, Edge: ends[k], File: num(alpha[k]), Fitted: num(fw[k]), StdErr: num(fse[k])})
			}
		}
	}
	if sparse > 0 {
		cc.notes = append(cc.notes, fmt.Sprintf("split frequencies not compared at %d junctions that walkers left fewer than %d times", sparse, minDepartures))
	}
	cc.report = compare.Decide(checks, cset)
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
}

func (cc *crossResult) json() crossOut {
	return crossOut{Start: cc.from, Particles: cc.walk.Particles, Finished: cc.walk.Finished, Partial: cc.walk.Status == montecarlo.Cancelled,
		Seed: cc.walk.Seed, Checks: cc.report.Checks, Verdict: string(cc.report.Verdict), Explanation: cc.report.Explain,
		Notes: cc.notes, Weights: cc.fits}
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
	for _, c := range cc.report.Checks {
		mark := "ok"
		if !c.Pass {
			mark = "DIFFERS"
		}
		if c.Kind == compare.KindLaw {
			fmt.Fprintf(tw, "%s\t\t\t\tD=%.4f\t%.3g\t%s\n", c.Quantity, c.Stat, c.P, mark)
			continue
		}
		fmt.Fprintf(tw, "%s\t%.6g\t%.6g\t%.2g\t%+.2f\t%.3g\t%s\n", c.Quantity, c.PDE, c.Walker, c.StdErr, c.Z, c.P, mark)
	}
	tw.Flush()
	for _, n := range cc.notes {
		fmt.Fprintln(w, "note:", n)
	}
	fmt.Fprintf(w, "\nverdict: %s\n%s\n", cc.report.Verdict, cc.report.Explain)
	if len(cc.fits) > 0 {
		fmt.Fprintln(w, "\nweights that best explain the walkers' departures (same total as the file's):")
		tw = tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
		fmt.Fprintln(tw, "node\tedge\tfile\tfitted\t± stderr")
		for _, f := range cc.fits {
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
	if !cc.lawCompared {
		return nil
	}
	times := exitTimes(cc.walk)
	path = filepath.Join(dir, "survival.svg")
	sv := survivalFunc{at: cc.exit.SurvivalAt}
	replaced, err = saveByName(path, inputs, func(tmp string) error {
		if err := compare.PlotSurvival(tmp, sv.eval, times, cc.level); err != nil {
			return err
		}
		if sv.err != nil {
			return fmt.Errorf("survival plot: %w", sv.err)
		}
		return nil
	})
	if err != nil {
		return err
	}
	wrote(stderr, "crosscheck", path, replaced, "survival function, PDE and walkers")
	return nil
}

// survivalFunc adapts ExitStats.SurvivalAt to the plain functions of
// package compare: eval returns 0 after a failure and keeps the first error
// in err, which the caller must check before using what eval fed.
type survivalFunc struct {
	at  func(float64) (float64, error)
	err error
}

func (s *survivalFunc) eval(t float64) float64 {
	if s.err != nil {
		return 0
	}
	v, err := s.at(t)
	if err != nil {
		s.err = err
		return 0
	}
	return v
}

// exitTimes returns the exit times of the walkers that were absorbed or
// killed (censored walkers excluded).
func exitTimes(r *montecarlo.Result) []float64 {
	times := make([]float64, 0, len(r.Samples))
	for _, s := range r.Samples {
		if s.Node >= -1 {
			times = append(times, s.Time)
		}
	}
	return times
}

// survivalTable returns a monotone cubic interpolant of the survival function
// s on knots that follow the walkers' exit times (1024 quantiles of the
// sample plus 256 equispaced points), so that a KS test over 10⁶ sample
// points costs about 1300 Laplace inversions instead of one per point. Between
// knots the law changes by at most about 1/1024 in probability, where a cubic
// interpolant of a smooth function errs by far less than the statistical
// resolution 1/sqrt(n). Beyond the last knot s itself is called.
func survivalTable(s func(float64) float64, times []float64) func(float64) float64 {
	if len(times) < 64 {
		return s
	}
	sorted := slices.Clone(times)
	slices.Sort(sorted)
	tmax := sorted[len(sorted)-1]
	if !(tmax > 0) {
		return s
	}
	knots := []float64{0}
	for i := 1; i <= 256; i++ {
		knots = append(knots, tmax*float64(i)/256)
	}
	for i := 1; i < 1024; i++ {
		knots = append(knots, sorted[i*(len(sorted)-1)/1024])
	}
	slices.Sort(knots)
	knots = slices.CompactFunc(knots, func(a, b float64) bool { return math.Abs(b-a) <= 1e-12*tmax })
	vals := make([]float64, len(knots))
	for i, t := range knots {
		vals[i] = s(t)
	}
	var f interp.FritschButland
	if err := f.Fit(knots, vals); err != nil {
		return s
	}
	return func(t float64) float64 {
		if t < 0 || t > tmax {
			return s(t)
		}
		return f.Predict(t)
	}
}
