package main

import (
	"context"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"text/tabwriter"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/plotutil"
	"gonum.org/v1/plot/vg"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/vertex"
)

// defaultProbes is how many nodes evolve follows when no --probe is given.
const defaultProbes = 8

const evolveExamples = `  ramify evolve examples/gutter-heater.toml --until 7200 --every 600 --probe box --crossing 0.9
  ramify evolve examples/clock-spine.toml --until 2e-10 --probe latch-east --crossing 0.5 --json
  ramify evolve line.toml --until 2 --probe far --csv far.csv --plot far.svg
  ramify evolve examples/karst.toml --until 3000 --every 500 --forward --release well
  ramify evolve line.toml --until 1 --schedule drive.csv --steps
`

type evolveProbeOut struct {
	At       string `json:"at"`
	U        []num  `json:"u"`
	Steady   *num   `json:"steady,omitempty"`
	Crossing *num   `json:"crossing,omitempty"`
}

type evolveOut struct {
	Network        string           `json:"network"`
	Times          []num            `json:"times"`
	Probes         []evolveProbeOut `json:"probes"`
	Status         string           `json:"status"`
	Method         string           `json:"method"`
	Quantity       string           `json:"quantity"`
	CrossingLevel  *num             `json:"crossing_fraction,omitempty"`
	Tol            num              `json:"tol"`
	Steps          int              `json:"steps"`
	Rejected       int              `json:"rejected"`
	Factorizations int              `json:"factorizations"`
	Unknowns       int              `json:"unknowns"`
	ErrEstimate    num              `json:"max_error_estimate"`
	NewtonRetries  int              `json:"newton_retries,omitempty"`
	Notes          []string         `json:"notes,omitempty"`
	Seconds        float64          `json:"seconds"`
	Caution        string           `json:"caution,omitempty"`
}

func runEvolve(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("evolve", "evolve [flags] FILE --until T", evolveExamples, stderr)
	until := fs.Float64("until", 0, "final time T (required)")
	probes := fs.StringArray("probe", nil, "record the value at POINT (NODE or EDGE@X); repeatable (default: every node)")
	every := fs.Float64("every", 0, "output every DT (default: at every accepted step)")
	method := fs.String("method", "auto", "grid (TR-BDF2 on the finite-volume grid; auto is grid) or exact (Laplace inversion; constant coefficients)")
	cells := fs.Int("cells", 0, "grid cells per edge where the file sets none (0: 64)")
	tol := fs.Float64("tol", 1e-4, "tolerance of the local error per step, relative to |u| + the largest initial or fixed value")
	step := fs.Float64("step", 0, "fixed step size instead of adaptive steps")
	crossing := fs.Float64("crossing", 0, "report when each probe first covers this fraction of the way from its initial to its steady value (e.g. 0.5)")
	csvOut := fs.String("csv", "", "write the probe time series to this CSV file (t, then one column per probe)")
	snaps := fs.String("snapshots", "", "write the whole field at every output time to this CSV file (t, edge, x, u)")
	drawOut := fs.String("draw", "", "draw the network coloured by the field at up to 6 output times (one colour scale) into this SVG file")
	plotOut := fs.String("plot", "", "draw the probe curves into this SVG file")
	forward := fs.Bool("forward", false, "forward transport: where a tracer released into the network is (its concentration per unit capacity), instead of the field")
	release := fs.String("release", "", "with --forward: release a unit amount of tracer at POINT at t = 0 (default: the file's initial values as concentrations)")
	schedule := fs.String("schedule", "", "CSV file driving nodes in time: header t,NODE,…; each row the fixed value (fixed nodes) or injection (balance nodes) at that time")
	steps := fs.Bool("steps", false, "hold each schedule value until the next row (default: linear between rows)")
	asJSON := fs.Bool("json", false, "print one JSON object on standard output")
	file, code, ok := parseFlags(fs, args, stderr, true)
	if !ok {
		return code
	}
	if !(*until > 0) || math.IsInf(*until, 0) {
		return badFlag(stderr, "evolve", fmt.Errorf("--until %g: give a finite final time > 0 (for the steady state use 'ramify solve')", *until))
	}
	m, err := graphpde.ParseMethod(*method)
	if err != nil {
		return badFlag(stderr, "evolve", err)
	}
	if *cells < 0 {
		return badFlag(stderr, "evolve", fmt.Errorf("--cells %d: must be ≥ 0", *cells))
	}
	if !(*tol > 0) {
		return badFlag(stderr, "evolve", fmt.Errorf("--tol %g: must be > 0", *tol))
	}
	if *every < 0 || *step < 0 {
		return badFlag(stderr, "evolve", fmt.Errorf("--every and --step must be ≥ 0"))
	}
	if *release != "" && !*forward {
		return badFlag(stderr, "evolve", fmt.Errorf("--release needs --forward"))
	}
	if *forward && (m == graphpde.MethodExact || *crossing != 0) {
		return badFlag(stderr, "evolve", fmt.Errorf("--forward works with the grid method and without --crossing"))
	}
	if *crossing != 0 && !(*crossing > 0 && *crossing < 1) {
		return badFlag(stderr, "evolve", fmt.Errorf("--crossing %g: must be between 0 and 1", *crossing))
	}
	inputs := []string{file}
	if *schedule != "" {
		inputs = append(inputs, *schedule)
	}
	if err := checkOutputs(inputs, outTarget{flag: "--csv", path: *csvOut}, outTarget{flag: "--snapshots", path: *snaps}, outTarget{flag: "--plot", path: *plotOut}, outTarget{flag: "--draw", path: *drawOut}); err != nil {
		return badFlag(stderr, "evolve", err)
	}
	net, err := load(ctx, file)
	if err != nil {
		return fail(stderr, "evolve", err)
	}
	if err := controlRefusal(net, file, "evolve"); err != nil {
		return fail(stderr, "evolve", err)
	}
	if *schedule != "" {
		if err := applySchedule(net, *schedule, *steps); err != nil {
			return fail(stderr, "evolve", err)
		}
	}
	specs := *probes
	if len(specs) == 0 {
		// every node, or on a larger network its first balance nodes
		for _, nd := range net.Nodes {
			if len(net.Nodes) <= defaultProbes || nd.Law.Kind != vertex.Fixed {
				specs = append(specs, nd.ID)
			}
			if len(specs) == defaultProbes {
				break
			}
		}
		if len(specs) < len(net.Nodes) && !*asJSON {
			fmt.Fprintf(stderr, "ramify evolve: no --probe given: showing %s of %d nodes (name the points you want with --probe)\n", plural(len(specs), "node"), len(net.Nodes))
		}
	}
	pts, err := parsePoints(net, specs)
	if err != nil {
		return fail(stderr, "evolve", err)
	}
	set := &graphpde.EvolveSettings{Until: *until, Every: *every, Probes: pts, Fields: *snaps != "" || *drawOut != "", Method: m,
		Cells: *cells, Tol: *tol, Step: *step, Crossing: *crossing, Context: ctx, Forward: *forward}
	if *release != "" {
		p, err := net.ParsePoint(*release)
		if err != nil {
			return fail(stderr, "evolve", err)
		}
		set.Release = &p
	}
	var bar *progressBar
	if isTerminal(stderr) && !*asJSON {
		bar = newProgressBar(stderr, "time")
		bar.unit = "‰ of the run/s"
		set.Progress = func(t, T float64) { bar.Progress(int64(t/T*1000), 1000) }
	}
	r, err := interruptibleKeep(ctx, func() (*graphpde.EvolveResult, error) { return graphpde.Evolve(net, set) })
	if bar != nil {
		bar.Done()
	}
	if err != nil {
		return fail(stderr, "evolve", inFile(net, file, err))
	}
	if *csvOut != "" {
		replaced, err := saveFile(*csvOut, inputs, func(w io.Writer) error { return writeProbeCSV(w, specs, r) })
		if err != nil {
			return fail(stderr, "evolve", fmt.Errorf("--csv %s: %w", *csvOut, err))
		}
		wrote(stderr, "evolve", *csvOut, replaced, "probe values at every output time")
	}
	if *snaps != "" {
		replaced, err := saveFile(*snaps, inputs, func(w io.Writer) error { return writeSnapshots(w, net, r) })
		if err != nil {
			return fail(stderr, "evolve", fmt.Errorf("--snapshots %s: %w", *snaps, err))
		}
		wrote(stderr, "evolve", *snaps, replaced, "field snapshots")
	}
	if *drawOut != "" {
		title := net.Name
		if title == "" {
			title = file
		}
		replaced, err := saveFile(*drawOut, inputs, func(w io.Writer) error { return writeSheet(w, net, title, r.Snapshots) })
		if err != nil {
			return fail(stderr, "evolve", fmt.Errorf("--draw %s: %w", *drawOut, err))
		}
		wrote(stderr, "evolve", *drawOut, replaced, fmt.Sprintf("drawing at %s", plural(min(len(r.Snapshots), sheetPanels), "output time")))
	}
	if *plotOut != "" {
		replaced, err := saveFile(*plotOut, inputs, func(w io.Writer) error { return plotProbes(w, specs, r, *crossing) })
		if err != nil {
			return fail(stderr, "evolve", fmt.Errorf("--plot %s: %w", *plotOut, err))
		}
		wrote(stderr, "evolve", *plotOut, replaced, "probe curves")
	}
	out := evolveOut{Network: net.Name, Status: r.Status.String(), Method: "grid", Quantity: "field", Tol: num(*tol),
		Steps: r.Stats.Steps, Rejected: r.Stats.Rejected, Factorizations: r.Stats.Factorizations,
		Unknowns: r.Stats.Unknowns, ErrEstimate: num(r.Stats.ErrEstimate), Seconds: r.Stats.Time.Seconds(),
		NewtonRetries: r.Stats.NewtonRetries, Notes: r.Notes}
	if r.Status == graphpde.IterationLimit {
		// The stepper ends early with IterationLimit only when stopped
		// (Ctrl-C): say so, as spectrum does, not "iteration limit".
		out.Status = "interrupted"
		out.Notes = append(slices.Clip(out.Notes), fmt.Sprintf("interrupted (Ctrl-C) at t = %g: the output ends at the last output time reached", r.Times[len(r.Times)-1]))
	}
	if hazard(net) && !*forward { // a tracer's whereabouts feed no load or heating decision
		out.Caution = caution
	}
	if m == graphpde.MethodExact {
		out.Method = "exact"
	}
	if *forward {
		out.Quantity = "concentration"
	}
	if *crossing > 0 {
		c := num(*crossing)
		out.CrossingLevel = &c
	}
	for _, t := range r.Times {
		out.Times = append(out.Times, num(t))
	}
	for k, s := range specs {
		p := evolveProbeOut{At: s}
		for _, v := range r.Probes[k] {
			p.U = append(p.U, num(v))
		}
		if r.Crossing != nil {
			c, st := num(r.Crossing[k]), num(r.Steady[k])
			p.Crossing, p.Steady = &c, &st
		}
		out.Probes = append(out.Probes, p)
	}
	if *asJSON {
		if err := writeJSON(stdout, out); err != nil {
			return fail(stderr, "evolve", err)
		}
		return evolveExit(r)
	}
	printEvolve(stdout, net, specs, r, &out, *crossing)
	return evolveExit(r)
}

// evolveExit is the exit code of an evolve run that printed its result:
// interrupted, failed part way (a stage's Newton iteration at a fixed
// step), or 0.
func evolveExit(r *graphpde.EvolveResult) int {
	switch r.Status {
	case graphpde.IterationLimit:
		return exitInterrupted
	case graphpde.NotSolved:
		return 1
	}
	return 0
}

func printEvolve(w io.Writer, net *graphpde.Network, specs []string, r *graphpde.EvolveResult, out *evolveOut, crossing float64) {
	name := net.Name
	if name == "" {
		name = "(unnamed network)" // as solve and sweep say it
	}
	fmt.Fprintf(w, "%s: %s, %s; %s\n", name, plural(len(net.Nodes), "node"), plural(len(net.Edges), "edge"), out.Status)
	if out.Method == "exact" {
		fmt.Fprintf(w, "method exact: Laplace transform of the exact elements inverted on Talbot contours, %.3g s\n", r.Stats.Time.Seconds())
	} else {
		fmt.Fprintf(w, "method grid: TR-BDF2 on %s, %d steps (%d rejected, %s), %d factorisations, largest local error estimate %.2g of --tol %g (time stepping only: refine --cells to see the grid's error), %.3g s\n",
			plural(r.Stats.Unknowns, "unknown"), r.Stats.Steps, r.Stats.Rejected, stepRange(r), r.Stats.Factorizations, r.Stats.ErrEstimate, out.Tol, r.Stats.Time.Seconds())
	}
	if out.Quantity == "concentration" {
		fmt.Fprintln(w, "forward transport: tracer concentration per unit capacity (at a node: a·q/α, the value every edge end shares)")
	}
	if r.Status == graphpde.NotSolved {
		// (the run itself may have gone on past the last output time: the
		// note says where it stopped)
		fmt.Fprintf(w, "stopped early: the output ends at t = %g, the last output time reached\n", r.Times[len(r.Times)-1])
	}
	for _, n := range out.Notes {
		fmt.Fprintf(w, "note: %s\n", n)
	}
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprint(tw, "t")
	for _, s := range specs {
		fmt.Fprintf(tw, "\t%s", s)
	}
	fmt.Fprintln(tw)
	rows := rowsToShow(len(r.Times), tableRows/4)
	for _, i := range rows {
		if i < 0 {
			fmt.Fprintln(tw, "…")
			continue
		}
		fmt.Fprintf(tw, "%.6g", r.Times[i])
		for k := range specs {
			fmt.Fprintf(tw, "\t%.6g", r.Probes[k][i])
		}
		fmt.Fprintln(tw)
	}
	tw.Flush()
	if len(rows) < len(r.Times) {
		fmt.Fprintf(w, "(%d of %d output times shown; --csv or --json give all)\n", len(r.Times)-countNeg(rows), len(r.Times))
	}
	if r.Crossing != nil {
		fmt.Fprintln(w)
		fmt.Fprintf(w, "first time each probe covers %g of the way from its initial to its steady value:\n", crossing)
		tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "probe\tinitial\tsteady\tcrossing time")
		for k, s := range specs {
			c := "not reached by --until"
			if !math.IsNaN(r.Crossing[k]) {
				c = fmt.Sprintf("%.6g", r.Crossing[k])
			}
			st := fmt.Sprintf("%.6g", r.Steady[k])
			if math.IsNaN(r.Steady[k]) {
				st, c = "not reported", "not reported" // no steady state (a note says why)
			}
			fmt.Fprintf(tw, "%s\t%.6g\t%s\t%s\n", s, r.Probes[k][0], st, c)
		}
		tw.Flush()
	}
	if out.Caution != "" {
		fmt.Fprintln(w)
		fmt.Fprintln(w, caution)
	}
}

func stepRange(r *graphpde.EvolveResult) string {
	if r.Stats.Steps == 0 {
		return "no step"
	}
	return fmt.Sprintf("step %.3g to %.3g", r.Stats.MinStep, r.Stats.MaxStep)
}

// rowsToShow returns all of 0…n−1 when n ≤ limit, otherwise the first and
// last limit/2 with −1 for the gap.
func rowsToShow(n, limit int) []int {
	var out []int
	if n <= limit {
		for i := range n {
			out = append(out, i)
		}
		return out
	}
	for i := range limit / 2 {
		out = append(out, i)
	}
	out = append(out, -1)
	for i := n - limit/2; i < n; i++ {
		out = append(out, i)
	}
	return out
}

func countNeg(xs []int) int {
	c := 0
	for _, x := range xs {
		if x < 0 {
			c++
		}
	}
	return c
}

func fmtF(v float64) string { return strconv.FormatFloat(v, 'g', 10, 64) }

func writeProbeCSV(w io.Writer, specs []string, r *graphpde.EvolveResult) error {
	cw := csv.NewWriter(w)
	if err := cw.Write(append([]string{"t"}, specs...)); err != nil {
		return err
	}
	row := make([]string, len(specs)+1)
	for i, t := range r.Times {
		row[0] = fmtF(t)
		for k := range specs {
			row[k+1] = fmtF(r.Probes[k][i])
		}
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// writeSnapshots writes the t,edge,x,u rows of --snapshots, streamed
// (csvRows: the bytes encoding/csv with fmtF would write).
func writeSnapshots(w io.Writer, net *graphpde.Network, r *graphpde.EvolveResult) error {
	cw := newCSVRows(w)
	for _, h := range []string{"t", "edge", "x", "u"} {
		cw.str(h)
	}
	cw.end()
	for _, sn := range r.Snapshots {
		for e, vals := range sn.Edges {
			L := net.Edges[e].Length
			n := len(vals) - 1
			for i, v := range vals {
				cw.num(sn.T, 10)
				cw.str(net.Edges[e].ID)
				cw.num(L*float64(i)/float64(n), 10)
				cw.num(v, 10)
				cw.end()
			}
			if cw.err != nil {
				return cw.err
			}
		}
	}
	return cw.flush()
}

// plotProbes draws the probe curves (and the crossing times) as SVG.
func plotProbes(w io.Writer, specs []string, r *graphpde.EvolveResult, crossing float64) error {
	p := plot.New()
	p.Title.Text = "probe values in time"
	p.X.Label.Text = "t"
	p.Y.Label.Text = "u"
	p.Legend.Top = true
	for k, s := range specs {
		xy := make(plotter.XYs, len(r.Times))
		for i, t := range r.Times {
			xy[i] = plotter.XY{X: t, Y: r.Probes[k][i]}
		}
		l, err := plotter.NewLine(xy)
		if err != nil {
			return err
		}
		l.Color = plotutil.Color(k)
		l.Dashes = plotutil.Dashes(k)
		p.Add(l)
		p.Legend.Add(s, l)
		if r.Crossing != nil && !math.IsNaN(r.Crossing[k]) {
			lev := r.Probes[k][0] + crossing*(r.Steady[k]-r.Probes[k][0])
			sc, err := plotter.NewScatter(plotter.XYs{{X: r.Crossing[k], Y: lev}})
			if err != nil {
				return err
			}
			sc.Color = plotutil.Color(k)
			p.Add(sc)
		}
	}
	return compare.WriteSVG(w, p, 6*vg.Inch, 4*vg.Inch)
}
