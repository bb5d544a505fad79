package starlaw

import "testing"

// BenchmarkTableBuild times the three kinds of tables the walkers build per
// node on a network (a mixture visit law, an arm's exit law with its low
// part, an arm's killing law with drift), with fresh laws each time (no
// cache).
func BenchmarkTableBuild(b *testing.B) {
	p, q := []float64{0.5, 0.3, 0.2}, []float64{0.01, 0.04, 0.002}
	for range b.N {
		l, _ := MixtureDrift(0.3, 0.1, p, q, nil)
		NewTable(l, DefaultKnots, false)
		NewTable(ExitLaw(0.03), DefaultKnots, true)
		NewTable(KillLawDrift(0.03, 0.1), DefaultKnots, false)
	}
}
