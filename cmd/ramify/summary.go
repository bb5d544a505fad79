package main

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// The engineering summary of a steady solve: what each fixed node supplies,
// the overall balance, and the extremes of the field along every edge.
//
// Per edge, integrating the steady equation (a u')' + b u' − c u + f = 0
// over [0, L] gives
//
//	J(0) − J(L) = ∫(c u − f − b u') dx,   J = −a u',
//
// and a physical model splits c u − f into a loss K(u − Ref) and a source.
// Summed over the network, with the node laws Σ_e J_e + β u − γ = r at
// balance nodes (r the residual),
//
//	sources + drawn from fixed nodes + carried in at open ends
//	  = losses + drift transport − Σ r,
//
// where "carried" is the flow Q·u of tracer channels and "drift transport"
// the part of a raw drift b that is not a carried flow. The imbalance
// printed is the difference of the two sides.

type fixedSupply struct {
	ID    string `json:"id"`
	Kind  string `json:"kind"` // "fixed" or "driver"
	U     num    `json:"u"`
	Drawn num    `json:"drawn"` // flux (and carried flow) from the node into the network
}

type openEnd struct {
	ID      string `json:"id"`
	Carried num    `json:"carried_in"` // carried flow into the network (negative: out)
}

type edgeExtreme struct {
	ID    string `json:"id"`
	Max   num    `json:"max"`
	AtMax num    `json:"at_max"`
	Min   num    `json:"min"`
	AtMin num    `json:"at_min"`
	Exact bool   `json:"exact"`
	Flat  bool   `json:"flat"` // the place of the interior extremum is ill-defined: the field is flat there
	inner int    // 1: the max is interior, -1: the min, 0: neither
}

type placeOut struct {
	At string `json:"at"` // NODE or EDGE@X
	U  num    `json:"u"`
}

type balanceOut struct {
	Sources      num `json:"sources"`
	FromFixed    num `json:"supplied"` // by fixed nodes and drivers
	CarriedIn    num `json:"carried_in_at_open_ends"`
	Losses       num `json:"losses"`
	Drift        num `json:"drift_transport"`
	Imbalance    num `json:"imbalance"`
	RelImbalance num `json:"relative_imbalance"`
}

type summaryOut struct {
	Fixed    []fixedSupply `json:"fixed_nodes"`
	Open     []openEnd     `json:"open_ends,omitempty"`
	Balance  *balanceOut   `json:"balance"` // null where an edge's terms cannot be split (nonlinear laws)
	Extremes []edgeExtreme `json:"edges"`
	Highest  placeOut      `json:"highest"`
	Lowest   placeOut      `json:"lowest"`
	Note     string        `json:"note,omitempty"`
}

// summarize computes the summary of a solved network. Cost O(edges) on
// exact edges; O(cells) on grid edges.
func summarize(net *graphpde.Network, sol *graphpde.Solution) summaryOut {
	ph := net.Physical
	var s summaryOut
	drawn := make([]float64, len(net.Nodes))
	carried := make([]float64, len(net.Nodes))
	hasCarry := make([]bool, len(net.Nodes))
	carryScale := make([]float64, len(net.Nodes))
	var src, loss, drift, scale float64
	split := true
	weighted := false // some end weight differs from the diffusivity
	for i := range net.Edges {
		e := &net.Edges[i]
		j0, jL := sol.Flux[i][0], sol.Flux[i][1]
		u0, uL := sol.U[e.From], sol.U[e.To]
		var pe graphpde.PhysicalEdge
		if ph != nil && i < len(ph.Edges) {
			pe = ph.Edges[i]
		}
		drawn[e.From] += j0 + pe.Carry*u0
		drawn[e.To] -= jL + pe.Carry*uL
		if pe.Carry != 0 {
			carried[e.From] += pe.Carry * u0
			carried[e.To] -= pe.Carry * uL
			hasCarry[e.From], hasCarry[e.To] = true, true
			carryScale[e.From] += math.Abs(pe.Carry * u0)
			carryScale[e.To] += math.Abs(pe.Carry * uL)
		}
		if e.Law != nil || !e.Constant() {
			split = false
			continue
		}
		for side := range 2 {
			if w := e.Weight[side]; w != 0 && w != e.A {
				weighted = true
			}
		}
		L := e.Length
		d := j0 - jL // = c∫u − fL − bΔu
		cint := d + e.F*L + e.B*(uL-u0)
		var l, sr float64
		switch {
		case !pe.Set || pe.K == e.C:
			l = cint - pe.K*pe.Ref*L
			sr = e.F*L - pe.K*pe.Ref*L
		case e.C > 0:
			uint := cint / e.C
			l = pe.K * (uint - pe.Ref*L)
			sr = l - d - e.B*(uL-u0)
		default:
			uint := integral(sol, i)
			l = pe.K * (uint - pe.Ref*L)
			sr = l - d - e.B*(uL-u0)
		}
		src += snap(sr, math.Abs(e.F*L)+math.Abs(pe.K*pe.Ref*L)+math.Abs(l))
		loss += l
		drift += -e.B*(uL-u0) - pe.Carry*(uL-u0)
		scale += math.Abs(sr) + math.Abs(l) + math.Abs(j0) + math.Abs(jL)
	}
	var fromFixed, carriedIn float64
	for v, nd := range net.Nodes {
		if nd.Law.Kind == vertex.Fixed {
			s.Fixed = append(s.Fixed, fixedSupply{ID: nd.ID, Kind: "fixed", U: num(shown(ph, sol.U[v])), Drawn: num(drawn[v])})
			fromFixed += drawn[v]
			continue
		}
		var pn graphpde.PhysicalNode
		if ph != nil && v < len(ph.Nodes) {
			pn = ph.Nodes[v]
		}
		if c := snap(carried[v], carryScale[v]); hasCarry[v] && c != 0 {
			// What the edges carry away from the node came in from outside.
			s.Open = append(s.Open, openEnd{ID: nd.ID, Carried: num(c)})
			carriedIn += c
		}
		if nd.Nonlinear != nil {
			split = false // a loss or general law: no split into sources and losses here
			continue
		}
		gain := nd.Law.Inject - nd.Law.Leak*sol.U[v]
		scale += math.Abs(nd.Law.Inject) + math.Abs(nd.Law.Leak*sol.U[v])
		switch {
		case pn.Driver:
			s.Fixed = append(s.Fixed, fixedSupply{ID: nd.ID, Kind: "driver", U: num(shown(ph, sol.U[v])), Drawn: num(gain)})
			fromFixed += gain
		case pn.Set:
			l := pn.K * (sol.U[v] - pn.Ref)
			loss += l
			src += snap(gain+l, math.Abs(nd.Law.Inject)+math.Abs(l))
		default:
			src += nd.Law.Inject
			loss += nd.Law.Leak * sol.U[v]
		}
	}
	if weighted {
		split = false
		s.Note = "some end weights differ from the diffusivities, so the node laws do not conserve the flux −a·u' and there is no overall balance to show"
	}
	if split {
		imb := src + fromFixed + carriedIn - loss - drift
		rel := 0.0
		switch {
		case math.IsNaN(imb):
			rel = math.NaN()
		case scale > 0:
			rel = math.Abs(imb) / scale
		}
		s.Balance = &balanceOut{Sources: num(src), FromFixed: num(fromFixed), CarriedIn: num(carriedIn),
			Losses: num(loss), Drift: num(drift), Imbalance: num(imb), RelImbalance: num(rel)}
	} else if s.Note == "" {
		s.Note = "the balance is not split into sources and losses on edges with varying or nonlinear coefficients or at nodes with nonlinear laws"
	}
	hi, lo := placeOut{U: num(math.Inf(-1))}, placeOut{U: num(math.Inf(1))}
	for v, nd := range net.Nodes {
		if u := sol.U[v]; u > float64(hi.U) {
			hi = placeOut{At: nd.ID, U: num(u)}
		}
		if u := sol.U[v]; u < float64(lo.U) {
			lo = placeOut{At: nd.ID, U: num(u)}
		}
	}
	for i, e := range net.Edges {
		x := sol.Extremes(i)
		inner := 0
		switch {
		case x.AtMax > 0 && x.AtMax < e.Length:
			inner = 1
		case x.AtMin > 0 && x.AtMin < e.Length:
			inner = -1
		}
		s.Extremes = append(s.Extremes, edgeExtreme{ID: e.ID, Max: num(shown(ph, x.Max)), AtMax: num(x.AtMax),
			Min: num(shown(ph, x.Min)), AtMin: num(x.AtMin), Exact: x.Exact, Flat: x.Flat && inner != 0, inner: inner})
		if x.Max > float64(hi.U) && x.AtMax > 0 && x.AtMax < e.Length {
			hi = placeOut{At: e.ID + "@" + strconv.FormatFloat(x.AtMax, 'g', 6, 64), U: num(x.Max)}
		}
		if x.Min < float64(lo.U) && x.AtMin > 0 && x.AtMin < e.Length {
			lo = placeOut{At: e.ID + "@" + strconv.FormatFloat(x.AtMin, 'g', 6, 64), U: num(x.Min)}
		}
	}
	hi.U, lo.U = num(shown(ph, float64(hi.U))), num(shown(ph, float64(lo.U)))
	s.Highest, s.Lowest = hi, lo
	return s
}

// snap returns 0 for an x that is round-off against scale (a difference
// of terms of size scale that cancel), else x.
func snap(x, scale float64) float64 {
	if math.Abs(x) <= 64*0x1p-52*scale {
		return 0
	}
	return x
}

// integral returns ∫u dx along edge e by composite three-point
// Gauss–Legendre quadrature on 64 panels (exact for piecewise quintics;
// used only where the equation does not give ∫u directly).
func integral(sol *graphpde.Solution, e int) float64 {
	L := sol.Net.Edges[e].Length
	const panels = 64
	h := L / panels
	g := math.Sqrt(0.6) / 2
	var sum float64
	for p := range panels {
		m := (float64(p) + 0.5) * h
		for _, q := range [3][2]float64{{-g, 5.0 / 18}, {0, 8.0 / 18}, {g, 5.0 / 18}} {
			x := min(max(m+q[0]*h, 0), L)
			u, err := sol.At(graphpde.Point{Node: -1, Edge: e, X: x})
			if err != nil {
				return math.NaN()
			}
			sum += q[1] * h * u
		}
	}
	return sum
}

// shown converts u for human-facing numbers (°C for temperatures written in
// degC); JSON u values elsewhere stay in SI.
func shown(ph *graphpde.Physical, u float64) float64 { return ph.Shown(u) }

// unitsOut names the units of the JSON numbers of a physical network.
type unitsOut struct {
	Model     string `json:"model"`
	Field     string `json:"field"`
	U         string `json:"u"`
	Flux      string `json:"flux_quantity"`
	FluxUnit  string `json:"flux"`
	Summary   string `json:"summary_u"` // unit of u in the summary (°C when the file used degC)
	Sources   string `json:"sources,omitempty"`
	LossesAre string `json:"losses,omitempty"`
}

func physicalUnits(ph *graphpde.Physical) *unitsOut {
	if ph == nil {
		return nil
	}
	return &unitsOut{Model: ph.Model, Field: ph.Field, U: orDash(ph.FieldUnit), Flux: ph.Flux, FluxUnit: orDash(ph.FluxUnit),
		Summary: orDash(ph.ShownUnit()), Sources: ph.Source, LossesAre: ph.Loss}
}

func orDash(s string) string {
	if s == "" {
		return "as given"
	}
	return s
}

// hazard reports whether the network's results can feed decisions about
// heat or electric current (and so carry the safety caution).
func hazard(net *graphpde.Network) bool { return net.Physical != nil && net.Physical.Hazard }

// fmtNum prints x with 6 significant digits in the shortest of %g's forms,
// never as "-0".
func fmtNum(x float64) string {
	if math.IsNaN(x) {
		return "not reported" // the notes say why
	}
	if x == 0 || math.Abs(x) < 1e-300 {
		return "0"
	}
	return strconv.FormatFloat(x, 'g', 6, 64)
}

// fmtSmall prints a round-off-sized number as "1.2e-16", and 0 as "0".
func fmtSmall(x float64) string {
	if math.IsNaN(x) {
		return "not reported"
	}
	if x == 0 {
		return "0"
	}
	return strconv.FormatFloat(x, 'e', 1, 64)
}

// fmtProb prints a probability: 6 significant digits, "0" and "1" plain,
// never "-0" or a long row of zeros.
func fmtProb(p float64) string {
	if math.IsNaN(p) {
		return "not reported"
	}
	return fmtNum(p)
}

// fmtErr prints a standard error with 2 significant digits; an exact 0
// (every walker did the same) as "0".
func fmtErr(se float64) string {
	if se == 0 {
		return "0"
	}
	return strconv.FormatFloat(se, 'g', 2, 64)
}

// withUnit appends a unit to a formatted number.
func withUnit(x float64, unit string) string {
	if unit == "" {
		return fmtNum(x)
	}
	return fmtNum(x) + " " + unit
}

// printSummary writes the summary for human readers.
func printSummary(w io.Writer, net *graphpde.Network, s summaryOut, rows int) {
	ph := net.Physical
	uu, fu := "", ""
	what, flux := "u", "flux"
	if ph != nil {
		uu, fu = ph.ShownUnit(), ph.FluxUnit
		what, flux = ph.Field, ph.Flux
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "summary")
	if len(s.Fixed) > 0 {
		tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
		fmt.Fprintf(tw, "  supplied by\t%s\t%s into the network\n", what, flux)
		for _, f := range s.Fixed {
			fmt.Fprintf(tw, "  %s (%s)\t%s\t%s\n", f.ID, f.Kind, withUnit(float64(f.U), uu), withUnit(float64(f.Drawn), fu))
		}
		tw.Flush()
	}
	for _, o := range s.Open {
		dir := "carried in"
		if o.Carried < 0 {
			dir = "carried out"
		}
		fmt.Fprintf(w, "  open end %s: %s %s\n", o.ID, dir, withUnit(math.Abs(float64(o.Carried)), fu))
	}
	if b := s.Balance; b != nil {
		srcName, lossName := "sources", "losses"
		if ph != nil && ph.Source != "" {
			srcName = "sources (" + ph.Source + ")"
		}
		if ph != nil && ph.Loss != "" {
			lossName = "losses (" + ph.Loss + ")"
		}
		fmt.Fprintf(w, "  balance: %s %s + supplied %s", srcName, withUnit(float64(b.Sources), fu), withUnit(float64(b.FromFixed), fu))
		switch {
		case b.CarriedIn > 0:
			fmt.Fprintf(w, " + carried in %s", withUnit(float64(b.CarriedIn), fu))
		case b.CarriedIn < 0:
			fmt.Fprintf(w, " − carried out %s", withUnit(-float64(b.CarriedIn), fu))
		}
		fmt.Fprintf(w, " = %s %s", lossName, withUnit(float64(b.Losses), fu))
		if b.Drift != 0 {
			fmt.Fprintf(w, " + drift transport %s", withUnit(float64(b.Drift), fu))
		}
		fmt.Fprintf(w, "\n  imbalance %s%s (relative %s)\n", fmtSmall(float64(b.Imbalance)), strings.TrimRight(" "+fu, " "), fmtSmall(float64(b.RelImbalance)))
	} else if s.Note != "" {
		fmt.Fprintf(w, "  balance: %s\n", s.Note)
	}
	hiName, loName := "highest", "lowest"
	if ph != nil && ph.Field == "temperature" {
		hiName, loName = "hottest point", "coldest point"
	}
	fmt.Fprintf(w, "  %s: %s at %s; %s: %s at %s\n", hiName, withUnit(float64(s.Highest.U), uu), s.Highest.At,
		loName, withUnit(float64(s.Lowest.U), uu), s.Lowest.At)
	n := len(s.Extremes)
	if rows >= 0 && n > rows {
		n = rows
	}
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	xu := ""
	if ph != nil {
		xu = " [m]"
	}
	fmt.Fprintf(tw, "  edge\tmax%s\tat x%s\tmin%s\tat x%s\n", bracket(uu), xu, bracket(uu), xu)
	grid, flat := false, false
	for _, x := range s.Extremes[:n] {
		mark := ""
		if !x.Exact {
			mark, grid = "*", true
		}
		mmax, mmin := mark, mark
		if x.Flat {
			flat = true
			if x.inner > 0 {
				mmax += "~"
			} else {
				mmin += "~"
			}
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s%s\t%s\t%s%s\n", x.ID, fmtNum(float64(x.Max)), fmtNum(float64(x.AtMax)), mmax,
			fmtNum(float64(x.Min)), fmtNum(float64(x.AtMin)), mmin)
	}
	tw.Flush()
	more(w, n, len(s.Extremes), "edges")
	if flat {
		fmt.Fprintln(w, "  (~ the field is flat there: within 1e-9 of its extreme over more than 1% of the edge, so the place is not sharp)")
	}
	if grid {
		fmt.Fprintln(w, "  (* on a grid edge: the best grid point, refined by a parabola; elsewhere located on the exact solution)")
	}
}

func bracket(u string) string {
	if u == "" {
		return ""
	}
	return " [" + strings.TrimSpace(u) + "]"
}
