package montecarlo

import (
	"math"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// TestDefaultTimeCap checks the default cap on the S1 star: capacity
// C = Σ ρL = 6, resistance R = Σ L/a = 12 (a = ½), cap = 1000·C·R.
func TestDefaultTimeCap(t *testing.T) {
	const roundoff = 1e-9
	set := &Settings{StarFraction: 1.0 / 8}
	m, err := prepare(s1Net{}, set)
	if err != nil {
		t.Fatal(err)
	}
	if want := 1000 * 6.0 * 12; math.Abs(m.timeCap-want) > roundoff*want {
		t.Errorf("default time cap %g, want %g", m.timeCap, want)
	}
	if rc, err := RCTime(s1Net{}); err != nil || math.Abs(rc-6*12) > roundoff*72 {
		t.Errorf("RCTime = %g, %v; want C·R = 72", rc, err)
	}
}

// s1Net is the S1 star as a bare Network: centre 0, ends 1–3.
type s1Net struct{}

func (s1Net) Size() (int, int) { return 4, 3 }

func (s1Net) WalkNode(v int) (string, vertex.Law, []vertex.End, []float64) {
	id := string(rune('a' + v))
	if v == 0 {
		return id, vertex.Law{Kind: vertex.Balance}, []vertex.End{{Edge: 0}, {Edge: 1}, {Edge: 2}}, nil
	}
	return id, vertex.Law{Kind: vertex.Fixed}, []vertex.End{{Edge: v - 1, Side: 1}}, nil
}

func (s1Net) WalkEdge(e int) (string, int, int, float64, [2]float64, bool) {
	w := [3]float64{0.5, 0.3, 0.2}[e]
	return string(rune('p' + e)), 0, e + 1, float64(e + 1), [2]float64{w, w}, true
}

func (s1Net) EdgeCoeffs(int, float64) (a, b, c, f, rho float64) { return 0.5, 0, 0, 0, 1 }
