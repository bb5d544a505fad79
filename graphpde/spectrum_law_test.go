package graphpde_test

import (
	"math"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/netfile"
)

// TestLawsFromFile: coefficients given as expressions in a file (the
// plain fields then stay 0 and the default end weight is the law's
// diffusivity) on the grid paths of spectrum and evolve.
//
//   - ((1+x)² u')' = −λu with u = 0 at the ends: λ₁ = (π/ln 2)² + 1/4
//     (derived, see TestSpectrumGrid), within the reported error bar;
//   - sealed ends and a(x) = 1 + x: the lowest eigenvalue is 0 (constants),
//     which a wrongly scaled node row would move;
//   - a(u) = 1 + u between u = 0 and u = 1 settles at √2.5 − 1 in the
//     middle (derived: Kirchhoff's transform), to the grid's 1e-5.
func TestLawsFromFile(t *testing.T) {
	read := func(src string) *graphpde.Network {
		net, err := netfile.Read(strings.NewReader(src), "test.toml")
		if err != nil {
			t.Fatal(err)
		}
		return net
	}
	rod := func(ends, a string) string {
		return ends + `
[[edge]]
id = "rod"
from = "a"
to = "b"
length = 1.0
diffusivity = "` + a + `"
`
	}
	fixed := "[[node]]\nid = \"a\"\nfixed = 0.0\n[[node]]\nid = \"b\"\nfixed = 0.0\n"
	sealed := "[[node]]\nid = \"a\"\n[[node]]\nid = \"b\"\n"

	r, err := graphpde.Spectrum(read(rod(fixed, "(1 + x)^2")), &graphpde.SpectrumSettings{Count: 1, Cells: 100})
	if err != nil {
		t.Fatal(err)
	}
	k := math.Pi / math.Log(2)
	if e := r.Eigenvalues[0]; math.Abs(e.Value-(k*k+0.25)) > e.Err+1e-9 {
		t.Errorf("λ₁ = %.8g ± %.2g, want %.8g", e.Value, e.Err, k*k+0.25)
	}
	r, err = graphpde.Spectrum(read(rod(sealed, "1 + x")), &graphpde.SpectrumSettings{Count: 2, Cells: 50})
	if err != nil {
		t.Fatal(err)
	}
	if e := r.Eigenvalues[0]; math.Abs(e.Value) > 1e-9 {
		t.Errorf("sealed: λ₁ = %.3g, want 0", e.Value)
	}

	net := read(rod("[[node]]\nid = \"a\"\nfixed = 0.0\n[[node]]\nid = \"b\"\nfixed = 1.0\n", "1 + u"))
	mid, err := net.ParsePoint("rod@0.5")
	if err != nil {
		t.Fatal(err)
	}
	ev, err := graphpde.Evolve(net, &graphpde.EvolveSettings{Until: 3, Probes: []graphpde.Point{mid}})
	if err != nil {
		t.Fatal(err)
	}
	if got, want := ev.Probes[0][len(ev.Times)-1], math.Sqrt(2.5)-1; math.Abs(got-want) > 1e-5 {
		t.Errorf("u(0.5, 3) = %.8f, want %.8f", got, want)
	}
}
