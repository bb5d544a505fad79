package crosscheck

import (
	"fmt"
	"math"
	"strconv"

	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/vertex"
)

// Density is the PDE's tracer at one time: per edge, the amount per unit
// length ρq at the equispaced points x_i = i·L/n, i = 0…n, of the forward
// solution for walkers released at the start (docs/time-and-spectrum.md
// §3), linear between the points; and per node the point mass held by its
// capacity (nil or 0 where it has none).
type Density struct {
	T     float64
	Edges [][]float64
	Nodes []float64
}

// positionLaw is a Density laid out along the network's fixed ordering:
// edge 0 from x = 0 to its length, then edge 1, and so on.
type positionLaw struct {
	off  []float64   // start of each edge on the line
	h    []float64   // grid spacing per edge
	q    [][]float64 // ρq at the points
	cum  [][]float64 // amount from the edge's start to each point
	base []float64   // amount before each edge
	end  float64     // total length of the line
	mass float64     // total amount on the network
}

func newPositionLaw(net montecarlo.Network, d *Density) (*positionLaw, error) {
	_, ne := net.Size()
	if len(d.Edges) != ne {
		return nil, fmt.Errorf("position density at t = %g: %d edges, the network has %d", d.T, len(d.Edges), ne)
	}
	l := &positionLaw{off: make([]float64, ne), h: make([]float64, ne), q: d.Edges, cum: make([][]float64, ne), base: make([]float64, ne)}
	for e := range ne {
		id, _, _, length, _, _ := net.WalkEdge(e)
		q := d.Edges[e]
		if len(q) < 2 {
			return nil, fmt.Errorf("position density at t = %g, edge %q: need at least 2 points", d.T, id)
		}
		for _, v := range q {
			if !(v >= -1e-9) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("position density at t = %g, edge %q: value %g is not a finite number ≥ 0", d.T, id, v)
			}
		}
		l.off[e], l.base[e] = l.end, l.mass
		h := length / float64(len(q)-1)
		l.h[e] = h
		c := make([]float64, len(q))
		for i := 1; i < len(q); i++ {
			c[i] = c[i-1] + h*(q[i-1]+q[i])/2
		}
		l.cum[e] = c
		l.end += length
		l.mass += c[len(c)-1]
	}
	return l, nil
}

// cdf returns the amount at coordinates below z (the line position).
func (l *positionLaw) cdf(z float64) float64 {
	if z <= 0 {
		return 0
	}
	if z >= l.end {
		return l.mass
	}
	e := len(l.off) - 1
	for e > 0 && l.off[e] > z {
		e--
	}
	x := z - l.off[e]
	q, h := l.q[e], l.h[e]
	j := min(int(x/h), len(q)-2)
	xi := x - float64(j)*h
	return l.base[e] + l.cum[e][j] + q[j]*xi + (q[j+1]-q[j])*xi*xi/(2*h)
}

// PositionChecks compares the walkers' places at res.PositionTimes with
// the forward densities dens (one per time, the same order). For each time
// T it returns two checks:
//
//   - "on-network:t=T": the fraction of walkers still on the network
//     (neither absorbed nor killed: on an edge or held at a node) against
//     the forward solution's total amount, a proportion;
//   - "held:NODE:t=T", per node with a capacity: the fraction of walkers
//     held there against the forward solution's point mass, a proportion;
//   - "position:t=T": the one-sample Kolmogorov–Smirnov test of the
//     walkers' places along the network's fixed ordering (edges in index
//     order, x along each) against the forward solution's cumulative
//     amount, the walkers that ended counted as an atom after the last
//     edge, which is the censored form of compare.Distribution (its null
//     law is that of a bridge over the part of the line that carries the
//     amount on the network).
//
// The KS check's At is the coordinate of the largest gap on that line, and
// its Note names the place as EDGE@X.
//
// Walkers held at a node with a capacity are off the line (with the ended
// ones in the KS test, whose law then carries the edges' amount only);
// walkers alive at another node are placed at the node's first edge end
// (a null set); walkers whose place is unknown (censored before the time) count with the ended
// ones, and notes say how many. Decide then applies the family-wise bound
// over these and any other checks.
func PositionChecks(net montecarlo.Network, res *montecarlo.Result, dens []Density) ([]compare.Check, []string, error) {
	if len(dens) != len(res.PositionTimes) {
		return nil, nil, fmt.Errorf("position check: %d densities for %d times", len(dens), len(res.PositionTimes))
	}
	nn, ne := net.Size()
	firstEnd := make([][2]int, nn) // per node: an edge and its side, or edge −1
	sticky := make([]bool, nn)     // a capacity holds walkers there
	var stickyNodes []int
	for v := range nn {
		firstEnd[v] = [2]int{-1, 0}
		_, law, ends, _ := net.WalkNode(v)
		if law.Kind == vertex.Balance && law.Capacity > 0 && len(ends) > 0 {
			sticky[v] = true
			stickyNodes = append(stickyNodes, v)
		}
	}
	for e := ne - 1; e >= 0; e-- {
		_, from, to, _, _, _ := net.WalkEdge(e)
		firstEnd[to] = [2]int{e, 1}
		firstEnd[from] = [2]int{e, 0}
	}
	var checks []compare.Check
	var notes []string
	for k, t := range res.PositionTimes {
		l, err := newPositionLaw(net, &dens[k])
		if err != nil {
			return nil, nil, err
		}
		ts := strconv.FormatFloat(t, 'g', 6, 64)
		n := int64(len(res.Positions[k]))
		coords := make([]float64, 0, len(res.Positions[k]))
		ended, unknown := 0, 0
		held := make(map[int]int64)
		for _, p := range res.Positions[k] {
			switch p.State {
			case montecarlo.OnEdge:
				coords = append(coords, l.off[p.Edge]+p.X)
			case montecarlo.AtNode:
				if sticky[p.Node] {
					held[int(p.Node)]++
					continue
				}
				fe := firstEnd[p.Node]
				if fe[0] < 0 {
					unknown++
					continue
				}
				_, _, _, length, _, _ := net.WalkEdge(fe[0])
				coords = append(coords, l.off[fe[0]]+float64(fe[1])*length)
			case montecarlo.Ended:
				ended++
			default:
				unknown++
			}
		}
		var heldAll int64
		var heldPDE float64
		var heldChecks []compare.Check
		for _, v := range stickyNodes {
			pde := 0.0
			if v < len(dens[k].Nodes) {
				pde = dens[k].Nodes[v]
			}
			if !(pde >= -1e-9) || math.IsInf(pde, 0) {
				return nil, nil, fmt.Errorf("position density at t = %g: point mass %g at a node is not a finite number ≥ 0", t, pde)
			}
			pde = math.Max(0, pde)
			heldAll += held[v]
			heldPDE += pde
			id, _, _, _ := net.WalkNode(v)
			heldChecks = append(heldChecks, compare.Proportion("held:"+id+":t="+ts, math.Min(1, pde), held[v], n))
		}
		checks = append(checks, compare.Proportion("on-network:t="+ts, math.Min(1, l.mass+heldPDE), int64(len(coords))+heldAll, n))
		checks = append(checks, heldChecks...)
		c := compare.Distribution("position:t="+ts, coords, l.end, ended+unknown+int(heldAll), func(z float64) float64 { return 1 - l.cdf(z) })
		c.Note = l.where(net, c.At)
		checks = append(checks, c)
		if unknown > 0 {
			notes = append(notes, fmt.Sprintf("at t = %s, %d walkers had no known place (still out at the time cap, or alive at a node without edges) and count as ended", ts, unknown))
		}
	}
	if res.PositionApprox {
		notes = append(notes, "near the position times, walkers visit junctions with drift, varying coefficients or unequal decay by small approximate stars (an error of the order of their radius, which shrinks with the time left)")
	}
	if res.PositionLate > 0 {
		notes = append(notes, fmt.Sprintf("%d position records were taken just after their time (a step overshot it)", res.PositionLate))
	}
	return checks, notes, nil
}

// where names the place of the line coordinate z as a note: "largest gap
// at EDGE@X", or at the end of the line, where the gap is in the share
// still on the network.
func (l *positionLaw) where(net montecarlo.Network, z float64) string {
	if math.IsNaN(z) {
		return ""
	}
	if z >= l.end {
		return "largest gap at the end of the network: in the share still on it"
	}
	e := len(l.off) - 1
	for e > 0 && l.off[e] > z {
		e--
	}
	id, _, _, _, _, _ := net.WalkEdge(e)
	return fmt.Sprintf("largest gap at %s@%.4g (edges in file order, x along each)", id, z-l.off[e])
}
