package graphpde

import (
	"math"
)

// Mode is the shape of a simple eigenvalue's mode, normalised to a largest
// absolute value of 1 (positive there).
type Mode struct {
	Index int       // into SpectrumResult.Eigenvalues
	Nodes []float64 // value at every node (0 at fixed nodes)
	// Edges[e][i] is the value at x = i·Length/(len−1) along edge e.
	Edges [][]float64
}

// modeSamples is the number of points per edge of an exact mode.
const modeSamples = 33

// modeShift is the relative distance from the eigenvalue at which the
// mode is computed by one step of inverse iteration: the mode is amplified
// by about 1/modeShift against the rest of the start vector.
const modeShift = 1e-9

// pieceValue returns u(y) on a piece of length l of edge ed at λ (u” +
// q u = 0 with q = (λρ − c)/a) with end values ua, ub.
func pieceValue(ed *Edge, l, lam, ua, ub, y float64) float64 {
	q := (lam*ed.Rho - ed.C) / ed.A
	switch {
	case q > 0:
		k := math.Sqrt(q)
		return (ua*math.Sin(k*(l-y)) + ub*math.Sin(k*y)) / math.Sin(k*l)
	case q < 0:
		k := math.Sqrt(-q)
		// scaled: sinh(k s)/sinh(k l) = e^{k(s−l)}(1 − e^{−2ks})/(1 − e^{−2kl})
		r := func(s float64) float64 {
			return math.Exp(k*(s-l)) * (-math.Expm1(-2 * k * s)) / (-math.Expm1(-2 * k * l))
		}
		return ua*r(l-y) + ub*r(y)
	}
	return ua + (ub-ua)*y/l
}

// exactModes fills res.Modes for the simple eigenvalues (one step of
// inverse iteration on K(λ(1+modeShift)) of the count's system).
func exactModes(net *Network, w *wwSystem, res *SpectrumResult) error {
	for idx, ev := range res.Eigenvalues {
		if ev.Multiplicity != 1 {
			continue
		}
		lam := ev.Value + modeShift*math.Max(math.Abs(ev.Value), w.scale)
		if _, _, err := w.countAt(lam); err != nil {
			continue
		}
		x := w.x // K⁻¹e from countAt
		node := func(v int) float64 {
			if i := w.unk[v]; i >= 0 {
				return x[i]
			}
			return 0
		}
		m := Mode{Index: idx, Nodes: make([]float64, len(net.Nodes)), Edges: make([][]float64, len(net.Edges))}
		for v := range net.Nodes {
			m.Nodes[v] = node(v)
		}
		for e := range net.Edges {
			ed := &net.Edges[e]
			L := ed.Length
			_, _, _, dist := edgeDyn(ed, L, lam)
			sf := splitFrac(e)
			_, _, _, d1 := edgeDyn(ed, sf*L, lam)
			_, _, _, d2 := edgeDyn(ed, (1-sf)*L, lam)
			split := dist < 0.1 && dist < math.Min(d1, d2)
			u0, uL := node(ed.From), node(ed.To)
			vals := make([]float64, modeSamples)
			for i := range vals {
				y := L * float64(i) / float64(modeSamples-1)
				switch {
				case !split:
					vals[i] = pieceValue(ed, L, lam, u0, uL, y)
				case y <= sf*L:
					vals[i] = pieceValue(ed, sf*L, lam, u0, x[w.mid[e]], y)
				default:
					vals[i] = pieceValue(ed, (1-sf)*L, lam, x[w.mid[e]], uL, y-sf*L)
				}
			}
			m.Edges[e] = vals
		}
		normaliseMode(&m)
		res.Modes = append(res.Modes, m)
	}
	return nil
}

// gridModes fills res.Modes for the simple real eigenvalues of a symmetric
// grid problem.
func gridModes(sys *fvSystem, g *gridCounter, scale float64, res *SpectrumResult) {
	net := sys.net
	for idx, ev := range res.Eigenvalues {
		if ev.Multiplicity != 1 || ev.Imag != 0 {
			continue
		}
		lam := ev.Value + modeShift*math.Max(math.Abs(ev.Value), scale)
		if _, _, err := g.countAt(lam); err != nil {
			continue
		}
		x := g.x
		m := Mode{Index: idx, Nodes: make([]float64, len(net.Nodes)), Edges: make([][]float64, len(net.Edges))}
		for v := range net.Nodes {
			if i := sys.unk[v]; i >= 0 {
				m.Nodes[v] = x[i]
			}
		}
		for e := range net.Edges {
			n := sys.cells[e]
			vals := make([]float64, n+1)
			for i := range vals {
				if row, _ := sys.vertexUnknown(e, i); row >= 0 {
					vals[i] = x[row]
				}
			}
			m.Edges[e] = vals
		}
		normaliseMode(&m)
		res.Modes = append(res.Modes, m)
	}
}

// normaliseMode scales m to a largest absolute value of 1, positive at the
// first place (nodes, then edges) that is within 1e-6 of the largest.
func normaliseMode(m *Mode) {
	big := 0.0
	all := [][]float64{m.Nodes}
	all = append(all, m.Edges...)
	for _, vals := range all {
		for _, v := range vals {
			big = math.Max(big, math.Abs(v))
		}
	}
	if big == 0 || math.IsNaN(big) {
		return
	}
	sign := 1.0
find:
	for _, vals := range all {
		for _, v := range vals {
			if math.Abs(v) >= big*(1-1e-6) {
				sign = math.Copysign(1, v)
				break find
			}
		}
	}
	for _, vals := range all {
		for i := range vals {
			vals[i] = vals[i]*sign/big + 0 // (no −0)
		}
	}
}
