package compare

import (
	"bytes"
	"errors"
	"fmt"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Colours of the cross-check figures: the PDE in deep blue-green, the
// walkers in burnt orange, the walker confidence band in a pale tint of it.
var (
	pdeColour    = color.NRGBA{R: 0x1f, G: 0x5c, B: 0x6b, A: 0xff}
	walkerColour = color.NRGBA{R: 0xb8, G: 0x4f, B: 0x13, A: 0xff}
	bandColour   = color.NRGBA{R: 0xf2, G: 0xc9, B: 0xa5, A: 0xa0}
	capColour    = color.NRGBA{R: 0x70, G: 0x70, B: 0x70, A: 0xff}
)

// Figure size of every cross-check figure.
const (
	figWidth  = 16 * vg.Centimeter
	figHeight = 10 * vg.Centimeter
)

// DKWEpsilon returns the half-width ε = sqrt(ln(2/level)/(2n)) of the
// simultaneous confidence band F_n ± ε for a distribution function from n
// observations: P(sup_t |F_n(t) − F(t)| > ε) ≤ level for every F
// (Dvoretzky, Kiefer & Wolfowitz 1956, with the constant 2 of Massart 1990,
// Ann. Probab. 18:1269–1283 — from memory). It returns +Inf for n ≤ 0 and
// panics unless 0 < level < 1. Cost O(1).
func DKWEpsilon(level float64, n int) float64 {
	if !(level > 0 && level < 1) {
		panic(fmt.Sprintf("compare: DKWEpsilon: level %g outside (0, 1)", level))
	}
	if n <= 0 {
		return math.Inf(1)
	}
	return math.Sqrt(math.Log(2/level) / (2 * float64(n)))
}

// PlotSurvival draws the PDE survival function S(t) = P(τ > t), the walkers'
// empirical survival function (a step function) and its simultaneous
// 1 − level confidence band (DKWEpsilon), and saves the figure to path. The
// format follows the extension of path (.svg, .png, .pdf, .eps, …, as
// gonum/plot's Save). It is PlotSurvivalCensored with no censoring.
func PlotSurvival(path string, survival func(t float64) float64, times []float64, level float64) error {
	return PlotSurvivalCensored(path, survival, times, 0, 0, level)
}

// PlotSurvivalCensored is PlotSurvival for walkers censored at the time cap
// censoredAt (censored of them still out; 0 and 0 for none). The empirical
// survival #{τ_i > t}/n, n = len(times) + censored, is drawn up to the cap and
// the cap is marked; the band stays valid there (it is the DKW band of
// min(τ, t_c)). With more than 2000 walkers the step function is drawn on a
// grid of 1000 times (finer than the figure can show). times is not
// modified. It returns an error if level is outside (0, 1), there are no
// walkers, a time is NaN, censored walkers come without a cap, or the file
// cannot be written. Cost O(n log n).
func PlotSurvivalCensored(path string, survival func(t float64) float64, times []float64, censoredAt float64, censored int, level float64) error {
	if !(level > 0 && level < 1) {
		return fmt.Errorf("survival plot: band level %g must lie strictly between 0 and 1", level)
	}
	capped := censoredAt > 0 && !math.IsInf(censoredAt, 1)
	if censored < 0 || (censored > 0 && !capped) {
		return fmt.Errorf("survival plot: %d censored walkers need a positive finite time cap, got %g", censored, censoredAt)
	}
	ys := make([]float64, 0, len(times))
	for _, t := range times {
		switch {
		case math.IsNaN(t):
			return errors.New("survival plot: a walker exit time is NaN")
		case capped && t > censoredAt:
			censored++
		default:
			ys = append(ys, t)
		}
	}
	n := len(ys) + censored
	if n == 0 {
		return errors.New("survival plot: no walker exit times")
	}
	slices.Sort(ys)

	// Horizontal extent: the cap, or the empirical 99.9% point.
	tmax := censoredAt
	if !capped {
		i := int(math.Ceil(0.999*float64(n))) - 1
		tmax = ys[max(0, min(i, len(ys)-1))]
	}
	if !(tmax > 0) {
		tmax = 1
	}

	// Empirical survival as a staircase.
	nf := float64(n)
	var stairs plotter.XYs
	if len(ys) <= 2000 {
		stairs = append(stairs, plotter.XY{X: 0, Y: 1})
		for i, y := range ys {
			if y > tmax {
				break
			}
			stairs = append(stairs, plotter.XY{X: y, Y: 1 - float64(i)/nf}, plotter.XY{X: y, Y: 1 - float64(i+1)/nf})
		}
		last := stairs[len(stairs)-1].Y
		stairs = append(stairs, plotter.XY{X: tmax, Y: last})
	} else {
		const grid = 1000
		prev := 1.0
		stairs = append(stairs, plotter.XY{X: 0, Y: 1})
		for j := 1; j <= grid; j++ {
			t := tmax * float64(j) / grid
			k, _ := slices.BinarySearch(ys, math.Nextafter(t, math.Inf(1)))
			s := 1 - float64(k)/nf
			if s != prev {
				stairs = append(stairs, plotter.XY{X: t, Y: prev}, plotter.XY{X: t, Y: s})
				prev = s
			}
		}
		stairs = append(stairs, plotter.XY{X: tmax, Y: prev})
	}

	// DKW band around the staircase, clipped to [0, 1].
	eps := DKWEpsilon(level, n)
	band := make(plotter.XYs, 0, 2*len(stairs))
	for _, p := range stairs {
		band = append(band, plotter.XY{X: p.X, Y: math.Min(1, p.Y+eps)})
	}
	for i := len(stairs) - 1; i >= 0; i-- {
		p := stairs[i]
		band = append(band, plotter.XY{X: p.X, Y: math.Max(0, p.Y-eps)})
	}

	// PDE curve.
	const samples = 400
	curve := make(plotter.XYs, samples+1)
	for j := range curve {
		t := tmax * float64(j) / samples
		s := survival(t)
		if math.IsNaN(s) || math.IsInf(s, 0) {
			return fmt.Errorf("survival plot: the PDE survival function gives %g at t = %g", s, t)
		}
		curve[j] = plotter.XY{X: t, Y: s}
	}

	p := plot.New()
	p.Title.Text = "Exit-time survival P(τ > t): PDE and walkers"
	p.X.Label.Text = "time t"
	p.Y.Label.Text = "P(τ > t)"
	p.X.Min, p.X.Max = 0, tmax
	if capped {
		p.X.Max = 1.04 * tmax // keep the cap mark off the frame
	}
	p.Y.Min, p.Y.Max = 0, 1.02
	p.Add(plotter.NewGrid())

	poly, err := plotter.NewPolygon(band)
	if err != nil {
		return fmt.Errorf("survival plot: %w", err)
	}
	poly.Color = bandColour
	poly.LineStyle.Width = 0
	stairLine, err := plotter.NewLine(stairs)
	if err != nil {
		return fmt.Errorf("survival plot: %w", err)
	}
	stairLine.Color = walkerColour
	stairLine.Width = vg.Points(1.3)
	pdeLine, err := plotter.NewLine(curve)
	if err != nil {
		return fmt.Errorf("survival plot: %w", err)
	}
	pdeLine.Color = pdeColour
	pdeLine.Width = vg.Points(1.6)
	pdeLine.Dashes = []vg.Length{vg.Points(6), vg.Points(3)}
	p.Add(poly, stairLine, pdeLine)

	p.Legend.Add("PDE", pdeLine)
	p.Legend.Add(fmt.Sprintf("walkers (n = %d)", n), stairLine)
	p.Legend.Add(fmt.Sprintf("%s simultaneous band (DKW, ±%.3f)", percent(1-level), eps), poly)
	if capped {
		mark, err := plotter.NewLine(plotter.XYs{{X: censoredAt, Y: 0}, {X: censoredAt, Y: 1.02}})
		if err != nil {
			return fmt.Errorf("survival plot: %w", err)
		}
		mark.Color = capColour
		mark.Dashes = []vg.Length{vg.Points(2), vg.Points(2)}
		p.Add(mark)
		p.Legend.Add(fmt.Sprintf("time cap (%d censored)", censored), mark)
	}
	p.Legend.Top = true
	p.Legend.XOffs = -vg.Points(6)
	if capped {
		p.Legend.XOffs = -vg.Points(18) // clear of the cap mark
	}
	p.Legend.YOffs = -vg.Points(6)

	if err := save(p, path); err != nil {
		return fmt.Errorf("survival plot: %w", err)
	}
	return nil
}

// PlotHits draws, for each absorbing node names[i], the PDE hitting
// probability pde[i] (an open diamond) and the walker frequency walker[i]
// (a filled disc) with a ±2·stderr[i] error bar, side by side, and saves the
// figure to path (format from the extension, as PlotSurvival). It panics if
// the slice lengths differ and returns an error if there are no nodes, a value
// is not finite, or the file cannot be written. Cost O(len(names)).
func PlotHits(path string, names []string, pde, walker, stderr []float64) error {
	k := len(names)
	if len(pde) != k || len(walker) != k || len(stderr) != k {
		panic("compare: PlotHits: slice length mismatch")
	}
	if k == 0 {
		return errors.New("hit plot: no absorbing nodes")
	}
	const offset = 0.12 // horizontal separation of the PDE and walker marks, in category widths
	pts := make(plotter.XYs, k)
	wpts := make(plotter.XYs, k)
	errs := make(plotter.YErrors, k)
	top := 1.0
	for i := range names {
		for _, v := range []float64{pde[i], walker[i], stderr[i]} {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("hit plot: value %g at node %q is not finite", v, names[i])
			}
		}
		pts[i] = plotter.XY{X: float64(i) - offset, Y: pde[i]}
		wpts[i] = plotter.XY{X: float64(i) + offset, Y: walker[i]}
		errs[i].Low, errs[i].High = 2*stderr[i], 2*stderr[i]
		top = math.Max(top, math.Max(pde[i], walker[i]+2*stderr[i]))
	}

	p := plot.New()
	p.Title.Text = "Where the walkers end: hitting probabilities"
	p.X.Label.Text = "absorbing node"
	p.Y.Label.Text = "probability"
	p.NominalX(names...)
	p.X.Min, p.X.Max = -0.6, float64(k)-0.4
	p.Y.Min, p.Y.Max = 0, top*1.04
	p.Add(plotter.NewGrid())

	pdeMarks, err := plotter.NewScatter(pts)
	if err != nil {
		return fmt.Errorf("hit plot: %w", err)
	}
	pdeMarks.GlyphStyle = draw.GlyphStyle{Color: pdeColour, Radius: vg.Points(5), Shape: diamondGlyph{}}
	bars, err := plotter.NewYErrorBars(struct {
		plotter.XYs
		plotter.YErrors
	}{wpts, errs})
	if err != nil {
		return fmt.Errorf("hit plot: %w", err)
	}
	bars.Color = walkerColour
	bars.Width = vg.Points(1.2)
	walkMarks, err := plotter.NewScatter(wpts)
	if err != nil {
		return fmt.Errorf("hit plot: %w", err)
	}
	walkMarks.GlyphStyle = draw.GlyphStyle{Color: walkerColour, Radius: vg.Points(3.5), Shape: draw.CircleGlyph{}}
	p.Add(bars, walkMarks, pdeMarks)
	p.Legend.Add("PDE", pdeMarks)
	p.Legend.Add("walkers ± 2 s.e.", walkMarks)
	p.Legend.Top = true

	if err := save(p, path); err != nil {
		return fmt.Errorf("hit plot: %w", err)
	}
	return nil
}

// diamondGlyph is an open diamond (a square standing on a corner).
type diamondGlyph struct{}

// DrawGlyph implements draw.GlyphDrawer.
func (diamondGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(1.4)})
	r := sty.Radius
	var path vg.Path
	path.Move(vg.Point{X: pt.X, Y: pt.Y + r})
	path.Line(vg.Point{X: pt.X + r, Y: pt.Y})
	path.Line(vg.Point{X: pt.X, Y: pt.Y - r})
	path.Line(vg.Point{X: pt.X - r, Y: pt.Y})
	path.Close()
	c.Stroke(path)
}

// save writes p to path in the format of its extension. SVG files name
// their fonts instead of embedding them (WriteSVG).
func save(p *plot.Plot, path string) error {
	if !strings.EqualFold(filepath.Ext(path), ".svg") {
		return p.Save(figWidth, figHeight, path)
	}
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := WriteSVG(f, p, figWidth, figHeight); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// WriteSVG writes p as an SVG of the given size that references its fonts
// instead of embedding them (an embedded Liberation face costs about
// 0.5 MB per figure): the text was measured with Liberation Serif, and the
// font-family list falls back to Times New Roman and Times, whose metrics
// Liberation Serif shares, so the layout holds where Liberation is not
// installed.
func WriteSVG(w io.Writer, p *plot.Plot, width, height vg.Length) error {
	c := vgsvg.NewWith(vgsvg.UseWH(width, height), vgsvg.EmbedFonts(false))
	p.Draw(draw.New(c))
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return err
	}
	out := strings.ReplaceAll(buf.String(), "font-family:Liberation Serif;", "font-family:'Liberation Serif','Times New Roman',Times,serif;")
	_, err := io.WriteString(w, out)
	return err
}
