package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

const exitExamples = `  ramify exit examples/fork.toml --from fork
  ramify exit net.toml --from arm1@0.25 --times 0.1,0.5,1 --json
`

func runExit(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("exit", "exit [flags] FILE --from POINT", exitExamples, stderr)
	from := fs.String("from", "", "start point: NODE or EDGE@X (required)")
	times := fs.Float64Slice("times", nil, "also give the survival probability P(τ > t) at these times `T1,T2,...`")
	quants := fs.Float64Slice("quantiles", nil, "exit-time quantiles `P1,P2,...` to report (default 0.1,0.25,0.5,0.75,0.9)")
	method := fs.String("method", "auto", "edge elements: exact, grid, or auto")
	cells := fs.Int("cells", 0, "grid cells per edge where the file sets none (0: 64)")
	asJSON := fs.Bool("json", false, "print one JSON object on standard output")
	file, code, ok := parseFlags(fs, args, stderr, true)
	if !ok {
		return code
	}
	if *from == "" {
		return badFlag(stderr, "exit", fmt.Errorf("--from POINT is required (NODE or EDGE@X)"))
	}
	m, err := graphpde.ParseMethod(*method)
	if err != nil {
		return badFlag(stderr, "exit", err)
	}
	for _, t := range *times {
		if !(t >= 0) || math.IsInf(t, 1) {
			return badFlag(stderr, "exit", fmt.Errorf("--times: %g is not a finite time ≥ 0", t))
		}
	}
	for _, q := range *quants {
		if !(q > 0 && q < 1) {
			return badFlag(stderr, "exit", fmt.Errorf("--quantiles: %g is not a probability strictly between 0 and 1", q))
		}
	}
	if *cells < 0 {
		return badFlag(stderr, "exit", fmt.Errorf("--cells %d: must be ≥ 0", *cells))
	}
	net, err := load(ctx, file)
	if err != nil {
		return fail(stderr, "exit", err)
	}
	if err := controlRefusal(net, file, "exit"); err != nil {
		return fail(stderr, "exit", err)
	}
	if err := nonlinearRefusal(net, file, "exit statistics are defined for linear problems only"); err != nil {
		return fail(stderr, "exit", err)
	}
	p, err := net.ParsePoint(*from)
	if err != nil {
		return fail(stderr, "exit", err)
	}
	x, err := interruptible(ctx, func() (*graphpde.ExitStats, error) {
		return graphpde.ExitStatistics(net, p, &graphpde.ExitSettings{Method: m, Cells: *cells, Times: *times, Quantiles: *quants, Context: ctx})
	})
	if err != nil {
		return fail(stderr, "exit", placed(net, err))
	}
	if *asJSON {
		if err := writeJSON(stdout, exitJSON(net, *from, x)); err != nil {
			return fail(stderr, "exit", err)
		}
		return 0
	}
	printExit(stdout, net, *from, x)
	return 0
}

type survOut struct {
	T num `json:"t"`
	P num `json:"p"`
}

type exitTimeOut struct {
	Mean      num            `json:"mean"`
	SD        num            `json:"sd"`
	Moments   []num          `json:"moments"`
	Quantiles map[string]num `json:"quantiles"`
}

type exitStatsOut struct {
	Start        string         `json:"start"`
	Hit          map[string]num `json:"hit"`
	Killed       num            `json:"killed"`
	Time         exitTimeOut    `json:"time"`
	Survival     []survOut      `json:"survival"`
	Occupation   map[string]num `json:"occupation"`
	Distribution bool           `json:"distribution_available"`
	Notes        []string       `json:"notes,omitempty"`
}

func exitJSON(net *graphpde.Network, from string, x *graphpde.ExitStats) exitStatsOut {
	out := exitStatsOut{
		Start:  from,
		Hit:    map[string]num{},
		Killed: num(x.Killed),
		Time: exitTimeOut{Mean: num(x.Mean), SD: num(x.SD), Quantiles: map[string]num{},
			Moments: make([]num, len(x.Moments))},
		Survival:     make([]survOut, len(x.Survival)),
		Occupation:   map[string]num{},
		Distribution: x.HasDistribution,
		Notes:        x.Notes,
	}
	for i, m := range x.Moments {
		out.Time.Moments[i] = num(m)
	}
	for _, q := range x.Quantiles {
		out.Time.Quantiles[quantKey(q.P)] = num(q.T)
	}
	for i, s := range x.Survival {
		out.Survival[i] = survOut{num(s.T), num(s.P)}
	}
	for v, nd := range net.Nodes {
		if nd.Law.Kind == vertex.Fixed {
			out.Hit[nd.ID] = num(x.Hit[v])
		}
	}
	for e, ed := range net.Edges {
		if e < len(x.Occupation) {
			out.Occupation[ed.ID] = num(x.Occupation[e])
		}
	}
	return out
}

func printExit(w io.Writer, net *graphpde.Network, from string, x *graphpde.ExitStats) {
	fmt.Fprintf(w, "first passage from %s (PDE)\n\n", from)
	// g prints a number, or "not reported" for NaN (see the notes).
	g := func(format string, v float64) string {
		if math.IsNaN(v) {
			return "not reported"
		}
		return fmt.Sprintf(format, v)
	}
	fmt.Fprintf(w, "exit time: mean %s, sd %s\n", g("%.6g", x.Mean), g("%.6g", x.SD))
	if len(x.Quantiles) > 0 {
		fmt.Fprint(w, "quantiles:")
		for _, q := range x.Quantiles {
			fmt.Fprintf(w, "  %g: %s", q.P, g("%.5g", q.T))
		}
		fmt.Fprintln(w)
	}
	// The inverted transform is accurate to about 1e-11 absolute (Talbot
	// contours) or 1e-5 (Gaver–Stehfest on the grid path, which a note
	// names): smaller values are printed as a bound.
	floor := 1e-10
	for _, n := range x.Notes {
		if strings.Contains(n, "Gaver") {
			floor = 1e-5
		}
	}
	for _, s := range x.Survival {
		switch {
		case math.IsNaN(s.P):
			fmt.Fprintf(w, "P(τ > %g) = not reported\n", s.T)
		case s.P < floor:
			fmt.Fprintf(w, "P(τ > %g) < %g (below the accuracy of the inversion)\n", s.T, floor)
		default:
			fmt.Fprintf(w, "P(τ > %g) = %s\n", s.T, fmtNum(s.P))
		}
	}
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "exit at\tprobability")
	rows, rest := shownRows(fixedNodes(net), func(v int) float64 { return x.Hit[v] })
	for _, v := range rows {
		fmt.Fprintf(tw, "%s\t%s\n", net.Nodes[v].ID, fmtProb(x.Hit[v]))
	}
	if n := len(fixedNodes(net)) - len(rows); n > 0 {
		fmt.Fprintf(tw, "(%d more fixed nodes)\t%s\n", n, fmtProb(rest))
	}
	if x.Killed > 1e-12 {
		fmt.Fprintf(tw, "(killed by decay or leak)\t%s\n", fmtProb(x.Killed))
	}
	tw.Flush()
	if len(x.Occupation) > 0 {
		fmt.Fprintln(w)
		tw = tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
		fmt.Fprintln(tw, "edge\tmean time spent")
		rows, rest := shownRows(allEdges(net), func(e int) float64 { return x.Occupation[e] })
		for _, e := range rows {
			fmt.Fprintf(tw, "%s\t%.5g\n", net.Edges[e].ID, x.Occupation[e])
		}
		if n := len(net.Edges) - len(rows); n > 0 {
			fmt.Fprintf(tw, "(%d more edges)\t%.5g\n", n, rest)
		}
		// The rest of the mean lifetime is spent held at node capacities.
		var onEdges float64
		for _, o := range x.Occupation {
			onEdges += o
		}
		if held := x.Mean - onEdges; !math.IsNaN(held) && math.Abs(held) > 1e-9*math.Abs(x.Mean) {
			fmt.Fprintf(tw, "(held at node capacities)\t%.5g\n", held)
		}
		if !math.IsNaN(x.Mean) {
			fmt.Fprintf(tw, "(total: the mean exit time)\t%.5g\n", x.Mean)
		}
		tw.Flush()
	}
	for _, n := range x.Notes {
		fmt.Fprintln(w, "note:", n)
	}
}
