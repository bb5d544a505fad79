package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/ramify-dev/ramify/graphpde"
)

const sweepExamples = `  ramify sweep examples/heated-wire.toml --param current --to 40 --probe wire@0.5
  ramify sweep net.toml --param lambda --to 4 --probe slab@0.5 --json
  ramify sweep net.toml --param lambda --to 4 --probe slab@0.5 --plot branch.svg
`

func runSweep(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("sweep", "sweep [flags] FILE --param NAME --to VALUE", sweepExamples, stderr)
	param := fs.String("param", "", "the parameter (from the file's [parameters]) to vary")
	to := fs.Float64("to", math.NaN(), "the value to follow the solution to, from the file's value")
	probes := fs.StringArray("probe", nil, "report the value at POINT (NODE or EDGE@X) along the branch; repeatable")
	method := fs.String("method", "auto", "elements of edges without laws: exact, grid, or auto")
	cells := fs.Int("cells", 0, "grid cells per edge where the file sets none (0: 64)")
	step := fs.Float64("step", 0, "first arclength step (0: a twentieth of the range)")
	maxPoints := fs.Int("max-points", 500, "most points computed on the branch")
	plot := fs.String("plot", "", "draw the probes against the parameter into this SVG file")
	asJSON := fs.Bool("json", false, "print one JSON object on standard output")
	file, code, ok := parseFlags(fs, args, stderr, true)
	if !ok {
		return code
	}
	switch {
	case *param == "":
		return badFlag(stderr, "sweep", fmt.Errorf("--param NAME is required"))
	case math.IsNaN(*to) || math.IsInf(*to, 0):
		return badFlag(stderr, "sweep", fmt.Errorf("--to VALUE is required (a finite number)"))
	case *cells < 0:
		return badFlag(stderr, "sweep", fmt.Errorf("--cells %d: must be ≥ 0", *cells))
	case *maxPoints < 2:
		return badFlag(stderr, "sweep", fmt.Errorf("--max-points %d: must be ≥ 2", *maxPoints))
	case *step < 0 || math.IsNaN(*step):
		return badFlag(stderr, "sweep", fmt.Errorf("--step %g: must be ≥ 0", *step))
	}
	m, err := graphpde.ParseMethod(*method)
	if err != nil {
		return badFlag(stderr, "sweep", err)
	}
	if err := checkOutputs([]string{file}, outTarget{flag: "--plot", path: *plot}); err != nil {
		return badFlag(stderr, "sweep", err)
	}
	net, err := load(ctx, file)
	if err != nil {
		return fail(stderr, "sweep", err)
	}
	if err := controlRefusal(net, file, "sweep"); err != nil {
		return fail(stderr, "sweep", err)
	}
	if net.Params.Index(*param) < 0 {
		have := "the file has no [parameters]"
		if net.Params != nil && len(net.Params.Names) > 0 {
			have = "the file's parameters are " + strings.Join(net.Params.Names, ", ")
		}
		return fail(stderr, "sweep", fmt.Errorf("%s: no parameter %q (%s)", file, *param, have))
	}
	pts, err := parsePoints(net, *probes)
	if err != nil {
		return fail(stderr, "sweep", err)
	}
	from := net.Params.Values[net.Params.Index(*param)]
	// The first solve is interruptible at once; after it, Ctrl-C stops the
	// sweep between two points and what was computed is printed; when the
	// sweep does not return within a second of Ctrl-C (the first solve, or
	// one long point, was running), nothing is.
	res, err := interruptibleWithin(ctx, time.Second, func() (*graphpde.SweepResult, error) {
		return graphpde.Sweep(net, *param, *to, &graphpde.SweepSettings{
			Solve:     &graphpde.NonlinearSettings{Method: m, Cells: *cells},
			Step:      *step,
			MaxPoints: *maxPoints,
			Probes:    pts,
			Context:   ctx,
		})
	})
	if err != nil {
		return fail(stderr, "sweep", err)
	}
	if res.Status == graphpde.SweepInterrupted {
		fmt.Fprintf(stderr, "ramify sweep: interrupted: printing the %s computed before\n", plural(len(res.Points), "point"))
	}
	if *plot != "" {
		replaced, err := saveFile(*plot, []string{file}, func(w io.Writer) error {
			return sweepSVG(w, net.Name, res, *probes)
		})
		if err != nil {
			return fail(stderr, "sweep", err)
		}
		wrote(stderr, "sweep", *plot, replaced, "probes against "+*param)
	}
	if *asJSON {
		if err := writeJSON(stdout, sweepJSON(net, res, *probes)); err != nil {
			return fail(stderr, "sweep", err)
		}
	} else {
		printSweep(stdout, net, res, *probes, from, *to)
	}
	switch res.Status {
	case graphpde.SweepFailed:
		return 1
	case graphpde.SweepInterrupted:
		return exitInterrupted
	}
	return 0
}

type sweepPointOut struct {
	Value  num        `json:"value"`
	Probes []probeOut `json:"probes"`
	// DetSign is the sign of the Jacobian's determinant at the point.
	DetSign int `json:"det_sign,omitempty"`
}

type sweepOut struct {
	Param         string          `json:"param"`
	Points        []sweepPointOut `json:"points"`
	Fold          *sweepPointOut  `json:"fold"`
	FoldConfirmed bool            `json:"fold_confirmed"`
	Status        string          `json:"status"`
	Notes         []string        `json:"notes"`
	Seconds       float64         `json:"seconds"`
	Caution       string          `json:"caution,omitempty"`
}

func sweepPoint(p *graphpde.SweepPoint, specs []string, sign bool) sweepPointOut {
	o := sweepPointOut{Value: num(p.Value), Probes: make([]probeOut, len(specs))}
	for i, s := range specs {
		o.Probes[i] = probeOut{At: s, U: num(p.Probes[i])}
	}
	if sign {
		o.DetSign = 1 - 2*(p.Negative%2)
	}
	return o
}

// sweepCaution reports whether a sweep's output carries the safety caution:
// for networks of a hazardous physical model, and wherever a fold was found
// (a runaway threshold, the number such a sweep is run for).
func sweepCaution(net *graphpde.Network, res *graphpde.SweepResult) bool {
	return hazard(net) || res.Fold != nil
}

func sweepJSON(net *graphpde.Network, res *graphpde.SweepResult, specs []string) sweepOut {
	out := sweepOut{Param: res.Param, Status: res.Status.String(), Notes: res.Notes,
		FoldConfirmed: res.FoldConfirmed, Seconds: res.Elapsed.Seconds(),
		Points: make([]sweepPointOut, len(res.Points))}
	if sweepCaution(net, res) {
		out.Caution = caution
	}
	if out.Notes == nil {
		out.Notes = []string{}
	}
	for i := range res.Points {
		out.Points[i] = sweepPoint(&res.Points[i], specs, true)
	}
	if res.Fold != nil {
		f := sweepPoint(res.Fold, specs, false)
		out.Fold = &f
	}
	return out
}

func printSweep(w io.Writer, net *graphpde.Network, res *graphpde.SweepResult, specs []string, from, to float64) {
	name := net.Name
	if name == "" {
		name = "(unnamed network)"
	}
	fmt.Fprintf(w, "%s: %s from %g towards %g, %s, %.3g s\n", name, res.Param, from, to, plural(len(res.Points), "point"), res.Elapsed.Seconds())
	switch res.Status {
	case graphpde.SweepReached:
		fmt.Fprintf(w, "the branch reaches %s = %g\n", res.Param, to)
	case graphpde.SweepTurned:
		fmt.Fprintf(w, "the branch turns back before %s = %g: no steady solution on it reaches that value\n", res.Param, to)
	case graphpde.SweepPointLimit:
		fmt.Fprintf(w, "stopped after %s (--max-points)\n", plural(len(res.Points), "point"))
	case graphpde.SweepFailed:
		fmt.Fprintln(w, "the continuation failed (see the notes)")
	case graphpde.SweepInterrupted:
		fmt.Fprintln(w, "interrupted (Ctrl-C): the points computed before")
	}
	if f := res.Fold; f != nil {
		conf := "confirmed by the change of sign of the Jacobian's determinant"
		if !res.FoldConfirmed {
			conf = "NOT confirmed by the determinant's sign"
		}
		fmt.Fprintf(w, "fold (turning point) at %s = %.8g, %s: no steady solution on this branch beyond it\n", res.Param, f.Value, conf)
	}
	fmt.Fprintln(w)
	var table bytes.Buffer // rows are trimmed: the fold marker column pads the others
	tw := tabwriter.NewWriter(&table, 2, 4, 2, ' ', 0)
	fmt.Fprint(tw, res.Param)
	for _, s := range specs {
		fmt.Fprintf(tw, "\tu(%s)", s)
	}
	fmt.Fprintln(tw, "\tdet sign\t")
	row := func(p *graphpde.SweepPoint, mark string) {
		fmt.Fprintf(tw, "%.8g", p.Value)
		for _, u := range p.Probes {
			fmt.Fprintf(tw, "\t%.6g", u)
		}
		sign := "+"
		if p.Negative%2 == 1 {
			sign = "−"
		}
		if mark != "" {
			sign = ""
		}
		fmt.Fprintf(tw, "\t%s\t%s\n", sign, mark)
	}
	foldDone := false
	for i := range res.Points {
		p := &res.Points[i]
		if f := res.Fold; f != nil && !foldDone && i > 0 && res.Points[i-1].Slope*p.Slope < 0 {
			row(f, "← fold")
			foldDone = true
		}
		row(p, "")
	}
	tw.Flush()
	for _, line := range strings.SplitAfter(table.String(), "\n") {
		if line != "" {
			fmt.Fprintln(w, strings.TrimRight(line, " \n"))
		}
	}
	for _, n := range res.Notes {
		fmt.Fprintln(w, "note:", n)
	}
	if sweepCaution(net, res) {
		fmt.Fprintln(w)
		fmt.Fprintln(w, caution)
	}
}

// sweepSVG draws every probe against the parameter (one polyline each, in
// the order of the branch), the fold marked by a dashed line and a ring.
func sweepSVG(w io.Writer, title string, res *graphpde.SweepResult, specs []string) error {
	const W, H, left, right, top, bottom = 720.0, 440.0, 80.0, 170.0, 40.0, 60.0
	xmin, xmax := math.Inf(1), math.Inf(-1)
	ymin, ymax := math.Inf(1), math.Inf(-1)
	pts := res.Points
	for _, p := range pts {
		xmin, xmax = math.Min(xmin, p.Value), math.Max(xmax, p.Value)
		for _, u := range p.Probes {
			if !math.IsNaN(u) && !math.IsInf(u, 0) {
				ymin, ymax = math.Min(ymin, u), math.Max(ymax, u)
			}
		}
	}
	if res.Fold != nil {
		xmax = math.Max(xmax, res.Fold.Value)
	}
	if !(xmax > xmin) {
		xmin, xmax = xmin-1, xmin+1
	}
	if len(specs) == 0 || !(ymax >= ymin) {
		ymin, ymax = 0, 1
	}
	if ymax == ymin {
		ymin, ymax = ymin-1, ymax+1
	}
	pad := 0.05 * (ymax - ymin)
	ymin, ymax = ymin-pad, ymax+pad
	X := func(v float64) float64 { return left + (v-xmin)/(xmax-xmin)*(W-left-right) }
	Y := func(u float64) float64 { return H - bottom - (u-ymin)/(ymax-ymin)*(H-top-bottom) }
	var b strings.Builder
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%g" height="%g" viewBox="0 0 %g %g" font-family="sans-serif" font-size="12">`+"\n", W, H, W, H)
	fmt.Fprintf(&b, `<rect width="%g" height="%g" fill="white"/>`+"\n", W, H)
	fmt.Fprintf(&b, `<text x="%g" y="22" font-size="14">%s</text>`+"\n", left, xmlEscape(title+": probes along the branch"))
	// Axes and ticks.
	fmt.Fprintf(&b, `<path d="M%.1f %.1fH%.1fM%.1f %.1fV%.1f" stroke="black" fill="none"/>`+"\n",
		left, H-bottom, W-right, left, H-bottom, top)
	for k := 0; k <= 4; k++ {
		xv := xmin + float64(k)/4*(xmax-xmin)
		yv := ymin + float64(k)/4*(ymax-ymin)
		fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" text-anchor="middle">%.4g</text>`+"\n", X(xv), H-bottom+18, xv)
		fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" text-anchor="end">%.4g</text>`+"\n", left-6, Y(yv)+4, yv)
		fmt.Fprintf(&b, `<path d="M%.1f %.1fv5M%.1f %.1fh-5" stroke="black"/>`+"\n", X(xv), H-bottom, left, Y(yv))
	}
	fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" text-anchor="middle">%s</text>`+"\n", (left+W-right)/2, H-16, xmlEscape(res.Param))
	fmt.Fprintf(&b, `<text x="18" y="%.1f" transform="rotate(-90 18 %.1f)" text-anchor="middle">u</text>`+"\n", (top+H-bottom)/2, (top+H-bottom)/2)
	colours := []string{"#1f5fa8", "#c0392b", "#2e8b57", "#8e44ad", "#d35400", "#555555"}
	for i, s := range specs {
		col := colours[i%len(colours)]
		var d strings.Builder
		for k, p := range pts {
			cmd := "L"
			if k == 0 {
				cmd = "M"
			}
			fmt.Fprintf(&d, "%s%.2f %.2f", cmd, X(p.Value), Y(p.Probes[i]))
		}
		fmt.Fprintf(&b, `<path d="%s" stroke="%s" stroke-width="1.8" fill="none"/>`+"\n", d.String(), col)
		fmt.Fprintf(&b, `<path d="M%.1f %.1fh24" stroke="%s" stroke-width="1.8"/><text x="%.1f" y="%.1f">u(%s)</text>`+"\n",
			W-right+12, top+14+18*float64(i), col, W-right+40, top+18+18*float64(i), xmlEscape(s))
	}
	if f := res.Fold; f != nil {
		x := X(f.Value)
		fmt.Fprintf(&b, `<path d="M%.1f %.1fV%.1f" stroke="#444" stroke-dasharray="5 4"/>`+"\n", x, top, H-bottom)
		for i := range specs {
			fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="5" stroke="black" fill="none"/>`+"\n", x, Y(f.Probes[i]))
		}
		fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" text-anchor="end">fold %s = %.6g</text>`+"\n", x-4, top+12, xmlEscape(res.Param), f.Value)
	}
	b.WriteString("</svg>\n")
	_, err := io.WriteString(w, b.String())
	return err
}

func xmlEscape(s string) string {
	r := strings.NewReplacer("&", "&amp;", "<", "&lt;", ">", "&gt;", `"`, "&quot;")
	return r.Replace(s)
}
