package graphpde

import (
	"fmt"
	"math"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// TestSpectrumRingOfEqualEdges: a ring of n equal edges (length 1, a = 1,
// ρ = 1, free nodes) is a circle of length n, whose eigenvalues are 0 and
// (2πk/n)², each twice (cos and sin; derived, as for the one-edge ring of
// TestSpectrumExact). Where 2k/n is an integer every edge is at a clamped
// eigenvalue at once; there the count cancelled to round-off at every node
// and split such double eigenvalues into two simple ones about 1e-9 apart,
// each with a bracket of 1e-12 (ring of 4: π² as 9.869604397 and
// 9.869604407). Each value must lie within its stated error or eigRel
// (the count's bracket, as in TestSpectrumExact), whichever is larger.
// The ring of 6 has (2π/3)² = 17.5459633797 twice, as has a path of three
// of its edges held at both ends: the elimination without pivoting divides
// by a pivot that vanishes there, and the count is wrong within about 1e-9
// of it; it gave two simple eigenvalues 17.5459633602 and 17.5459633861
// with errors of 1e-12. They are now one, of multiplicity 2, with an error
// that covers the true value.
func TestSpectrumRingOfEqualEdges(t *testing.T) {
	for _, n := range []int{3, 4, 5, 6} {
		t.Run(fmt.Sprint(n), func(t *testing.T) {
			b := newNetBuilder(t)
			var v []int
			for i := range n {
				v = append(v, b.node(fmt.Sprintf("v%d", i), vertex.Law{Kind: vertex.Balance}))
			}
			for i := range n {
				b.edge(Edge{ID: fmt.Sprintf("e%d", i), From: v[i], To: v[(i+1)%n], Length: 1, A: 1})
			}
			want := []float64{0}
			for k := 1; len(want) < 2*n+1; k++ {
				l := math.Pow(2*math.Pi*float64(k)/float64(n), 2)
				want = append(want, l, l)
			}
			r := mustSpectrum(t, b.net, len(want))
			for i, e := range r.Eigenvalues {
				if i > 0 && e.Multiplicity != 2 && flattenLen(r.Eigenvalues[:i+1]) <= len(want) {
					t.Errorf("λ = %.12g: multiplicity %d, want 2", e.Value, e.Multiplicity)
				}
			}
			var got, errs []float64
			for _, e := range r.Eigenvalues {
				for range e.Multiplicity {
					got, errs = append(got, e.Value), append(errs, e.Err)
				}
			}
			if len(got) < len(want) {
				t.Fatalf("%d eigenvalues %v, want %d", len(got), got, len(want))
			}
			for i, w := range want {
				if math.Abs(got[i]-w) > math.Max(errs[i], eigRel*math.Max(1, w)) {
					t.Errorf("λ_%d = %.12g ± %.2g, want %.12g", i+1, got[i], errs[i], w)
				}
			}
		})
	}
}

func flattenLen(ev []Eigenvalue) int { return len(flatten(ev)) }

// TestSpectrumLastMultiplicity: when Count ends inside a multiple
// eigenvalue, the last one is reported with its whole multiplicity. A
// star of five equal arms held at their tips has (mπ)² with multiplicity
// 4 (derived: sin(mπx) on any two arms with opposite signs, four
// independent such modes, as for the equilateral star of
// TestSpectrumExact); asked for 12, it gave the 12th, 9π², with
// multiplicity 2 (a count within round-off of it showed half its jump).
func TestSpectrumLastMultiplicity(t *testing.T) {
	r := mustSpectrum(t, starTips(t, []float64{1, 1, 1, 1, 1}, nil, false), 12)
	last := r.Eigenvalues[len(r.Eigenvalues)-1]
	want := 9 * math.Pi * math.Pi
	if last.Multiplicity != 4 || math.Abs(last.Value-want) > math.Max(last.Err, eigRel*want) {
		t.Errorf("last eigenvalue %.12g ± %.2g multiplicity %d, want %.12g multiplicity 4", last.Value, last.Err, last.Multiplicity, want)
	}
}
