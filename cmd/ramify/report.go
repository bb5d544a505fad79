package main

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"html"
	"io"
	"math"
	"slices"
	"strings"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/montecarlo/crosscheck"
)

const reportExamples = `  ramify report examples/fork.toml --from fork > fork.html
  ramify report examples/deicing-wire.toml --from tee --particles 20000 --out wire.html
`

// runReport writes one self-contained HTML page (no scripts, no external
// files, fonts or styles: viewable offline) with the drawing, the steady
// tables and summary, the exit law and the cross-check verdict.
func runReport(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("report", "report [flags] FILE --from POINT", reportExamples, stderr)
	wf := addWalkFlags(fs)
	method := fs.String("method", "auto", "PDE edge elements: exact, grid, or auto")
	out := fs.String("out", "", "write the page to this file instead of standard output")
	file, code, ok := parseFlags(fs, args, stderr, true)
	if !ok {
		return code
	}
	if *wf.from == "" {
		return badFlag(stderr, "report", fmt.Errorf("--from POINT is required (NODE or EDGE@X)"))
	}
	m, err := graphpde.ParseMethod(*method)
	if err != nil {
		return badFlag(stderr, "report", err)
	}
	set, err := wf.settings(stderr)
	if err != nil {
		return badFlag(stderr, "report", err)
	}
	set.KeepSamples = true
	if err := checkOutputs([]string{file}, outTarget{flag: "--out", path: *out}); err != nil {
		return badFlag(stderr, "report", err)
	}
	net, err := load(ctx, file)
	if err != nil {
		return fail(stderr, "report", err)
	}
	if err := controlRefusal(net, file, "report"); err != nil {
		return fail(stderr, "report", err)
	}
	// The report's exit law and walker tables are those of a linear problem:
	// on a nonlinear file they would describe the file with its laws dropped.
	if err := nonlinearRefusal(net, file, "the report's exit law and walker checks are defined for linear problems only"); err != nil {
		return fail(stderr, "report", err)
	}
	p, err := net.ParsePoint(*wf.from)
	if err != nil {
		return fail(stderr, "report", err)
	}
	// The steady field (when the network has one) for the drawing and tables.
	sol, nl, solErr := solveField(ctx, net, m, 0)
	if errors.Is(solErr, errInterrupted) {
		return fail(stderr, "report", solErr)
	}
	cc, err := crossCheck(ctx, net, p, *wf.from, m, set, &compare.Settings{}, crossOptions{}, nil, *wf.biasPass)
	if bar, ok := set.Recorder.(*progressBar); ok {
		bar.Done()
	}
	if err != nil {
		return fail(stderr, "report", walkError(err, "the exit-time comparison keeps"))
	}
	page := reportPage(net, file, *wf.from, p, sol, nl, solErr, cc)
	if *out == "" {
		if _, err := io.WriteString(stdout, page); err != nil {
			return fail(stderr, "report", err)
		}
	} else {
		replaced, err := saveFile(*out, []string{file}, func(w io.Writer) error {
			_, err := io.WriteString(w, page)
			return err
		})
		if err != nil {
			return fail(stderr, "report", fmt.Errorf("--out %s: %w", *out, err))
		}
		wrote(stderr, "report", *out, replaced, "HTML report")
	}
	return partialCode(cc.walk.Status == montecarlo.Cancelled)
}

// reportPage assembles the HTML page.
func reportPage(net *graphpde.Network, file, from string, p graphpde.Point, sol *graphpde.Solution, nl *graphpde.NonlinearResult, solErr error, cc *crossResult) string {
	title := net.Name
	if title == "" {
		title = file
	}
	var b strings.Builder
	b.WriteString("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n")
	fmt.Fprintf(&b, "<title>ramify report: %s</title>\n", html.EscapeString(title))
	b.WriteString(`<style>
body{font-family:sans-serif;max-width:60rem;margin:1.5rem auto;padding:0 1rem;color:#222}
pre{background:#f6f6f4;padding:.6rem;overflow-x:auto;font-size:.85rem}
.verdict{font-size:1.3rem;font-weight:bold;padding:.4rem .8rem;display:inline-block;border:2px solid}
.agree{color:#1d5e2f}.disagree{color:#9b1c1c}.inconclusive{color:#7a5a00}
.caution{border-left:4px solid #9b1c1c;padding:.3rem .8rem;background:#fbf3f3}
svg{max-width:100%;height:auto}
</style></head><body>
`)
	fmt.Fprintf(&b, "<h1>%s</h1>\n<p>File <code>%s</code>; walkers and exit statistics from <code>%s</code>.</p>\n",
		html.EscapeString(title), html.EscapeString(file), html.EscapeString(from))
	if hazard(net) {
		fmt.Fprintf(&b, "<p class=\"caution\">%s</p>\n", html.EscapeString(caution))
	}
	verdict := string(cc.Report.Verdict)
	fmt.Fprintf(&b, "<h2>Verdict</h2>\n<p><span class=\"verdict %s\">%s</span></p>\n", html.EscapeString(verdict), html.EscapeString(verdict))
	if cc.Report.Explain != "" {
		fmt.Fprintf(&b, "<p>%s</p>\n", html.EscapeString(cc.Report.Explain))
	}
	b.WriteString("<h2>The network</h2>\n")
	marks := []mark{{at: p, label: "start " + from}}
	if sol != nil {
		var svg bytes.Buffer
		if err := fieldDrawing(net, sol, title, marks).writeSVG(&svg); err == nil {
			b.WriteString(svg.String())
		}
		b.WriteString("<h2>Steady field</h2>\n<pre>")
		var t bytes.Buffer
		printSolve(&t, net, sol, nl, []string{from}, []graphpde.Point{p}, graphpde.MethodAuto, tableRows)
		b.WriteString(html.EscapeString(strings.TrimSuffix(strings.TrimSpace(t.String()), caution)))
		b.WriteString("</pre>\n")
	} else {
		fmt.Fprintf(&b, "<p>No steady field: %s</p>\n", html.EscapeString(solErr.Error()))
	}
	b.WriteString("<h2>Exit law</h2>\n")
	if cc.exit.HasDistribution {
		b.WriteString(survivalSVG(cc))
	}
	var t bytes.Buffer
	printExit(&t, net, from, cc.exit)
	fmt.Fprintf(&b, "<pre>%s</pre>\n", html.EscapeString(strings.TrimSpace(t.String())))
	b.WriteString("<h2>Cross-check, PDE against walkers</h2>\n")
	t.Reset()
	cc.print(&t)
	fmt.Fprintf(&b, "<pre>%s</pre>\n", html.EscapeString(strings.TrimSpace(t.String())))
	b.WriteString("<p><small>Made by ramify. Colours: a sequential scale whose lightness rises evenly from low to high values.</small></p>\n</body></html>\n")
	return b.String()
}

// survivalSVG draws P(τ > t) from the PDE (a line) against the walkers'
// empirical survival function (a step line), on a linear time axis up to
// the walkers' 99th percentile.
func survivalSVG(cc *crossResult) string {
	times := crosscheck.ExitTimes(cc.walk)
	slices.Sort(times)
	if len(times) == 0 {
		return ""
	}
	tmax := times[min(len(times)-1, int(0.99*float64(len(times))))]
	if !(tmax > 0) {
		return ""
	}
	const w, h, l, top, pw, ph = 640.0, 300.0, 56.0, 16.0, 560.0, 240.0
	X := func(t float64) float64 { return l + pw*t/tmax }
	Y := func(p float64) float64 { return top + ph*(1-p) }
	var b strings.Builder
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%g" height="%g" viewBox="0 0 %g %g" font-family="sans-serif" font-size="12">`+"\n", w, h+30, w, h+30)
	fmt.Fprintf(&b, `<rect x="%g" y="%g" width="%g" height="%g" fill="none" stroke="#999"/>`+"\n", l, top, pw, ph)
	for k := 0; k <= 4; k++ {
		p := float64(k) / 4
		fmt.Fprintf(&b, `<text x="%g" y="%.1f" text-anchor="end">%g</text>`, l-6, Y(p)+4, p)
		t := tmax * float64(k) / 4
		fmt.Fprintf(&b, `<text x="%.1f" y="%g" text-anchor="middle">%s</text>`+"\n", X(t), top+ph+16, fmtNum(t))
	}
	fmt.Fprintf(&b, `<text x="%g" y="%g" text-anchor="middle">time t</text>`, l+pw/2, top+ph+30)
	// Walkers: empirical survival, a step line (100 steps at most).
	n := float64(len(times))
	var pts []string
	step := max(1, len(times)/100)
	prev := 1.0
	pts = append(pts, fmt.Sprintf("%.1f,%.1f", X(0), Y(1)))
	for i := 0; i < len(times); i += step {
		if times[i] > tmax {
			break
		}
		s := 1 - float64(i+1)/n
		pts = append(pts, fmt.Sprintf("%.1f,%.1f %.1f,%.1f", X(times[i]), Y(prev), X(times[i]), Y(s)))
		prev = s
	}
	fmt.Fprintf(&b, `<polyline fill="none" stroke="#2c7fb8" stroke-width="2" points="%s"><title>walkers</title></polyline>`+"\n", strings.Join(pts, " "))
	// PDE: P(τ > t) at 80 points.
	pts = pts[:0]
	for k := 0; k <= 80; k++ {
		t := tmax * float64(k) / 80
		s, err := cc.exit.SurvivalAt(t)
		if err != nil || math.IsNaN(s) {
			continue
		}
		pts = append(pts, fmt.Sprintf("%.1f,%.1f", X(t), Y(s)))
	}
	fmt.Fprintf(&b, `<polyline fill="none" stroke="#222" stroke-width="1.5" stroke-dasharray="6 3" points="%s"><title>PDE</title></polyline>`+"\n", strings.Join(pts, " "))
	fmt.Fprintf(&b, `<text x="%g" y="%g" fill="#2c7fb8">walkers (empirical)</text><text x="%g" y="%g">PDE, P(τ &gt; t) (dashed)</text>`+"\n", l+pw-190, top+18, l+pw-190, top+34)
	b.WriteString("</svg>\n")
	return b.String()
}
