package main

import (
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"text/tabwriter"

	"github.com/spf13/pflag"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/crosscheck"
)

const walkExamples = `  ramify walk examples/fork.toml --from fork
  ramify walk net.toml --from arm1@0.25 --particles 1000000 --seed 7 --json
  ramify walk net.toml --from hub --samples exits.csv --time-cap 50
  ramify walk net.toml --from hub --particles 1e8 --shard 3/16 --json > part3.json
`

// walkFlags are the walker flags shared by walk and crosscheck.
type walkFlags struct {
	from      *string
	particles *int64
	seed      *uint64
	workers   *int
	timeCap   *float64
	step      *float64
	star      *float64
	samples   *string
	biasPass  *bool
}

func addWalkFlags(fs *pflag.FlagSet) *walkFlags {
	return &walkFlags{
		from:      fs.String("from", "", "start point of the walkers: NODE or EDGE@X (required)"),
		particles: newCount(fs, "particles", 100000, "number of walkers (1e6 works too)"),
		seed:      fs.Uint64("seed", 1, "random seed; the same seed gives the same numbers for any --workers"),
		workers:   fs.Int("workers", 0, "parallel workers (0: all cores)"),
		timeCap:   fs.Float64("time-cap", 0, "time after which a walker still out is reported as censored (0: automatic, 50 mean exit times of the PDE + 10 sd, at most 1000 RC times of the network)"),
		step:      fs.Float64("step", 0, "time step on edges that need time stepping (0: automatic)"),
		star:      fs.Float64("star-fraction", 0, "star radius, as a fraction of the free radius, at nodes next to edges whose coefficients vary along them or that decay at different rates (0: 1/8)"),
		samples:   fs.String("samples", "", "write every walker's exit time and exit node to this CSV file"),
		biasPass:  fs.Bool("bias-pass", true, "where walkers time-step an edge or freeze a node visit, run them again with the same seed at half the step and/or star fraction to estimate the bias (false: skip it; at half the step it costs about twice the first run)"),
	}
}

func (f *walkFlags) settings(stderr io.Writer) (*montecarlo.Settings, error) {
	if *f.particles <= 0 {
		return nil, fmt.Errorf("--particles %d: must be > 0", *f.particles)
	}
	if t := *f.timeCap; !(t >= 0) || math.IsInf(t, 1) {
		return nil, fmt.Errorf("--time-cap %g: must be a finite time ≥ 0 (0: automatic)", t)
	}
	if t := *f.step; !(t >= 0) || math.IsInf(t, 1) {
		return nil, fmt.Errorf("--step %g: must be a finite time ≥ 0 (0: automatic)", t)
	}
	if s := *f.star; !(s >= 0 && s <= 1) {
		return nil, fmt.Errorf("--star-fraction %g: must lie in (0, 1] (0: 1/8)", s)
	}
	if *f.workers < 0 {
		return nil, fmt.Errorf("--workers %d: must be ≥ 0", *f.workers)
	}
	set := &montecarlo.Settings{
		Particles:    *f.particles,
		Seed:         *f.seed,
		Workers:      *f.workers,
		TimeCap:      *f.timeCap,
		Step:         *f.step,
		StarFraction: *f.star,
		KeepSamples:  *f.samples != "",
	}
	if isTerminal(stderr) {
		set.Recorder = newProgressBar(stderr, "walkers")
	}
	return set, nil
}

func runWalk(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("walk", "walk [flags] FILE --from POINT", walkExamples, stderr)
	wf := addWalkFlags(fs)
	policyFile := fs.String("policy", "", "controlled networks: follow the policy in this JSON file (the shape of solve's \"policy\"; default: the optimal policy)")
	asJSON := fs.Bool("json", false, "print one JSON object on standard output")
	shardFlag := fs.String("shard", "", "run only part I of N of the walkers (I/N, I from 1) and print the part, with --json, for 'ramify merge'")
	file, code, ok := parseFlags(fs, args, stderr, true)
	if !ok {
		return code
	}
	var shard montecarlo.Shard
	if *shardFlag != "" {
		var err error
		if shard, err = parseShard(*shardFlag); err != nil {
			return badFlag(stderr, "walk", err)
		}
		if !*asJSON {
			return badFlag(stderr, "walk", fmt.Errorf("--shard %s needs --json: a part is a JSON document for 'ramify merge'", *shardFlag))
		}
	}
	if *wf.from == "" {
		return badFlag(stderr, "walk", fmt.Errorf("--from POINT is required (NODE or EDGE@X)"))
	}
	set, err := wf.settings(stderr)
	if err != nil {
		return badFlag(stderr, "walk", err)
	}
	if err := checkOutputs([]string{file}, outTarget{flag: "--samples", path: *wf.samples}); err != nil {
		return badFlag(stderr, "walk", err)
	}
	net, err := load(ctx, file)
	if err != nil {
		return fail(stderr, "walk", err)
	}
	var ctlNotes []string
	if graphpde.Controlled(net) {
		if net, _, ctlNotes, err = followPolicy(ctx, net, *policyFile); err != nil {
			return fail(stderr, "walk", err)
		}
	} else if *policyFile != "" {
		return badFlag(stderr, "walk", fmt.Errorf("--policy: %s has no controls", file))
	}
	if err := nonlinearRefusal(net, file, "walkers have no law of their own there (their rules would depend on the unknown field)"); err != nil {
		return fail(stderr, "walk", err)
	}
	p, err := net.ParsePoint(*wf.from)
	if err != nil {
		return fail(stderr, "walk", err)
	}
	notes := ctlNotes
	if set.TimeCap == 0 {
		x, xerr := interruptible(ctx, func() (*graphpde.ExitStats, error) {
			return graphpde.ExitStatistics(net, p, &graphpde.ExitSettings{Quantiles: []float64{}, Context: ctx})
		})
		if errors.Is(xerr, errInterrupted) {
			return fail(stderr, "walk", xerr)
		}
		tcap, note, err := autoTimeCap(net, x, xerr)
		if err != nil {
			return fail(stderr, "walk", err)
		}
		set.TimeCap = tcap
		if note != "" {
			notes = append(notes, note)
		}
	}
	set.Shard = shard
	set.KeepBlocks = *wf.biasPass && shard.Count == 0 // pairs the bias pass with this run
	res, err := montecarlo.Run(ctx, net, p, set)
	if bar, ok := set.Recorder.(*progressBar); ok {
		bar.Done()
	}
	if err != nil {
		return fail(stderr, "walk", walkError(err, "--samples keeps"))
	}
	if *wf.samples != "" {
		if err := writeSamples(*wf.samples, file, net, res, stderr, "walk"); err != nil {
			return fail(stderr, "walk", err)
		}
	}
	if res.Status == montecarlo.Cancelled {
		fmt.Fprintf(stderr, "ramify walk: interrupted: estimates from the %d walkers that finished (of %d)\n", res.Finished, res.Particles)
	}
	var bias *biasOut
	biasCut := false
	if ctlNotes != nil {
		notes = append(notes, frozenNotes(net, res.Frozen)...)
	}
	if *wf.biasPass && shard.Count == 0 {
		bias, _, err = walkBias(ctx, net, p, *set, res)
		switch {
		case errors.Is(err, errInterrupted):
			biasCut = true
			notes = append(notes, "the second run that estimates the bias of the approximate steps was interrupted: no bias estimate")
		case err != nil:
			return fail(stderr, "walk", walkError(err, ""))
		}
	}
	if *asJSON {
		out := walkJSON(viewOf(net), *wf.from, res, notes)
		out.BiasEstimate = bias
		if res.Part != nil {
			if out.Shard, err = shardJSON(file, net, wf, res); err != nil {
				return fail(stderr, "walk", err)
			}
		}
		if err := writeJSON(stdout, out); err != nil {
			return fail(stderr, "walk", err)
		}
	} else {
		printWalk(stdout, viewOf(net), *wf.from, res, notes)
		if bias != nil {
			fmt.Fprintln(stdout, "note:", biasLine(bias))
		}
	}
	return partialCode(res.Status == montecarlo.Cancelled || biasCut)
}

// exitInterrupted is the exit status of a run stopped by Ctrl-C after it
// printed the estimates of the walkers that finished (128 + SIGINT, as
// shells report an interrupted program).
const exitInterrupted = 130

// partialCode returns the exit status of a run that printed its results:
// 0, or exitInterrupted when they are partial.
func partialCode(partial bool) int {
	if partial {
		return exitInterrupted
	}
	return 0
}

type estOut struct {
	Mean   num `json:"mean"`
	StdErr num `json:"stderr"`
}

// valueOut is the value u(start). With censored walkers Mean is null unless
// the censoring is negligible, Lower and Upper bound u (null when sources
// make the payoff unbounded), and ByCap is what the walkers collected by
// the time cap.
type valueOut struct {
	Mean   num     `json:"mean"`
	StdErr num     `json:"stderr"`
	Lower  *num    `json:"lower,omitempty"`
	Upper  *num    `json:"upper,omitempty"`
	ByCap  *estOut `json:"by_cap,omitempty"`
}

// probOut is a probability. With censored walkers P is null unless the
// censoring is negligible, and [Lower, Upper] holds it.
type probOut struct {
	P      num  `json:"p"`
	StdErr num  `json:"stderr"`
	Lower  *num `json:"lower,omitempty"`
	Upper  *num `json:"upper,omitempty"`
}

// timeOut is the lifetime τ. With censored walkers Mean, StdErr and SD are
// null (E τ is not estimated), AtLeast = E min(τ, cap) bounds E τ from
// below, GivenExit holds the moments of τ given τ ≤ cap, and a quantile
// beyond the cap is null.
type timeOut struct {
	Mean      num            `json:"mean"`
	StdErr    num            `json:"stderr"`
	SD        num            `json:"sd"`
	Quantiles map[string]num `json:"quantiles"`
	AtLeast   *num           `json:"at_least,omitempty"`
	GivenExit *givenExitOut  `json:"given_exit,omitempty"`
}

type givenExitOut struct {
	Mean   num `json:"mean"`
	StdErr num `json:"stderr"`
	SD     num `json:"sd"`
}

type exitOut struct {
	Time             timeOut            `json:"time"`
	Hit              map[string]probOut `json:"hit"`
	Killed           probOut            `json:"killed"`
	Censored         int64              `json:"censored"`
	CensoredFraction num                `json:"censored_fraction"`
	TimeCap          num                `json:"time_cap"`
}

type walkOut struct {
	Particles  int64             `json:"particles"`
	Finished   int64             `json:"finished"`
	Partial    bool              `json:"partial"`
	Seed       uint64            `json:"seed"`
	Start      string            `json:"start"`
	Value      valueOut          `json:"value"`
	Exit       exitOut           `json:"exit"`
	Occupation map[string]estOut `json:"occupation"`
	Steps      int64             `json:"steps"`
	Seconds    float64           `json:"seconds"`
	Notes      []string          `json:"notes,omitempty"`
	// Shard is what 'ramify merge' needs of a part of a sharded run.
	Shard *shardOut `json:"shard,omitempty"`
	// BiasEstimate is the bias of the value from frozen node visits on a
	// controlled network (absent where every visit is exact).
	BiasEstimate *biasOut `json:"bias_estimate,omitempty"`
}

// walkView is what the walk's output needs of the network: node and edge
// ids, the fixed nodes, and the range of payoffs that bounds the value when
// walkers are censored. It is built from the network, or carried by the
// parts of a sharded run to the merge.
type walkView struct {
	nodes, edges []string
	fixed        []int // indices of the fixed nodes
	payLo, payHi float64
	payOK        bool
}

func viewOf(net *graphpde.Network) *walkView {
	v := &walkView{fixed: fixedNodes(net)}
	for _, nd := range net.Nodes {
		v.nodes = append(v.nodes, nd.ID)
	}
	for _, ed := range net.Edges {
		v.edges = append(v.edges, ed.ID)
	}
	v.payLo, v.payHi, v.payOK = crosscheck.PayoffRange(net)
	return v
}

// valueBounds bounds the value u(start) of a run with censored walkers, as
// crosscheck.ValueBounds does from the network.
func (v *walkView) valueBounds(r *montecarlo.Result) (lo, hi float64, ok bool) {
	if !v.payOK {
		return math.NaN(), math.NaN(), false
	}
	q := r.CensoredFraction()
	return r.Value.Mean + q*v.payLo, r.Value.Mean + q*v.payHi, true
}

func quantKey(p float64) string { return strconv.FormatFloat(p, 'g', -1, 64) }

func numPtr(x float64) *num { n := num(x); return &n }

// nothing is the JSON null of an estimate that is not made.
var nothing = num(math.NaN())

func walkJSON(net *walkView, from string, r *montecarlo.Result, notes []string) walkOut {
	q := r.CensoredFraction()
	out := walkOut{
		Particles: r.Particles, Finished: r.Finished, Partial: r.Status == montecarlo.Cancelled, Seed: r.Seed, Start: from,
		Value: valueOut{Mean: num(r.Value.Mean), StdErr: num(r.Value.StdErr)},
		Exit: exitOut{
			Time: timeOut{Mean: num(r.ExitTime.Mean), StdErr: num(r.ExitTime.StdErr), SD: num(r.ExitSD),
				Quantiles: map[string]num{}},
			Hit:              map[string]probOut{},
			Killed:           probOut{P: num(r.Killed.Mean), StdErr: num(r.Killed.StdErr)},
			Censored:         r.Censored,
			CensoredFraction: num(q),
			TimeCap:          num(r.TimeCap),
		},
		Occupation: map[string]estOut{},
		Steps:      r.Stats.Steps,
		Seconds:    r.Stats.Elapsed.Seconds(),
		Notes:      notes,
	}
	if r.Finished == 0 {
		nan := nothing
		out.Value = valueOut{Mean: nan, StdErr: nan}
		out.Exit.Time = timeOut{Mean: nan, StdErr: nan, SD: nan, Quantiles: map[string]num{}}
		out.Exit.Killed = probOut{P: nan, StdErr: nan}
		out.Exit.CensoredFraction = nan
	}
	for _, qt := range r.Quantiles {
		out.Exit.Time.Quantiles[quantKey(qt.P)] = num(qt.T)
	}
	bound := func(e montecarlo.Estimate) probOut {
		o := probOut{P: num(e.Mean), StdErr: num(e.StdErr)}
		if r.Finished == 0 {
			return probOut{P: nothing, StdErr: nothing}
		}
		if r.Censored > 0 {
			o.Lower, o.Upper = numPtr(e.Mean), numPtr(math.Min(1, e.Mean+q))
			if !negligible(q, 1, e.StdErr) {
				o.P = nothing
			}
		}
		return o
	}
	if r.Censored > 0 && r.Finished > 0 {
		lo, hi, ok := net.valueBounds(r)
		v := &out.Value
		v.ByCap = &estOut{num(r.Value.Mean), num(r.Value.StdErr)}
		if ok {
			v.Lower, v.Upper = numPtr(lo), numPtr(hi)
		}
		if !ok || !negligible(1, hi-lo, r.Value.StdErr) {
			v.Mean, v.StdErr = nothing, nothing
		}
		tm := &out.Exit.Time
		tm.GivenExit = &givenExitOut{Mean: tm.Mean, StdErr: tm.StdErr, SD: tm.SD}
		tm.AtLeast = numPtr((1-q)*r.ExitTime.Mean + q*r.TimeCap)
		tm.Mean, tm.StdErr, tm.SD = nothing, nothing, nothing
		out.Exit.Killed = bound(r.Killed)
	}
	for _, v := range net.fixed {
		out.Exit.Hit[net.nodes[v]] = bound(r.Hit[v])
	}
	for e, id := range net.edges {
		if e < len(r.Occupation) {
			out.Occupation[id] = estOut{num(r.Occupation[e].Mean), num(r.Occupation[e].StdErr)}
		}
	}
	return out
}

func printWalk(w io.Writer, net *walkView, from string, r *montecarlo.Result, notes []string) {
	mode := "exact stepping"
	if !r.Stats.Exact {
		mode = "time stepping on some edges"
	}
	fmt.Fprintf(w, "%d walkers from %s (seed %d, %s), %d steps in %.3g s\n", r.Finished, from, r.Seed, mode, r.Stats.Steps, r.Stats.Elapsed.Seconds())
	if r.Status == montecarlo.Cancelled {
		fmt.Fprintf(w, "PARTIAL: interrupted after %d of %d walkers\n", r.Finished, r.Particles)
	}
	if r.Finished == 0 {
		fmt.Fprintln(w, "\nno walker finished: there are no estimates")
		return
	}
	q := r.CensoredFraction()
	fmt.Fprintf(w, "time cap %.4g", r.TimeCap)
	if r.Censored > 0 {
		fmt.Fprintf(w, ": %d walkers (%.3g%%) still out at the cap. The value and the hitting\n", r.Censored, 100*q)
		fmt.Fprintln(w, "probabilities are only bounded, and exit-time figures are for the walkers that exited.")
	} else {
		fmt.Fprintln(w, ": every walker ended before it")
	}
	for _, n := range notes {
		fmt.Fprintln(w, "note:", n)
	}
	if r.Censored == 0 {
		fmt.Fprintf(w, "\nvalue u(%s) = %.6g ± %.2g\n", from, r.Value.Mean, r.Value.StdErr)
		fmt.Fprintf(w, "exit time    = %.6g ± %.2g (sd %.4g)\n", r.ExitTime.Mean, r.ExitTime.StdErr, r.ExitSD)
	} else {
		if lo, hi, ok := net.valueBounds(r); ok {
			fmt.Fprintf(w, "\nvalue u(%s) in [%.6g, %.6g] ± %.2g (collected by the cap: %.6g)\n", from, lo, hi, r.Value.StdErr, r.Value.Mean)
		} else {
			fmt.Fprintf(w, "\nvalue u(%s): not estimated (sources keep paying walkers still out); collected by the cap %.6g ± %.2g\n", from, r.Value.Mean, r.Value.StdErr)
		}
		fmt.Fprintf(w, "exit time    ≥ %.6g; of the walkers that exited: %.6g ± %.2g (sd %.4g)\n", (1-q)*r.ExitTime.Mean+q*r.TimeCap, r.ExitTime.Mean, r.ExitTime.StdErr, r.ExitSD)
	}
	if len(r.Quantiles) > 0 {
		fmt.Fprint(w, "quantiles   ")
		for _, qt := range r.Quantiles {
			if math.IsNaN(qt.T) {
				fmt.Fprintf(w, "  %g: beyond the cap", qt.P)
				continue
			}
			fmt.Fprintf(w, "  %g: %.4g", qt.P, qt.T)
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	prob := func(e montecarlo.Estimate) string {
		if r.Censored == 0 {
			return fmtProb(e.Mean)
		}
		return fmtProb(e.Mean) + " – " + fmtProb(math.Min(1, e.Mean+q))
	}
	fmt.Fprintln(tw, "exit at\tprobability\t± stderr")
	rows, rest := shownRows(net.fixed, func(v int) float64 { return r.Hit[v].Mean })
	for _, v := range rows {
		fmt.Fprintf(tw, "%s\t%s\t%s\n", net.nodes[v], prob(r.Hit[v]), fmtErr(r.Hit[v].StdErr))
	}
	if n := len(net.fixed) - len(rows); n > 0 {
		fmt.Fprintf(tw, "(%d more fixed nodes)\t%s\t\n", n, fmtProb(rest))
	}
	if r.Killed.Mean > 0 {
		fmt.Fprintf(tw, "(killed by decay or leak)\t%s\t%s\n", prob(r.Killed), fmtErr(r.Killed.StdErr))
	}
	if r.Censored > 0 {
		fmt.Fprintf(tw, "(still out at the cap)\t%s\t\n", fmtProb(q))
	}
	tw.Flush()
	fmt.Fprintln(w, "(± one standard error)")
}

// writeSamples writes every walker's exit time and fate to path (never over
// the input file), and says on stderr what it wrote.
func writeSamples(path, input string, net *graphpde.Network, r *montecarlo.Result, stderr io.Writer, cmd string) error {
	replaced, err := saveFile(path, []string{input}, func(w io.Writer) error {
		cw := csv.NewWriter(w)
		cw.Write([]string{"time", "exit"})
		for _, s := range r.Samples {
			var at string
			switch {
			case s.Node >= 0:
				at = net.Nodes[s.Node].ID
			case s.Node == montecarlo.Killed:
				at = "killed"
			default:
				at = "censored"
			}
			cw.Write([]string{strconv.FormatFloat(s.Time, 'g', 12, 64), at})
		}
		cw.Flush()
		return cw.Error()
	})
	if err != nil {
		return fmt.Errorf("--samples %s: %w", path, err)
	}
	wrote(stderr, cmd, path, replaced, fmt.Sprintf("exit time and fate of %d walkers", len(r.Samples)))
	return nil
}

// walkError rewrites the walker errors whose advice names library fields
// into command-line terms; keeps names what holds the samples ("--samples
// keeps", or "the exit-time comparison keeps").
func walkError(err error, keeps string) error {
	var ce *montecarlo.CensoredError
	if errors.As(err, &ce) {
		return fmt.Errorf("all %d walkers were still out at the time cap %.4g: nothing ends them where they walk (no fixed node, leak or decay), or --time-cap is too short", ce.Finished, ce.TimeCap)
	}
	var me *montecarlo.MemoryError
	if errors.As(err, &me) {
		return fmt.Errorf("%s 16 bytes per walker: %d walkers need %s, above the limit of %s; lower --particles",
			keeps, me.Particles, byteSize(16*float64(me.Particles)), byteSize(float64(me.Limit)))
	}
	return err
}

// byteSize formats a byte count with a binary unit.
func byteSize(b float64) string {
	units := []string{"bytes", "KiB", "MiB", "GiB", "TiB", "PiB", "EiB"}
	i := 0
	for b >= 1024 && i < len(units)-1 {
		b /= 1024
		i++
	}
	if i == 0 {
		return fmt.Sprintf("%.0f bytes", b)
	}
	return fmt.Sprintf("%.3g %s", b, units[i])
}
