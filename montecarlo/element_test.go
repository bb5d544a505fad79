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
}

// s1Net is the S1 star as a bare Network: centre 0, ends 1–3.
type s1Net struct{}

func (s1Net) NumNodes() int       { return 4 }
func (s1Net) NumEdges() int       { return 3 }
func (s1Net) NodeID(v int) string { return string(rune('a' + v)) }
func (s1Net) EdgeID(e int) string { return string(rune('p' + e)) }
func (s1Net) NodeLaw(v int) vertex.Law {
	if v == 0 {
		return vertex.Law{Kind: vertex.Balance}
	}
	return vertex.Law{Kind: vertex.Fixed}
}
func (s1Net) NodeIncident(v int) []vertex.End {
	if v == 0 {
		return []vertex.End{{Edge: 0}, {Edge: 1}, {Edge: 2}}
	}
	return []vertex.End{{Edge: v - 1, Side: 1}}
}
func (s1Net) NodeSplit(int) []float64                           { return nil }
func (s1Net) EdgeNodes(e int) (int, int)                        { return 0, e + 1 }
func (s1Net) EdgeLength(e int) float64                          { return float64(e + 1) }
func (s1Net) EdgeConstant(int) bool                             { return true }
func (s1Net) EdgeWeight(e, side int) float64                    { return [3]float64{0.5, 0.3, 0.2}[e] }
func (s1Net) EdgeCoeffs(int, float64) (a, b, c, f, rho float64) { return 0.5, 0, 0, 0, 1 }
