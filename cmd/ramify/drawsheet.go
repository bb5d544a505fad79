package main

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"strings"

	"github.com/ramify-dev/ramify/graphpde"
)

// sheetPanels is the largest number of snapshots drawn on one sheet.
const sheetPanels = 6

// writeSheet draws up to sheetPanels snapshots of a transient field as a
// small-multiples sheet (two columns), all on one colour scale so that the
// panels compare. The snapshots shown are spread evenly over the output
// times, the first and the last included.
func writeSheet(w io.Writer, net *graphpde.Network, title string, snaps []graphpde.Snapshot) error {
	if len(snaps) == 0 {
		return fmt.Errorf("no snapshots to draw")
	}
	pick := []int{0}
	if n := len(snaps); n > 1 {
		k := min(n, sheetPanels)
		pick = pick[:0]
		for i := range k {
			pick = append(pick, int(math.Round(float64(i)*float64(n-1)/float64(k-1))))
		}
	}
	show := net.Physical.Shown
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, i := range pick {
		for _, u := range snaps[i].Nodes {
			if !math.IsNaN(u) {
				lo, hi = min(lo, show(u)), max(hi, show(u))
			}
		}
		for _, vals := range snaps[i].Edges {
			for _, u := range vals {
				if !math.IsNaN(u) {
					lo, hi = min(lo, show(u)), max(hi, show(u))
				}
			}
		}
	}
	if lo > hi {
		lo, hi = 0, 1
	}
	xy, how := positions(net)
	const pw, ph = 500.0, 310.0 // a panel: the drawing at half size
	rows := (len(pick) + 1) / 2
	var b strings.Builder
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%g" height="%g" viewBox="0 0 %g %g" font-family="sans-serif" font-size="12">`+"\n", 2*pw, ph*float64(rows)+40, 2*pw, ph*float64(rows)+40)
	fmt.Fprintf(&b, `<rect width="100%%" height="100%%" fill="white"/><text x="12" y="26" font-size="18" font-weight="bold">%s</text>`+"\n", svgEscape(title))
	for k, i := range pick {
		sn := snaps[i]
		d := fieldDrawing(net, nil, fmt.Sprintf("t = %s", fmtNum(sn.T)), nil)
		d.value = func(e int, x float64) (float64, bool) { return snapValue(net, sn, e, x) }
		d.node = func(v int) (float64, bool) { return sn.Nodes[v], !math.IsNaN(sn.Nodes[v]) }
		d.xy, d.layout = xy, how
		d.fixed = &[2]float64{lo, hi}
		d.id = fmt.Sprintf("p%d", k)
		var panel bytes.Buffer
		if err := d.writeSVG(&panel); err != nil {
			return err
		}
		inner := panel.String()
		inner = inner[strings.Index(inner, ">")+1:] // drop the outer <svg ...> tag
		fmt.Fprintf(&b, `<svg x="%g" y="%g" width="%g" height="%g" viewBox="0 0 1000 620">%s`+"\n", float64(k%2)*pw, 40+float64(k/2)*ph, pw, ph, inner)
	}
	b.WriteString("</svg>\n")
	_, err := io.WriteString(w, b.String())
	return err
}

// snapValue interpolates a snapshot's grid values along edge e linearly.
func snapValue(net *graphpde.Network, sn graphpde.Snapshot, e int, x float64) (float64, bool) {
	vals := sn.Edges[e]
	n := len(vals) - 1
	if n < 1 {
		return math.NaN(), false
	}
	s := x / net.Edges[e].Length * float64(n)
	i := min(max(int(math.Floor(s)), 0), n-1)
	f := s - float64(i)
	u := (1-f)*vals[i] + f*vals[i+1]
	return u, !math.IsNaN(u)
}
