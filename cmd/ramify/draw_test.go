package main

import (
	"context"
	"encoding/xml"
	"image"
	"image/png"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"
)

// lstar returns CIE L* of an sRGB colour "#rrggbb" (CIE 15:2004; sRGB
// decoding of IEC 61966-2-1).
func lstar(t *testing.T, hex string) float64 {
	t.Helper()
	var rgb [3]float64
	for k := range 3 {
		var v int
		if _, err := fmtSscanHex(hex[1+2*k:3+2*k], &v); err != nil {
			t.Fatalf("colour %q: %v", hex, err)
		}
		c := float64(v) / 255
		if c <= 0.04045 {
			c /= 12.92
		} else {
			c = math.Pow((c+0.055)/1.055, 2.4)
		}
		rgb[k] = c
	}
	y := 0.2126729*rgb[0] + 0.7151522*rgb[1] + 0.0721750*rgb[2]
	if y > 216.0/24389 {
		return 116*math.Cbrt(y) - 16
	}
	return 24389.0 / 27 * y
}

// TestColourScale checks what makes the scale readable without hue: its
// lightness L* rises monotonically and nearly evenly from 20 to 95 (the
// control points), and it stays inside the sRGB gamut, so no channel is
// clipped (clipping would bend the lightness ramp). Tolerance: 8-bit
// rounding moves L* by at most about 0.4.
func TestColourScale(t *testing.T) {
	const steps = 64
	prev := -1.0
	for k := 0; k <= steps; k++ {
		f := float64(k) / steps
		l := lstar(t, colourAt(f))
		want := 20 + 75*f
		if math.Abs(l-want) > 1.5 {
			t.Errorf("t = %.3f: L* = %.2f, want %.2f (even lightness ramp)", f, l, want)
		}
		if l <= prev {
			t.Errorf("t = %.3f: L* = %.2f not above the previous %.2f", f, l, prev)
		}
		prev = l
		// In gamut before rounding (so nothing was clipped).
		s := f * float64(len(scaleLab)-1)
		i := min(int(s), len(scaleLab)-2)
		var lab [3]float64
		for c := range 3 {
			lab[c] = (1-(s-float64(i)))*scaleLab[i][c] + (s-float64(i))*scaleLab[i+1][c]
		}
		for c, v := range labToLinear(lab) {
			if v < -1e-3 || v > 1+1e-3 {
				t.Errorf("t = %.3f: linear channel %d = %.4f is outside the sRGB gamut", f, c, v)
			}
		}
	}
}

// TestDrawSVG checks the drawing of a solved network: a well-formed SVG
// with every edge drawn in coloured pieces, fixed nodes as squares, the
// probe marked, labels, a colour bar whose ends are the field's extremes in
// the model's units, and a small file with no embedded font.
func TestDrawSVG(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "wire.svg")
	code, _, errs := runCLI(t, context.Background(), "solve", "--draw", out, "--probe", "tail@0.3", "../../examples/deicing-wire.toml")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	data, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	counts := map[string]int{}
	dec := xml.NewDecoder(strings.NewReader(string(data)))
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("not well-formed XML: %v", err)
		}
		if se, ok := tok.(xml.StartElement); ok {
			counts[se.Name.Local]++
		}
	}
	if counts["line"] < 4*segments || counts["rect"] < 3 || counts["circle"] < 2 || counts["path"] < 1 {
		t.Errorf("elements %v: want %d edge pieces, squares for the 3 posts, circles, a probe mark", counts, 4*segments)
	}
	s := string(data)
	for _, want := range []string{"footbridge de-icing wire", "temperature [°C]", "post-south -8", "tail@0.3", "positions from the file", "12.6243"} {
		if !strings.Contains(s, want) {
			t.Errorf("drawing lacks %q", want)
		}
	}
	if len(data) > 40_000 || strings.Contains(s, "@font-face") || strings.Contains(s, "base64") {
		t.Errorf("drawing is %d bytes or embeds a font", len(data))
	}
}

// TestDrawLayout checks that a network without positions is drawn at a
// computed layout in which no two nodes coincide.
func TestDrawLayout(t *testing.T) {
	net, err := load(context.Background(), "../../examples/fork.toml")
	if err != nil {
		t.Fatal(err)
	}
	xy, how := positions(net)
	if !strings.Contains(how, "computed") {
		t.Fatalf("fork.toml has no xy, but positions says %q", how)
	}
	for i := range xy {
		for j := range i {
			if math.Hypot(xy[i][0]-xy[j][0], xy[i][1]-xy[j][1]) < 1e-6 {
				t.Errorf("nodes %d and %d coincide at %v", i, j, xy[i])
			}
		}
	}
}

// TestReportRenders writes the HTML report of a small network and checks
// it is one self-contained page (no scripts, no external resources), then
// renders it in headless Chromium where one is installed and checks that
// the screenshot is a real picture (the colours of the field appear).
func TestReportRenders(t *testing.T) {
	dir := t.TempDir()
	page := filepath.Join(dir, "fork.html")
	code, _, errs := runCLI(t, context.Background(), "report", "../../examples/fork.toml", "--from", "fork", "--particles", "4000", "--out", page)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	data, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	s := string(data)
	for _, want := range []string{"<!DOCTYPE html>", "<svg", "Verdict", "Exit law", "Cross-check", "biased fork", "summary"} {
		if !strings.Contains(s, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	for _, bad := range []string{"<script", "src=", "href=", "@import", "@font-face"} {
		if strings.Contains(s, bad) {
			t.Errorf("report is not self-contained: it has %q", bad)
		}
	}
	browser := ""
	for _, b := range []string{"/usr/bin/chromium", "/usr/bin/chromium-browser"} {
		if _, err := os.Stat(b); err == nil {
			browser = b
		}
	}
	if browser == "" {
		t.Skip("no headless Chromium installed (/usr/bin/chromium): the page was checked as text only")
	}
	shot := filepath.Join(dir, "shot.png")
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	cmd := exec.CommandContext(ctx, browser, "--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars",
		"--window-size=1000,1600", "--screenshot="+shot, "file://"+page)
	cmd.Env = append(os.Environ(), "HOME="+dir)
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("chromium: %v\n%s", err, out)
	}
	f, err := os.Open(shot)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("screenshot: %v", err)
	}
	colours := map[[3]uint32]bool{}
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y += 3 {
		for x := b.Min.X; x < b.Max.X; x += 3 {
			r, g, bl, _ := img.At(x, y).RGBA()
			colours[[3]uint32{r >> 8, g >> 8, bl >> 8}] = true
		}
	}
	if len(colours) < 50 || !hasScaleColour(img) {
		t.Errorf("screenshot has %d colours and scale colour %v: the page did not render", len(colours), hasScaleColour(img))
	}
}

// hasScaleColour reports whether some pixel is close to the middle of the
// colour scale (a teal), which only the drawing and the colour bar use.
func hasScaleColour(img image.Image) bool {
	want := colourAt(0.5)
	var v [3]int
	for k := range 3 {
		fmtSscanHex(want[1+2*k:3+2*k], &v[k])
	}
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			if absInt(int(r>>8)-v[0]) < 12 && absInt(int(g>>8)-v[1]) < 12 && absInt(int(bl>>8)-v[2]) < 12 {
				return true
			}
		}
	}
	return false
}

func absInt(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

// fmtSscanHex parses two hex digits.
func fmtSscanHex(s string, v *int) (int, error) {
	n, err := strconv.ParseInt(s, 16, 0)
	*v = int(n)
	return 1, err
}

// TestPlotsReferenceFonts checks that the crosscheck figures name their
// fonts (with metric-compatible fallbacks) instead of embedding half a
// megabyte of font in every SVG.
func TestPlotsReferenceFonts(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "figs")
	if code, _, errs := runCLI(t, context.Background(), "crosscheck", "../../examples/fork.toml", "--from", "fork", "--particles", "2000", "--plot", dir); code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	data, err := os.ReadFile(filepath.Join(dir, "hits.svg"))
	if err != nil {
		t.Fatal(err)
	}
	s := string(data)
	if len(data) > 30_000 || strings.Contains(s, "@font-face") || !strings.Contains(s, "'Times New Roman',Times,serif") {
		t.Errorf("hits.svg: %d bytes, embedded font %v, fallback list %v", len(data), strings.Contains(s, "@font-face"), strings.Contains(s, "Times New Roman"))
	}
}

// TestEvolveSheet checks evolve --draw: a well-formed SVG with one panel per
// chosen output time (at most six, the first and last included) on one
// colour scale.
func TestEvolveSheet(t *testing.T) {
	out := filepath.Join(t.TempDir(), "sheet.svg")
	code, _, errs := runCLI(t, context.Background(), "evolve", "../../examples/clock-spine.toml", "--until", "2e-9", "--every", "2e-10", "--draw", out)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	data, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	svgs := 0
	dec := xml.NewDecoder(strings.NewReader(string(data)))
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("not well-formed XML: %v", err)
		}
		if se, ok := tok.(xml.StartElement); ok && se.Name.Local == "svg" {
			svgs++
		}
	}
	s := string(data)
	if svgs != 1+sheetPanels || !strings.Contains(s, "t = 0<") || !strings.Contains(s, "t = 2e-09<") {
		t.Errorf("%d svg elements (want %d), first and last panel present: %v %v", svgs, 1+sheetPanels, strings.Contains(s, "t = 0<"), strings.Contains(s, "t = 2e-09<"))
	}
}
