package crosscheck

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

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
	return PositionChecksBias(net, res, nil, dens)
}

// posBiasFactor turns the difference between the walkers and the finer run
// (half the step) into an estimate of the walkers' bias in their places,
// for a bias of order 1/2 in the step: coarse − exact ≈ c·sqrt(h), so
// coarse − fine ≈ c·sqrt(h)·(1 − 1/sqrt 2) and the bias is that difference
// times 1/(1 − 1/sqrt 2) ≈ 3.41 (derived). Places near a record time come
// from small approximate node visits and Euler steps whose error shrinks
// like the square root of the step (measured on a ring with a drifting
// edge: KS distance 0.028, 0.018, 0.014, 0.011, 0.0066 at steps 4e-3 …
// 2.5e-4), so the first-order factor 2 under-estimated it by about half and
// gave a false "disagree" at default settings.
const posBiasFactor = 1 / (1 - 1/math.Sqrt2)

// PositionChecksBias is PositionChecks widened by the estimated bias of
// the walkers' places when fine, a second run with the same seed at half
// the step (and star fraction) that also recorded positions, is not nil
// (docs/walkers.md §10). With a bias of order 1/2 in the step (see
// posBiasFactor, F ≈ 3.41), coarse − exact ≈ F·(coarse − fine), so per time:
//
//   - the KS check: b = F·D(coarse, fine), the largest gap between the two
//     runs' laws along the same line (held and ended walkers off it); the
//     walkers' distance to the forward law is reduced by b before its
//     p-value is taken, and b is the check's Slack (added to the
//     difference it could hide, so a bias above the resolution makes the
//     verdict inconclusive rather than agree);
//   - each proportion: its bias b = F·(p_c − p_f) and the standard error
//     of b, F·sqrt(se_c² + se_f²), are added in quadrature to its
//     standard error (as widenByBias in the command does for values).
//
// b includes the two runs' own noise, so the widening errs on the side of
// "inconclusive"; a difference far beyond it, such as a wrong junction
// condition, still disagrees.
func PositionChecksBias(net montecarlo.Network, res, fine *montecarlo.Result, dens []Density) ([]compare.Check, []string, error) {
	if fine != nil && len(fine.PositionTimes) != len(res.PositionTimes) {
		fine = nil
	}
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
		coords, ended, unknown, held := placeRecords(net, l, firstEnd, sticky, res.Positions[k])
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
		onNet := compare.Proportion("on-network:t="+ts, math.Min(1, l.mass+heldPDE), int64(len(coords))+heldAll, n)
		c := compare.Distribution("position:t="+ts, coords, l.end, ended+unknown+int(heldAll), func(z float64) float64 { return 1 - l.cdf(z) })
		c.Note = l.where(net, c.At)
		if fine != nil && k < len(fine.Positions) {
			fc, _, _, fheld := placeRecords(net, l, firstEnd, sticky, fine.Positions[k])
			fn := int64(len(fine.Positions[k]))
			var fheldAll int64
			for _, v := range stickyNodes {
				fheldAll += fheld[v]
			}
			widenProportion(&onNet, int64(len(fc))+fheldAll, fn)
			for i, v := range stickyNodes {
				widenProportion(&heldChecks[i], fheld[v], fn)
			}
			if b := posBiasFactor * lineGap(coords, int(n), fc, int(fn)); b > 0 && c.N > 0 && !math.IsNaN(c.P) {
				c.Slack = b
				c.P = compare.CensoredKSPValue(math.Max(0, c.Stat-b), int(c.N), c.CensorAt)
				c.Note = strings.TrimSpace(c.Note + fmt.Sprintf("; widened by the estimated bias of the places, 3.4·D(walkers, finer run) = %.2g", b))
			}
		}
		checks = append(checks, onNet)
		checks = append(checks, heldChecks...)
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

// placeRecords sorts the records of one time into line coordinates (on an
// edge, or alive at a node without a capacity: at its first edge end),
// walkers ended, of unknown place, and held per node with a capacity.
func placeRecords(net montecarlo.Network, l *positionLaw, firstEnd [][2]int, sticky []bool, recs []montecarlo.Position) (coords []float64, ended, unknown int, held map[int]int64) {
	coords = make([]float64, 0, len(recs))
	held = make(map[int]int64)
	for _, p := range recs {
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
	return coords, ended, unknown, held
}

// lineGap returns the largest gap sup_z |A(z)/na − B(z)/nb| between the
// sub-distributions of two samples of line coordinates out of na and nb
// walkers (the rest off the line). a and b are sorted in place.
func lineGap(a []float64, na int, b []float64, nb int) float64 {
	if na == 0 || nb == 0 {
		return 0
	}
	slices.Sort(a)
	slices.Sort(b)
	var d float64
	i, j := 0, 0
	for i < len(a) || j < len(b) {
		var z float64
		switch {
		case j == len(b) || (i < len(a) && a[i] <= b[j]):
			z = a[i]
		default:
			z = b[j]
		}
		for i < len(a) && a[i] <= z {
			i++
		}
		for j < len(b) && b[j] <= z {
			j++
		}
		d = math.Max(d, math.Abs(float64(i)/float64(na)-float64(j)/float64(nb)))
	}
	return d
}

// widenProportion adds to a proportion check the estimated bias of the
// walkers, b = 2(p − p_fine), and its standard error in quadrature (see
// PositionChecksBias), and recomputes its z and p.
func widenProportion(c *compare.Check, hits, n int64) {
	if n == 0 || c.N == 0 || math.IsNaN(c.Walker) {
		return
	}
	pf := float64(hits) / float64(n)
	b := posBiasFactor * (c.Walker - pf)
	seb := posBiasFactor * math.Hypot(c.StdErr, compare.BinomialStdErr(pf, n))
	c.StdErr = math.Sqrt(c.StdErr*c.StdErr + b*b + seb*seb)
	if c.StdErr > 0 {
		c.Z = (c.Walker - c.PDE) / c.StdErr
		c.P = math.Erfc(math.Abs(c.Z) / math.Sqrt2)
	}
}
