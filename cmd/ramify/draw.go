package main

import (
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"strings"

	"gonum.org/v1/gonum/graph/layout"
	"gonum.org/v1/gonum/graph/simple"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// The drawing of a network coloured by a field: an SVG of our own making,
// with the generic font family "sans-serif" (no embedded font) so that a
// figure of a few dozen edges stays a few tens of kilobytes.

// drawing is what one figure shows.
type drawing struct {
	net    *graphpde.Network
	title  string
	value  func(e int, x float64) (float64, bool) // the field along edge e; false: unknown
	node   func(v int) (float64, bool)
	unit   string // the unit shown on the colour bar
	show   func(float64) float64
	marks  []mark // probes, start points
	layout string // "file positions" or "computed layout"
	xy     [][2]float64
	// fixed, when set, is the colour range [lo, hi] in shown units (shared
	// by the panels of a sheet); otherwise the field's own range.
	fixed *[2]float64
	id    string // suffix of the ids in the SVG (unique per panel)
	// push, when set, gives the direction a controlled edge pushes at x
	// (+1 towards its To node, −1 towards From, 0 neither): drawn as
	// chevrons along the edge (controls.go).
	push func(e int, x float64) int
	// legend, when set, is one more line under the drawing's subtitle.
	legend string
}

// mark is a labelled point drawn on top of the network.
type mark struct {
	at    graphpde.Point
	label string
}

// segments is the number of coloured pieces each edge is drawn with.
const segments = 24

// fieldDrawing builds the drawing of a steady solution.
func fieldDrawing(net *graphpde.Network, sol *graphpde.Solution, title string, marks []mark) *drawing {
	d := &drawing{net: net, title: title, marks: marks, show: net.Physical.Shown}
	if sol == nil {
		d.value = func(int, float64) (float64, bool) { return 0, false }
		d.node = func(int) (float64, bool) { return 0, false }
	} else {
		d.setSolution(sol)
	}
	if ph := net.Physical; ph != nil {
		d.unit = ph.Field
		if u := ph.ShownUnit(); u != "" {
			d.unit += " [" + u + "]"
		}
	} else {
		d.unit = "u"
	}
	return d
}

// setSolution colours the drawing by a steady solution.
func (d *drawing) setSolution(sol *graphpde.Solution) {
	d.value = func(e int, x float64) (float64, bool) {
		u, err := sol.At(graphpde.Point{Node: -1, Edge: e, X: x})
		return u, err == nil && !math.IsNaN(u)
	}
	d.node = func(v int) (float64, bool) { return sol.U[v], !math.IsNaN(sol.U[v]) }
}

// positions returns the drawing position of every node: the file's xy
// when every node has one, else a force-directed layout (Eades' spring
// embedder as implemented by gonum's graph/layout, with a fixed seed so the
// same network always gets the same picture).
func positions(net *graphpde.Network) ([][2]float64, string) {
	xy := make([][2]float64, len(net.Nodes))
	all := true
	for v, nd := range net.Nodes {
		if nd.XY == nil {
			all = false
			break
		}
		xy[v] = *nd.XY
	}
	if all && len(net.Nodes) > 0 {
		return xy, "positions from the file"
	}
	g := simple.NewUndirectedGraph()
	for v := range net.Nodes {
		g.AddNode(simple.Node(v))
	}
	for _, e := range net.Edges {
		if e.From != e.To && !g.HasEdgeBetween(int64(e.From), int64(e.To)) {
			g.SetEdge(g.NewEdge(simple.Node(e.From), simple.Node(e.To)))
		}
	}
	eades := layout.EadesR2{Repulsion: 1, Rate: 0.05, Updates: 200, Theta: 0.2, Src: rand.NewPCG(1, 2)}
	opt := layout.NewOptimizerR2(g, eades.Update)
	for opt.Update() {
	}
	for v := range net.Nodes {
		c := opt.Coord2(int64(v))
		xy[v] = [2]float64{c.X, c.Y}
	}
	return xy, "layout computed (force-directed): the file gives no xy for some nodes"
}

// colour scale: a sequential map of our own, from dark indigo to light
// yellow through blue and green, with CIE L* rising evenly from 20 to 95 so
// that order reads from lightness alone (and so survives the common forms of
// colour blindness and grey-scale printing). Control points are in CIE
// L*a*b* (D65) and interpolated linearly there.
var scaleLab = [][3]float64{
	{20, 28, -45},
	{38.75, 12, -48},
	{57.5, -20, -22},
	{76.25, -42, 30},
	{95, -16, 75},
}

// colourAt returns the colour of t ∈ [0, 1] as "#rrggbb".
func colourAt(t float64) string {
	if math.IsNaN(t) {
		return "#bbbbbb"
	}
	t = min(max(t, 0), 1)
	s := t * float64(len(scaleLab)-1)
	i := min(int(s), len(scaleLab)-2)
	f := s - float64(i)
	var lab [3]float64
	for k := range 3 {
		lab[k] = (1-f)*scaleLab[i][k] + f*scaleLab[i+1][k]
	}
	r, g, b := labToSRGB(lab)
	return fmt.Sprintf("#%02x%02x%02x", r, g, b)
}

// labToSRGB converts CIE L*a*b* (D65 white) to 8-bit sRGB, clipping
// out-of-gamut channels (formulas of CIE 15:2004 and IEC 61966-2-1).
func labToSRGB(lab [3]float64) (r, g, b uint8) {
	lin := labToLinear(lab)
	var out [3]uint8
	for k, c := range lin {
		c = min(max(c, 0), 1)
		if c <= 0.0031308 {
			c *= 12.92
		} else {
			c = 1.055*math.Pow(c, 1/2.4) - 0.055
		}
		out[k] = uint8(math.Round(255 * c))
	}
	return out[0], out[1], out[2]
}

// labToLinear converts CIE L*a*b* (D65) to linear sRGB, unclipped.
func labToLinear(lab [3]float64) [3]float64 {
	fy := (lab[0] + 16) / 116
	fx := fy + lab[1]/500
	fz := fy - lab[2]/200
	inv := func(t float64) float64 {
		if t > 6.0/29 {
			return t * t * t
		}
		return 3 * (6.0 / 29) * (6.0 / 29) * (t - 4.0/29)
	}
	x, y, z := 0.95047*inv(fx), inv(fy), 1.08883*inv(fz)
	return [3]float64{
		3.2404542*x - 1.5371385*y - 0.4985314*z,
		-0.9692660*x + 1.8760108*y + 0.0415560*z,
		0.0556434*x - 0.2040259*y + 1.0572252*z,
	}
}

// svgEscape escapes text for an SVG text node or attribute.
func svgEscape(s string) string {
	return strings.NewReplacer("&", "&amp;", "<", "&lt;", ">", "&gt;", `"`, "&quot;").Replace(s)
}

// writeSVG writes the drawing. Cost O(edges·segments).
func (d *drawing) writeSVG(w io.Writer) error {
	const (
		width, height = 1000.0, 620.0
		left, top     = 50.0, 70.0
		plotW, plotH  = 680.0, 500.0
		labelRight    = 830.0 // labels stay left of the colour bar
	)
	net := d.net
	if d.xy == nil {
		d.xy, d.layout = positions(net)
	}
	// Range of the field (shown units) over nodes and edge samples.
	lo, hi := math.Inf(1), math.Inf(-1)
	seen := func(u float64) {
		if !math.IsNaN(u) && !math.IsInf(u, 0) {
			lo, hi = min(lo, u), max(hi, u)
		}
	}
	for v := range net.Nodes {
		if u, ok := d.node(v); ok {
			seen(d.show(u))
		}
	}
	for e, ed := range net.Edges {
		for k := 0; k <= segments; k++ {
			if u, ok := d.value(e, ed.Length*float64(k)/segments); ok {
				seen(d.show(u))
			}
		}
	}
	if lo > hi {
		lo, hi = 0, 1
	}
	if d.fixed != nil {
		lo, hi = d.fixed[0], d.fixed[1]
	}
	span := hi - lo
	norm := func(u float64) float64 {
		if span <= 1e-12*math.Max(math.Abs(hi), math.Abs(lo)) {
			return 0.5
		}
		return (u - lo) / span
	}
	// Map positions into the plot box, keeping the aspect ratio.
	minX, minY, maxX, maxY := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	for _, p := range d.xy {
		minX, maxX = min(minX, p[0]), max(maxX, p[0])
		minY, maxY = min(minY, p[1]), max(maxY, p[1])
	}
	sx, sy := maxX-minX, maxY-minY
	sc := math.Min(plotW/math.Max(sx, 1e-300), plotH/math.Max(sy, 1e-300))
	if sx == 0 && sy == 0 {
		sc = 1
	}
	offX := left + (plotW-sc*sx)/2
	offY := top + (plotH-sc*sy)/2
	pos := func(p [2]float64) (float64, float64) {
		return offX + sc*(p[0]-minX), offY + sc*(maxY-p[1]) // y up
	}
	var b strings.Builder
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%g" height="%g" viewBox="0 0 %g %g" font-family="sans-serif" font-size="12">`+"\n", width, height, width, height)
	fmt.Fprintf(&b, `<rect width="100%%" height="100%%" fill="white"/>`+"\n")
	fmt.Fprintf(&b, `<text x="%g" y="24" font-size="16" font-weight="bold">%s</text>`+"\n", left, svgEscape(d.title))
	fmt.Fprintf(&b, `<text x="%g" y="42" fill="#555">%s; %s</text>`+"\n", left, svgEscape(d.unit), svgEscape(d.layout))
	if d.legend != "" {
		fmt.Fprintf(&b, `<text x="%g" y="58" fill="#555">%s</text>`+"\n", left, svgEscape(d.legend))
	}
	// Edges: each a polyline of coloured pieces (curved when parallel edges
	// share the same two nodes; a loop for a self-loop).
	count := map[[2]int]int{}
	for e, ed := range net.Edges {
		a, c := ed.From, ed.To
		key := [2]int{min(a, c), max(a, c)}
		k := count[key]
		count[key]++
		x0, y0 := pos(d.xy[a])
		x1, y1 := pos(d.xy[c])
		path := func(t float64) (float64, float64) { // point at fraction t
			if a == c { // a loop of radius 18 px above the node
				ang := 2*math.Pi*t - math.Pi/2
				r := 18.0 * float64(k+1)
				return x0 + r*math.Cos(ang), y0 - r + r*math.Sin(ang)
			}
			// Quadratic Bézier bowed sideways for the k-th parallel edge.
			bow := 0.0
			if k > 0 {
				bow = float64((k+1)/2) * 22
				if k%2 == 1 {
					bow = -bow
				}
			}
			mx, my := (x0+x1)/2, (y0+y1)/2
			dx, dy := x1-x0, y1-y0
			n := math.Hypot(dx, dy)
			if n > 0 {
				mx, my = mx-dy/n*bow*2, my+dx/n*bow*2
			}
			u := 1 - t
			return u*u*x0 + 2*u*t*mx + t*t*x1, u*u*y0 + 2*u*t*my + t*t*y1
		}
		fmt.Fprintf(&b, `<g stroke-width="6" stroke-linecap="round"><title>edge %s (%s → %s)</title>`, svgEscape(ed.ID), svgEscape(net.Nodes[a].ID), svgEscape(net.Nodes[c].ID))
		for s := range segments {
			t0, t1 := float64(s)/segments, float64(s+1)/segments
			u, ok := d.value(e, ed.Length*(t0+t1)/2)
			col := colourAt(math.NaN())
			if ok {
				col = colourAt(norm(d.show(u)))
			}
			xa, ya := path(t0)
			xb, yb := path(t1)
			fmt.Fprintf(&b, `<line x1="%.1f" y1="%.1f" x2="%.1f" y2="%.1f" stroke="%s"/>`, xa, ya, xb, yb, col)
		}
		b.WriteString("</g>\n")
		if d.push != nil {
			drawPush(&b, d.push, e, ed.Length, path)
		}
	}
	// Nodes: fixed nodes as squares, balance nodes as circles; labels where
	// they do not overlap a label already placed.
	var boxes [][4]float64
	free := func(x, y, w, h float64) bool {
		if x < 0 || x+w > labelRight || y < top-14 || y+h > height {
			return false
		}
		for _, bx := range boxes {
			if x < bx[0]+bx[2] && bx[0] < x+w && y < bx[1]+bx[3] && bx[1] < y+h {
				return false
			}
		}
		boxes = append(boxes, [4]float64{x, y, w, h})
		return true
	}
	label := func(x, y float64, text string, colour string) {
		w := 6.6*float64(len([]rune(text))) + 4
		for _, off := range [][2]float64{{8, -8}, {8, 14}, {-8 - w, -8}, {-8 - w, 14}, {-w / 2, -12}, {-w / 2, 22}} {
			if free(x+off[0], y+off[1]-11, w, 14) {
				fmt.Fprintf(&b, `<text x="%.1f" y="%.1f" fill="%s">%s</text>`+"\n", x+off[0], y+off[1], colour, svgEscape(text))
				return
			}
		}
	}
	for v := range net.Nodes { // node markers first, so labels avoid them
		x, y := pos(d.xy[v])
		boxes = append(boxes, [4]float64{x - 7, y - 7, 14, 14})
	}
	for v, nd := range net.Nodes {
		x, y := pos(d.xy[v])
		u, ok := d.node(v)
		col := colourAt(math.NaN())
		if ok {
			col = colourAt(norm(d.show(u)))
		}
		if nd.Law.Kind == vertex.Fixed {
			fmt.Fprintf(&b, `<rect x="%.1f" y="%.1f" width="12" height="12" fill="%s" stroke="black" stroke-width="2"><title>fixed node %s</title></rect>`+"\n", x-6, y-6, col, svgEscape(nd.ID))
		} else {
			fmt.Fprintf(&b, `<circle cx="%.1f" cy="%.1f" r="5" fill="%s" stroke="black" stroke-width="1.2"><title>node %s</title></circle>`+"\n", x, y, col, svgEscape(nd.ID))
		}
		text := nd.ID
		if ok {
			text += " " + fmtNum(d.show(u))
		}
		label(x, y, text, "black")
	}
	for _, m := range d.marks {
		var x, y float64
		if m.at.Edge >= 0 {
			ed := net.Edges[m.at.Edge]
			x0, y0 := pos(d.xy[ed.From])
			x1, y1 := pos(d.xy[ed.To])
			t := m.at.X / ed.Length
			x, y = x0+t*(x1-x0), y0+t*(y1-y0)
		} else {
			x, y = pos(d.xy[m.at.Node])
		}
		fmt.Fprintf(&b, `<path d="M %.1f %.1f l 7 7 l -7 7 l -7 -7 z" transform="translate(0 -7)" fill="white" stroke="#c0392b" stroke-width="2"><title>%s</title></path>`+"\n", x, y, svgEscape(m.label))
		label(x, y, m.label, "#c0392b")
	}
	// Colour bar with five ticks.
	bx, by, bw, bh := 860.0, top+20, 22.0, 400.0
	fmt.Fprintf(&b, `<defs><linearGradient id="scale%s" x1="0" y1="1" x2="0" y2="0">`, d.id)
	for k := 0; k <= 16; k++ {
		t := float64(k) / 16
		fmt.Fprintf(&b, `<stop offset="%.4g" stop-color="%s"/>`, t, colourAt(t))
	}
	b.WriteString("</linearGradient></defs>\n")
	fmt.Fprintf(&b, `<rect x="%g" y="%g" width="%g" height="%g" fill="url(#scale%s)" stroke="black" stroke-width="0.8"/>`+"\n", bx, by, bw, bh, d.id)
	for k := 0; k <= 4; k++ {
		t := float64(k) / 4
		y := by + bh*(1-t)
		val := lo + t*(hi-lo)
		if span <= 1e-12*math.Max(math.Abs(hi), math.Abs(lo)) {
			if k != 2 {
				continue
			}
			val = lo
		}
		fmt.Fprintf(&b, `<line x1="%g" y1="%.1f" x2="%g" y2="%.1f" stroke="black"/><text x="%g" y="%.1f">%s</text>`+"\n", bx+bw, y, bx+bw+5, y, bx+bw+8, y+4, fmtNum(val))
	}
	fmt.Fprintf(&b, `<text x="%g" y="%g">%s</text>`+"\n", bx-10, by-10, svgEscape(d.unit))
	// Legend.
	ly := by + bh + 40
	fmt.Fprintf(&b, `<rect x="%g" y="%g" width="12" height="12" fill="white" stroke="black" stroke-width="2"/><text x="%g" y="%g">fixed node</text>`+"\n", bx-10, ly-10, bx+8, ly)
	fmt.Fprintf(&b, `<circle cx="%g" cy="%g" r="5" fill="white" stroke="black"/><text x="%g" y="%g">balance node</text>`+"\n", bx-4, ly+16, bx+8, ly+20)
	if len(d.marks) > 0 {
		fmt.Fprintf(&b, `<path d="M %g %g l 6 6 l -6 6 l -6 -6 z" fill="white" stroke="#c0392b" stroke-width="2"/><text x="%g" y="%g">probe or start</text>`+"\n", bx-4, ly+28, bx+8, ly+40)
	}
	b.WriteString("</svg>\n")
	_, err := io.WriteString(w, b.String())
	return err
}

// writeDrawing saves the drawing to path (never over an input) and says
// so on stderr.
func writeDrawing(path string, inputs []string, d *drawing, cmd string, stderr io.Writer) error {
	replaced, err := saveFile(path, inputs, d.writeSVG)
	if err != nil {
		return fmt.Errorf("--draw %s: %w", path, err)
	}
	wrote(stderr, cmd, path, replaced, fmt.Sprintf("drawing of %s", plural(len(d.net.Edges), "edge")))
	return nil
}
