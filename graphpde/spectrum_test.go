package graphpde

import (
	"fmt"
	"math"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// eigRel is the relative accuracy asked of the exact spectrum: the count
// brackets each eigenvalue to about 1e-13 of its size; the reference values
// below are given to 7–8 significant digits, so they are compared at
// their own precision (refDigits).
const (
	eigRel    = 1e-11
	refDigits = 6e-8
)

// flatten lists eigenvalues with multiplicities repeated.
func flatten(ev []Eigenvalue) []float64 {
	var out []float64
	for _, e := range ev {
		for range e.Multiplicity {
			out = append(out, e.Value)
		}
	}
	return out
}

func mustSpectrum(t *testing.T, net *Network, count int) *SpectrumResult {
	t.Helper()
	r, err := Spectrum(net, &SpectrumSettings{Count: count, Method: MethodExact})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != Converged {
		t.Fatalf("status %v", r.Status)
	}
	return r
}

// starTips is a star of arms L[i] (diffusivity 1) with weights w[i] at the
// centre and tips held at 0 (fixed) or sealed (balance with nothing).
func starTips(t *testing.T, L, w []float64, sealed bool) *Network {
	b := newNetBuilder(t)
	c := b.node("c", vertex.Law{Kind: vertex.Balance})
	for i := range L {
		var end int
		if sealed {
			end = b.node(fmt.Sprintf("tip%d", i+1), vertex.Law{Kind: vertex.Balance})
		} else {
			end = b.fixed(fmt.Sprintf("tip%d", i+1), 0)
		}
		wi := 0.0
		if w != nil {
			wi = w[i]
		}
		b.edge(Edge{ID: fmt.Sprintf("arm%d", i+1), From: c, To: end, Length: L[i], A: 1, Weight: [2]float64{wi, wi}})
	}
	return b.net
}

// TestSpectrumExact checks the Wittrick–Williams count against eigenvalues
// known in closed form or computed independently.
//
// Interval (0, 1), u” = −λu: Dirichlet (kπ)², Neumann (kπ)² from k = 0
// (any textbook on Sturm–Liouville problems). Ring of length 1 through one
// node: 0, then (2πk)² twice each (periodic eigenfunctions cos, sin).
// Stars (Berkolaiko & Kuchment, Introduction to Quantum Graphs, AMS 2013,
// ch. 1 — from memory; values derived): with Dirichlet tips the eigenvalues
// are k² with Σ_i w_i cot(k L_i) = 0 together with the k at which sin(k L_i)
// vanishes on two or more arms at once, of multiplicity one less than the
// number of such arms; with sealed tips Σ_i w_i tan(k L_i) = 0 and the k at
// which cos(k L_i) vanishes on several arms. The values were computed by
// bisection on those secular equations, and the multiple ones are exactly
// the roots that the secular equations miss.
// Cable sealed at both ends with decay (τ₀ = ρ/c = 1): equalising time
// constants τ_n/τ₀ = 1/(1 + (nπ/L)²) (Rall, Biophys. J. 9 (1969) 1483 —
// from memory): 0.0919997 at L = 1, 0.2884004 at L = 2.
func TestSpectrumExact(t *testing.T) {
	pi2 := math.Pi * math.Pi
	rod := func(t *testing.T, sealed bool, c float64, L float64) *Network {
		b := newNetBuilder(t)
		var x, y int
		if sealed {
			x, y = b.node("a", vertex.Law{Kind: vertex.Balance}), b.node("b", vertex.Law{Kind: vertex.Balance})
		} else {
			x, y = b.fixed("a", 0), b.fixed("b", 0)
		}
		b.edge(Edge{ID: "rod", From: x, To: y, Length: L, A: 1, C: c})
		return b.net
	}
	ring := func(t *testing.T) *Network {
		b := newNetBuilder(t)
		v := b.node("v", vertex.Law{Kind: vertex.Balance})
		b.edge(Edge{ID: "loop", From: v, To: v, Length: 1, A: 1})
		return b.net
	}
	for _, tc := range []struct {
		name string
		net  func(*testing.T) *Network
		want []float64 // with multiplicities repeated
		tol  float64
	}{
		{"interval Dirichlet", func(t *testing.T) *Network { return rod(t, false, 0, 1) },
			[]float64{pi2, 4 * pi2, 9 * pi2, 16 * pi2}, eigRel},
		{"interval Neumann", func(t *testing.T) *Network { return rod(t, true, 0, 1) },
			[]float64{0, pi2, 4 * pi2, 9 * pi2}, eigRel},
		{"ring", ring, []float64{0, 4 * pi2, 4 * pi2, 16 * pi2, 16 * pi2}, eigRel},
		{"equilateral star k=3", func(t *testing.T) *Network { return starTips(t, []float64{1, 1, 1}, nil, false) },
			[]float64{pi2 / 4, pi2, pi2, 9 * pi2 / 4, 4 * pi2, 4 * pi2}, eigRel},
		{"star arms 1,2,3", func(t *testing.T) *Network { return starTips(t, []float64{1, 2, 3}, nil, false) },
			[]float64{0.6168503, 1.6331653, 3.4731507, 5.5516525, pi2, pi2, 15.421257}, refDigits},
		{"star arms 1,2,3 weighted", func(t *testing.T) *Network {
			return starTips(t, []float64{1, 2, 3}, []float64{0.5, 0.3, 0.2}, false)
		}, []float64{0.7705495, 1.5947238, 3.5297726}, refDigits},
		{"star arms 1,2,3 sealed", func(t *testing.T) *Network { return starTips(t, []float64{1, 2, 3}, nil, true) },
			[]float64{0, 0.3788153, 1.0966227, pi2 / 4, 4.3864908}, refDigits},
	} {
		t.Run(tc.name, func(t *testing.T) {
			r := mustSpectrum(t, tc.net(t), len(tc.want))
			got := flatten(r.Eigenvalues)
			if len(got) < len(tc.want) {
				t.Fatalf("%d eigenvalues %v, want %d", len(got), got, len(tc.want))
			}
			for i, w := range tc.want {
				if math.Abs(got[i]-w) > tc.tol*math.Max(1, math.Abs(w)) {
					t.Errorf("λ_%d = %.12g, want %.12g", i+1, got[i], w)
				}
			}
			t.Logf("%s: %v (%d factorisations)", tc.name, r.Eigenvalues, r.Stats.Factorizations)
		})
	}
}

// TestSpectrumCable: a passive cable of electrotonic length L sealed at both
// ends (a = 1, c = 1, ρ = 1, so τ₀ = ρ/c = 1) has the equalising time
// constants τ_n/τ₀ = 1/(1 + (nπ/L)²) (Rall, Biophys. J. 9 (1969) 1483 —
// from memory): τ₁/τ₀ = 0.0919997 at L = 1 and 0.2884004 at L = 2, given to
// 7 decimals, so compared within half a unit of the last one.
func TestSpectrumCable(t *testing.T) {
	const lastDigit = 0.5e-7
	for _, tc := range []struct{ L, ratio float64 }{{1, 0.0919997}, {2, 0.2884004}} {
		b := newNetBuilder(t)
		x, y := b.balance("soma"), b.balance("tip")
		b.edge(Edge{ID: "cable", From: x, To: y, Length: tc.L, A: 1, C: 1})
		r := mustSpectrum(t, b.net, 2)
		lam := flatten(r.Eigenvalues)
		if math.Abs(lam[0]-1) > eigRel {
			t.Errorf("L=%g: λ₀ = %.15g, want 1 (1/τ₀)", tc.L, lam[0])
		}
		if got := lam[0] / lam[1]; math.Abs(got-tc.ratio) > lastDigit {
			t.Errorf("L=%g: τ₁/τ₀ = %.9f, want %.7f", tc.L, got, tc.ratio)
		}
		if got := r.RelaxationTime(); math.Abs(got-1) > eigRel {
			t.Errorf("L=%g: relaxation time %.15g, want 1", tc.L, got)
		}
	}
}

// TestSpectrumGrid checks the grid eigen-solvers against closed forms, and
// that the reported error bars (Richardson: half the difference between
// the grid and the grid of half its cells) cover the true error.
//
//   - ((1+x)² u')' = −λu on (0, 1), u = 0 at both ends (varying
//     coefficients, counted): with t = ln(1+x) the problem is
//     u_tt + u_t + λu = 0 on (0, ln 2), so u = e^{−t/2} sin(kt) with
//     k = nπ/ln 2 and λ = k² + 1/4 (derived).
//   - u” + 2u' = −λu on (0, 1), u = 0 at both ends (drift: Arnoldi):
//     λ_n = (nπ)² + 1 (derived: u = e^{−x} sin(nπx)).
//   - the ring of length 1 with u” + u' = −λu (drift on a cycle): the
//     modes e^{2πikx} give λ = (2πk)² − 2πik, a complex pair for every k ≥ 1
//     (derived).
func TestSpectrumGrid(t *testing.T) {
	type want struct{ re, im float64 }
	ln2 := math.Log(2)
	k := func(n float64) float64 { return n * math.Pi / ln2 }
	for _, tc := range []struct {
		name string
		net  func(*testing.T) *Network
		want []want // with multiplicities repeated
	}{
		{"varying diffusivity", func(t *testing.T) *Network {
			b := newNetBuilder(t)
			x, y := b.fixed("a", 0), b.fixed("b", 0)
			b.edge(Edge{ID: "rod", From: x, To: y, Length: 1, A: 1, Profile: &Profile{A: func(x float64) float64 { return (1 + x) * (1 + x) }}})
			return b.net
		}, []want{{k(1)*k(1) + 0.25, 0}, {k(2)*k(2) + 0.25, 0}, {k(3)*k(3) + 0.25, 0}}},
		{"drift", func(t *testing.T) *Network {
			b := newNetBuilder(t)
			x, y := b.fixed("a", 0), b.fixed("b", 0)
			b.edge(Edge{ID: "rod", From: x, To: y, Length: 1, A: 1, B: 2})
			return b.net
		}, []want{{math.Pi*math.Pi + 1, 0}, {4*math.Pi*math.Pi + 1, 0}}},
		// The edge sets its own cells: the second grid must still halve
		// them (it used the same grid twice, and the bar was the Ritz
		// residual alone, 1e-83 against an error of 2e-4).
		{"drift, cells on the edge", func(t *testing.T) *Network {
			b := newNetBuilder(t)
			x, y := b.fixed("a", 0), b.fixed("b", 0)
			b.edge(Edge{ID: "rod", From: x, To: y, Length: 1, A: 1, B: 2, Cells: 100})
			return b.net
		}, []want{{math.Pi*math.Pi + 1, 0}, {4*math.Pi*math.Pi + 1, 0}}},
		{"varying diffusivity, cells on the edge", func(t *testing.T) *Network {
			b := newNetBuilder(t)
			x, y := b.fixed("a", 0), b.fixed("b", 0)
			b.edge(Edge{ID: "rod", From: x, To: y, Length: 1, A: 1, Cells: 100, Profile: &Profile{A: func(x float64) float64 { return (1 + x) * (1 + x) }}})
			return b.net
		}, []want{{k(1)*k(1) + 0.25, 0}, {k(2)*k(2) + 0.25, 0}}},
		{"ring with drift", func(t *testing.T) *Network {
			b := newNetBuilder(t)
			v := b.balance("v")
			b.edge(Edge{ID: "loop", From: v, To: v, Length: 1, A: 1, B: 1})
			return b.net
		}, []want{{0, 0}, {4 * math.Pi * math.Pi, -2 * math.Pi}, {4 * math.Pi * math.Pi, 2 * math.Pi}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			r, err := Spectrum(tc.net(t), &SpectrumSettings{Count: len(tc.want), Cells: 100})
			if err != nil {
				t.Fatal(err)
			}
			if r.Method != "grid" || r.Status != Converged {
				t.Fatalf("method %s, status %v", r.Method, r.Status)
			}
			var got []Eigenvalue
			for _, e := range r.Eigenvalues {
				for range e.Multiplicity {
					got = append(got, e)
				}
			}
			if len(got) < len(tc.want) {
				t.Fatalf("%d eigenvalues %v, want %d", len(got), r.Eigenvalues, len(tc.want))
			}
			for i, w := range tc.want {
				e := got[i]
				d := math.Hypot(e.Value-w.re, e.Imag-w.im)
				t.Logf("λ_%d = %.8g%+.8gi, want %.8g%+.8gi: error %.2e, bar %.2e", i+1, e.Value, e.Imag, w.re, w.im, d, e.Err)
				// the bar must cover the error, and not by a factor of
				// more than 100 (an honest, useful bar); 1e-9 for round-off
				if d > e.Err+1e-9*math.Max(1, math.Abs(w.re)) || e.Err > 100*d+1e-6 {
					t.Errorf("λ_%d = %.10g%+.10gi, want %.10g%+.10gi: error %.2e against bar %.2e", i+1, e.Value, e.Imag, w.re, w.im, d, e.Err)
				}
			}
		})
	}
}

// TestSpectrumModes checks mode shapes against closed forms (normalised to
// a largest value of +1): on (0, 1) with u = 0 at the ends, sin(nπx); with
// sealed ends cos(nπx) (its largest values ±1 at both ends: the first
// node is taken positive); with a = (1+x)² and u = 0 at the ends, on the
// grid, (1+x)^{−1/2} sin(k ln(1+x)) with k = π/ln 2, up to normalisation
// (derived, see TestSpectrumGrid). Exact modes come from one step of
// inverse iteration at a relative 1e-9 from the eigenvalue: tolerance
// 1e-7; the grid's to its h² (100 cells: 1e-3).
func TestSpectrumModes(t *testing.T) {
	rod := func(sealed bool) *Network {
		b := newNetBuilder(t)
		var x, y int
		if sealed {
			x, y = b.balance("a"), b.balance("b")
		} else {
			x, y = b.fixed("a", 0), b.fixed("b", 0)
		}
		b.edge(Edge{ID: "rod", From: x, To: y, Length: 1, A: 1})
		return b.net
	}
	check := func(name string, r *SpectrumResult, idx int, f func(x float64) float64, tol float64) {
		t.Helper()
		for _, m := range r.Modes {
			if m.Index != idx {
				continue
			}
			vals := m.Edges[0]
			worst := 0.0
			for i, v := range vals {
				x := float64(i) / float64(len(vals)-1)
				worst = math.Max(worst, math.Abs(v-f(x)))
			}
			if worst > tol {
				t.Errorf("%s: mode %d off by %.2e", name, idx, worst)
			}
			return
		}
		t.Errorf("%s: no mode %d", name, idx)
	}
	r, err := Spectrum(rod(false), &SpectrumSettings{Count: 2, Modes: true})
	if err != nil {
		t.Fatal(err)
	}
	check("Dirichlet", r, 0, func(x float64) float64 { return math.Sin(math.Pi * x) }, 1e-7)
	r, err = Spectrum(rod(true), &SpectrumSettings{Count: 3, Modes: true})
	if err != nil {
		t.Fatal(err)
	}
	check("sealed", r, 1, func(x float64) float64 { return math.Cos(math.Pi * x) }, 1e-7)
	check("sealed", r, 2, func(x float64) float64 { return math.Cos(2 * math.Pi * x) }, 1e-7)

	b := newNetBuilder(t)
	x, y := b.fixed("a", 0), b.fixed("b", 0)
	b.edge(Edge{ID: "rod", From: x, To: y, Length: 1, A: 1, Profile: &Profile{A: func(x float64) float64 { return (1 + x) * (1 + x) }}})
	r, err = Spectrum(b.net, &SpectrumSettings{Count: 1, Modes: true, Cells: 100})
	if err != nil {
		t.Fatal(err)
	}
	k := math.Pi / math.Log(2)
	g := func(x float64) float64 { return math.Sin(k*math.Log(1+x)) / math.Sqrt(1+x) }
	peak := 0.0
	for i := 0; i <= 10000; i++ {
		peak = math.Max(peak, g(float64(i)/10000))
	}
	check("varying", r, 0, func(x float64) float64 { return g(x) / peak }, 1e-3)
}
