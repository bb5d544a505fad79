package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"slices"
	"text/tabwriter"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

const solveExamples = `  ramify solve examples/handrail.toml
  ramify solve net.toml --probe arm1@0.25 --probe hub --json
  ramify solve net.toml --method grid --cells 200 --field field.csv
`

func runSolve(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("solve", "solve [flags] FILE", solveExamples, stderr)
	method := fs.String("method", "auto", "edge elements: exact, grid, or auto (exact where coefficients are constant)")
	cells := fs.Int("cells", 0, "grid cells per edge where the file sets none (0: 64)")
	probes := fs.StringArray("probe", nil, "report the value at POINT (NODE or EDGE@X); repeatable")
	field := fs.String("field", "", "write the field sampled along every edge to this CSV file")
	fieldStep := fs.Float64("field-step", 0, "with --field: sample every edge at this spacing (length units; 0: the grid vertices, or 33 points on an exact edge)")
	draw := fs.String("draw", "", "draw the network coloured by the field into this SVG file")
	asJSON := fs.Bool("json", false, "print one JSON object on standard output")
	viscosity := fs.String("viscosity-scale", "", "controlled networks: multiply every diffusivity by this ε > 0; a decreasing list (0.1,0.01,0.001) sweeps ε and extrapolates the limit ε → 0 at every probe")
	all := fs.Bool("all", false, fmt.Sprintf("print every node and edge (the tables stop at %d rows otherwise)", tableRows))
	file, code, ok := parseFlags(fs, args, stderr, true)
	if !ok {
		return code
	}
	m, err := graphpde.ParseMethod(*method)
	if err != nil {
		return badFlag(stderr, "solve", err)
	}
	if !(*fieldStep >= 0) || math.IsInf(*fieldStep, 1) {
		return badFlag(stderr, "solve", fmt.Errorf("--field-step %g: must be a finite spacing ≥ 0", *fieldStep))
	}
	if *cells < 0 {
		return badFlag(stderr, "solve", fmt.Errorf("--cells %d: must be ≥ 0", *cells))
	}
	if err := checkOutputs([]string{file}, outTarget{flag: "--field", path: *field}, outTarget{flag: "--draw", path: *draw}); err != nil {
		return badFlag(stderr, "solve", err)
	}
	net, err := load(ctx, file)
	if err != nil {
		return fail(stderr, "solve", err)
	}
	pts, err := parsePoints(net, *probes)
	if err != nil {
		return fail(stderr, "solve", err)
	}
	if *field != "" && *fieldStep > 0 {
		var n float64
		for _, e := range net.Edges {
			n += e.Length / *fieldStep
		}
		if n > maxFieldPoints {
			return badFlag(stderr, "solve", fmt.Errorf("--field-step %g: would write about %.3g points, over the limit of %g", *fieldStep, n, float64(maxFieldPoints)))
		}
	}
	if fs.Changed("viscosity-scale") && !graphpde.Controlled(net) {
		return badFlag(stderr, "solve", fmt.Errorf("--viscosity-scale: %s has no controls (the scale applies to controlled networks)", file))
	}
	scales, err := parseScales(*viscosity)
	if err != nil {
		return badFlag(stderr, "solve", err)
	}
	if len(scales) > 1 {
		if *field != "" || *draw != "" {
			return badFlag(stderr, "solve", fmt.Errorf("--field and --draw take one --viscosity-scale, not a list"))
		}
		return viscositySweep(ctx, net, file, m, *cells, scales, *probes, pts, *asJSON, stdout, stderr)
	}
	eps := 0.0
	if len(scales) == 1 {
		eps = scales[0]
	}
	var sol *graphpde.Solution
	var nl *graphpde.NonlinearResult
	var ctl *graphpde.ControlResult
	obj := net.Objective
	ctlNet := net
	if graphpde.Controlled(net) {
		if ctl, err = solveControlled(ctx, net, m, *cells, eps); err != nil {
			return fail(stderr, "solve", err)
		}
		sol = ctl.Solution
		net = sol.Net // the linear network of the optimal policy (same ids)
	} else if sol, nl, err = solveField(ctx, net, m, *cells); err != nil {
		return fail(stderr, "solve", err)
	}
	if *field != "" {
		if err := writeField(*field, file, sol, *fieldStep, stderr); err != nil {
			return fail(stderr, "solve", err)
		}
	}
	if *draw != "" {
		marks := make([]mark, len(pts))
		for i, p := range pts {
			marks[i] = mark{at: p, label: (*probes)[i]}
		}
		title := net.Name
		if title == "" {
			title = file
		}
		d := fieldDrawing(net, sol, title, marks)
		if ctl != nil {
			policyDrawing(d, ctlNet, ctl)
		}
		if err := writeDrawing(*draw, []string{file}, d, "solve", stderr); err != nil {
			return fail(stderr, "solve", err)
		}
	}
	if *asJSON {
		out := solveJSON(net, sol, *probes, pts)
		out.nonlinearOut = nonlinearJSON(nl)
		out.Notes = mergeNotes(out.Notes, out.nonlinearOut.Notes)
		if ctl != nil {
			out.controlOut = controlJSON(net, ctl, obj)
			out.Status = ctl.Status.String()
		}
		write := writeSolveJSON
		if !streamSolveJSON {
			write = func(w io.Writer, out solveOut) error { return writeJSON(w, out) }
		}
		if err := write(stdout, out); err != nil {
			return fail(stderr, "solve", err)
		}
		return 0
	}
	rows := tableRows
	if *all {
		rows = -1
	}
	printSolve(stdout, net, sol, nl, *probes, pts, m, rows)
	if ctl != nil {
		fmt.Fprintln(stdout)
		printControl(stdout, net, ctl, obj, rows)
	}
	return 0
}

type nodeOut struct {
	ID       string `json:"id"`
	Kind     string `json:"kind"`
	U        num    `json:"u"`
	Residual num    `json:"residual"`
}

type edgeOut struct {
	ID   string `json:"id"`
	From string `json:"from"`
	To   string `json:"to"`
	Flux [2]num `json:"flux"`
}

type probeOut struct {
	At string `json:"at"`
	U  num    `json:"u"`
}

type solveOut struct {
	Network string     `json:"network"`
	Status  string     `json:"status"`
	Method  string     `json:"method"`
	Nodes   []nodeOut  `json:"nodes"`
	Edges   []edgeOut  `json:"edges"`
	Probes  []probeOut `json:"probes"`
	Stats   statsOut   `json:"stats"`
	Summary summaryOut `json:"summary"`
	Units   *unitsOut  `json:"units,omitempty"`
	Notes   []string   `json:"notes,omitempty"`
	Caution string     `json:"caution,omitempty"`
	nonlinearOut
	controlOut
}

type statsOut struct {
	Unknowns     int     `json:"unknowns"`
	NodeUnknowns int     `json:"node_unknowns"`
	ExactEdges   int     `json:"exact_edges"`
	GridEdges    int     `json:"grid_edges"`
	Fill         int     `json:"factor_nonzeros"`
	Seconds      float64 `json:"seconds"`
	// The node solve's scaled residual after refinement, and the steps.
	ScaledResidual num `json:"scaled_residual"`
	Refinements    int `json:"refinements"`
}

func solveJSON(net *graphpde.Network, sol *graphpde.Solution, specs []string, pts []graphpde.Point) solveOut {
	out := solveOut{
		Network: net.Name,
		Status:  sol.Status.String(),
		Notes:   sol.Notes,
		Nodes:   make([]nodeOut, len(net.Nodes)),
		Edges:   make([]edgeOut, len(net.Edges)),
		Probes:  make([]probeOut, len(pts)),
		Stats: statsOut{
			Unknowns: sol.Stats.Unknowns, NodeUnknowns: sol.Stats.NodeUnknowns,
			ExactEdges: sol.Stats.ExactEdges, GridEdges: sol.Stats.GridEdges,
			Fill: sol.Stats.FillNNZ, Seconds: sol.Stats.Elapsed.Seconds(),
			ScaledResidual: num(sol.Stats.ScaledResidual), Refinements: sol.Stats.Refinements,
		},
		Summary: summarize(net, sol),
		Units:   physicalUnits(net.Physical),
	}
	if hazard(net) {
		out.Caution = caution
	}
	out.Method = methodSummary(sol)
	for v, nd := range net.Nodes {
		out.Nodes[v] = nodeOut{ID: nd.ID, Kind: nd.Law.Kind.String(), U: num(sol.U[v]), Residual: num(sol.Residual[v])}
	}
	for i, e := range net.Edges {
		out.Edges[i] = edgeOut{ID: e.ID, From: net.Nodes[e.From].ID, To: net.Nodes[e.To].ID,
			Flux: [2]num{num(sol.Flux[i][0]), num(sol.Flux[i][1])}}
	}
	for i, p := range pts {
		out.Probes[i] = probeOut{At: specs[i], U: num(probe(sol, p))}
	}
	return out
}

func methodSummary(sol *graphpde.Solution) string {
	switch {
	case sol.Stats.GridEdges == 0:
		return "exact"
	case sol.Stats.ExactEdges == 0:
		return "grid"
	}
	return "mixed"
}

// tableRows is the number of rows a human-readable table shows by default.
const tableRows = 100

// plural returns "n word" or "n words".
func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return fmt.Sprintf("%d %ss", n, word)
}

// more prints the line that says how many rows a table left out.
func more(w io.Writer, shown, total int, what string) {
	if shown < total {
		fmt.Fprintf(w, "... %d more %s (--all prints them, --json gives everything)\n", total-shown, what)
	}
}

// printSolve writes the human-readable result; rows < 0 prints every row.
func printSolve(w io.Writer, net *graphpde.Network, sol *graphpde.Solution, nl *graphpde.NonlinearResult, specs []string, pts []graphpde.Point, m graphpde.Method, rows int) {
	limit := func(n int) int {
		if rows < 0 || n < rows {
			return n
		}
		return rows
	}
	name := net.Name
	if name == "" {
		name = "(unnamed network)"
	}
	fmt.Fprintf(w, "%s: %s, %s; %s\n", name, plural(len(net.Nodes), "node"), plural(len(net.Edges), "edge"), sol.Status)
	fmt.Fprintf(w, "method %s: %d exact and %d grid edges, %s (%d at nodes), %.3g s\n",
		m, sol.Stats.ExactEdges, sol.Stats.GridEdges, plural(sol.Stats.Unknowns, "unknown"), sol.Stats.NodeUnknowns, sol.Stats.Elapsed.Seconds())
	worst, at := 0.0, -1
	for v, r := range sol.Residual {
		if net.Nodes[v].Law.Kind != vertex.Balance || math.IsNaN(r) {
			continue
		}
		if a := math.Abs(r); at < 0 || a > worst {
			worst, at = a, v
		}
	}
	if at >= 0 {
		fmt.Fprintf(w, "largest balance residual %.2e, at node %s\n", worst, net.Nodes[at].ID)
	}
	for _, n := range sol.Notes {
		fmt.Fprintf(w, "note: %s\n", n)
	}
	printNonlinear(w, nl)
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	ph := net.Physical
	fmt.Fprintf(tw, "node\tcondition\t%s\tbalance residual\n", fieldHeader(ph))
	for v, nd := range net.Nodes[:limit(len(net.Nodes))] {
		res := "—"
		cond := "fixed"
		if nd.Law.Kind == vertex.Balance {
			res = fmt.Sprintf("%.2e", sol.Residual[v])
			if math.IsNaN(sol.Residual[v]) {
				res = "not reported"
			}
			cond = "balance"
			if nd.Law.Leak > 0 {
				cond += ", leak " + fmtNum(nd.Law.Leak)
			}
			if nd.Law.Inject != 0 {
				cond += ", inject " + fmtNum(nd.Law.Inject)
			}
			cond += nonlinearCondition(nd.Nonlinear)
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\n", nd.ID, cond, fmtNum(ph.Shown(sol.U[v])), res)
	}
	tw.Flush()
	more(w, limit(len(net.Nodes)), len(net.Nodes), "nodes")
	fmt.Fprintln(w)
	tw = tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "edge\tfrom → to\tflux at from\tflux at to")
	for i, e := range net.Edges[:limit(len(net.Edges))] {
		fmt.Fprintf(tw, "%s\t%s → %s\t%s\t%s\n", e.ID, net.Nodes[e.From].ID, net.Nodes[e.To].ID, fmtNum(sol.Flux[i][0]), fmtNum(sol.Flux[i][1]))
	}
	tw.Flush()
	more(w, limit(len(net.Edges)), len(net.Edges), "edges")
	if ph != nil {
		note := ""
		if ph.Model == "channel" {
			note = "; dispersive part only, the summary adds the flow-carried part"
		}
		fmt.Fprintf(w, "(flux: %s in %s along the edge's from → to direction%s)\n", ph.Flux, orDash(ph.FluxUnit), note)
	} else {
		fmt.Fprintln(w, "(flux: diffusive flux −a·u' along the edge's from → to direction)")
	}
	if len(pts) > 0 {
		fmt.Fprintln(w)
		tw = tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
		fmt.Fprintf(tw, "probe\t%s\n", fieldHeader(ph))
		for i, p := range pts {
			fmt.Fprintf(tw, "%s\t%s\n", specs[i], fmtNum(ph.Shown(probe(sol, p))))
		}
		tw.Flush()
	}
	printSummary(w, net, summarize(net, sol), rows)
	if hazard(net) {
		fmt.Fprintln(w)
		fmt.Fprintln(w, caution)
	}
}

// fieldHeader names the field column: "u", or "temperature [°C]".
func fieldHeader(ph *graphpde.Physical) string {
	if ph == nil {
		return "u"
	}
	return ph.Field + bracket(ph.ShownUnit())
}

// writeField writes edge,x,u rows for every edge to path (never over the
// input file) and says on stderr what it wrote.
func writeField(path, input string, sol *graphpde.Solution, step float64, stderr io.Writer) error {
	rows := 0
	replaced, err := saveFile(path, []string{input}, func(w io.Writer) error {
		return writeFieldRows(w, sol, step, &rows)
	})
	if err != nil {
		return fmt.Errorf("--field %s: %w", path, err)
	}
	wrote(stderr, "solve", path, replaced, fmt.Sprintf("field at %d points on %s", rows, plural(len(sol.Net.Edges), "edge")))
	return nil
}

// writeFieldRows writes the edge,x,u rows of --field, streamed (csvRows),
// counting them in rows.
func writeFieldRows(w io.Writer, sol *graphpde.Solution, step float64, rows *int) error {
	return fieldRows(w, sol, step, rows, len(sol.Net.Edges))
}

// fieldRows is writeFieldRows for the first edges edges only (the bench
// times a part of a large network's field).
func fieldRows(w io.Writer, sol *graphpde.Solution, step float64, rows *int, edges int) error {
	cw := newCSVRows(w)
	cw.str("edge")
	cw.str("x")
	cw.str("u")
	cw.end()
	var pts []graphpde.FieldPoint
	var id []byte
	for e := range edges {
		if step > 0 {
			pts = sampleEvery(pts[:0], sol, e, step)
		} else {
			pts = sol.Sample(pts[:0], e)
		}
		id = appendCSVField(id[:0], sol.Net.Edges[e].ID) // once per edge, not per row
		for _, p := range pts {
			cw.raw(id)
			cw.num(p.X, 10)
			cw.num(p.U, 12)
			cw.end()
		}
		*rows += len(pts)
		if cw.err != nil {
			break
		}
	}
	return cw.flush()
}

// maxFieldPoints bounds the rows --field-step may ask for.
const maxFieldPoints = 1e7

// sampleEvery appends the field along edge e at x = 0, step, 2·step, …
// and at the far end. Cost O(L/step).
func sampleEvery(dst []graphpde.FieldPoint, sol *graphpde.Solution, e int, step float64) []graphpde.FieldPoint {
	L := sol.Net.Edges[e].Length
	n := int(math.Floor(L/step + 1e-9))
	for k := 0; k <= n; k++ {
		x := min(float64(k)*step, L)
		u, _ := sol.At(graphpde.Point{Node: -1, Edge: e, X: x})
		dst = append(dst, graphpde.FieldPoint{X: x, U: u})
	}
	if last := dst[len(dst)-1].X; last < L {
		u, _ := sol.At(graphpde.Point{Node: -1, Edge: e, X: L})
		dst = append(dst, graphpde.FieldPoint{X: L, U: u})
	}
	return dst
}

// probe returns the solution at a point parsed from the command line
// (always on the network); a point that is not on it gives NaN, printed as
// NaN or a JSON null.
func probe(sol *graphpde.Solution, p graphpde.Point) float64 {
	u, err := sol.At(p)
	if err != nil {
		return math.NaN()
	}
	return u
}

// mergeNotes appends the notes of more that are not already in notes.
func mergeNotes(notes, more []string) []string {
	for _, m := range more {
		if !slices.Contains(notes, m) {
			notes = append(notes, m)
		}
	}
	return notes
}
