package compare

import (
	"encoding/xml"
	"errors"
	"flag"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// plotDir, when set, keeps PNG renderings of the test figures there for a
// visual check: go test -run Plot -plotdir /tmp/figs.
var plotDir = flag.String("plotdir", "", "directory to keep PNG copies of the test figures")

// validSVG parses path as XML to the end and checks the root element is svg
// and the text contains each of want.
func validSVG(t *testing.T, path string, want ...string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	dec := xml.NewDecoder(f)
	root := ""
	var text strings.Builder
	for {
		tok, err := dec.Token()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatalf("%s is not well-formed XML: %v", path, err)
		}
		switch tok := tok.(type) {
		case xml.StartElement:
			if root == "" {
				root = tok.Name.Local
			}
		case xml.CharData:
			text.Write(tok)
		}
	}
	if root != "svg" {
		t.Errorf("%s: root element %q, want svg", path, root)
	}
	for _, w := range want {
		if !strings.Contains(text.String(), w) {
			t.Errorf("%s lacks the text %q", path, w)
		}
	}
}

func TestPlotSurvival(t *testing.T) {
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(61, 1))
	const mu = 0.5
	surv := func(t float64) float64 { return math.Exp(-t / mu) }
	for _, c := range []struct {
		name string
		n    int
		tc   float64
	}{
		{"small", 60, 0},
		{"large", 20000, 0},
		{"censored", 3000, 1.2},
	} {
		t.Run(c.name, func(t *testing.T) {
			var times []float64
			cens := 0
			for range c.n {
				x := mu * rng.ExpFloat64()
				if c.tc > 0 && x > c.tc {
					cens++
					continue
				}
				times = append(times, x)
			}
			path := filepath.Join(dir, c.name+".svg")
			if err := PlotSurvivalCensored(path, surv, times, c.tc, cens, 0.05); err != nil {
				t.Fatal(err)
			}
			validSVG(t, path, "Exit-time survival", "PDE", "walkers", "DKW")
			if *plotDir != "" {
				png := filepath.Join(*plotDir, "survival-"+c.name+".png")
				if err := PlotSurvivalCensored(png, surv, times, c.tc, cens, 0.05); err != nil {
					t.Fatal(err)
				}
			}
		})
	}
	if err := PlotSurvival(filepath.Join(dir, "x.svg"), surv, nil, 0.05); err == nil {
		t.Error("no walkers: no error")
	}
	if err := PlotSurvivalCensored(filepath.Join(dir, "x.svg"), surv, []float64{1}, 0, 4, 0.05); err == nil {
		t.Error("censored walkers without a cap: no error")
	}
	if err := PlotSurvival(filepath.Join(dir, "x.svg"), surv, []float64{1}, 1.5); err == nil {
		t.Error("level 1.5: no error")
	}
}

func TestPlotHits(t *testing.T) {
	dir := t.TempDir()
	names := []string{"tip1", "tip2", "outlet"}
	pde := []float64{0.6667, 0.2222, 0.1111}
	walker := []float64{0.431, 0.35, 0.219}
	se := []float64{0.05, 0.048, 0.04} // wide enough to see the bars
	path := filepath.Join(dir, "hits.svg")
	if err := PlotHits(path, names, pde, walker, se); err != nil {
		t.Fatal(err)
	}
	validSVG(t, path, "hitting probabilities", "tip1", "outlet", "PDE")
	if *plotDir != "" {
		if err := PlotHits(filepath.Join(*plotDir, "hits.png"), names, pde, walker, se); err != nil {
			t.Fatal(err)
		}
	}
	if err := PlotHits(path, names, pde, []float64{0.4, math.NaN(), 0.2}, se); err == nil {
		t.Error("NaN value: no error")
	}
}

func TestDKWEpsilon(t *testing.T) {
	// ε = sqrt(ln(2/α)/(2n)): for α = 0.05, n = 1000, ln 40 = 3.6889,
	// ε = 0.042946 (arithmetic).
	if got := DKWEpsilon(0.05, 1000); math.Abs(got-0.042946) > 1e-6 {
		t.Errorf("ε = %g, want 0.042946", got)
	}
	// The band covers: the fraction of exponential samples of 200 whose
	// KS distance exceeds ε at α = 0.05 is at most 5% (DKW–Massart holds for
	// every n; the bound is conservative), over 1000 replications with
	// binomial sd 0.7%: require ≤ 5% + 3 sd.
	rng := rand.New(rand.NewPCG(62, 1))
	const reps, n = 1000, 200
	eps := DKWEpsilon(0.05, n)
	out := 0
	times := make([]float64, n)
	for range reps {
		for i := range times {
			times[i] = rng.ExpFloat64()
		}
		if Distribution("d", times, 0, 0, expSurvival).Stat > eps {
			out++
		}
	}
	if r := float64(out) / reps; r > 0.05+3*math.Sqrt(0.05*0.95/reps) {
		t.Errorf("band missed the law in %.3f of samples", r)
	}
}
