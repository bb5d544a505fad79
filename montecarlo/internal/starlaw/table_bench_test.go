package starlaw

import "testing"

// BenchmarkTableBuild times the kinds of tables the walkers build per node
// on a network, with fresh laws each time (no cache): a mixture visit law
// (every node whose arms decay at different rates), an arm's killing law
// with drift, and an arm's exit law with its low part (only for arms
// decaying so fast that the tilt of T_f would reject too often).
func BenchmarkTableBuild(b *testing.B) {
	p, q := []float64{0.5, 0.3, 0.2}, []float64{0.01, 0.04, 0.002}
	b.Run("mixture", func(b *testing.B) {
		for range b.N {
			l, _ := MixtureDrift(0.3, 0.1, p, q, nil)
			NewTable(l, DefaultKnots, false)
		}
	})
	b.Run("kill-drift", func(b *testing.B) {
		for range b.N {
			NewTable(KillLawDrift(0.03, 0.1), DefaultKnots, false)
		}
	})
	b.Run("exit-low-part", func(b *testing.B) {
		for range b.N {
			NewTable(ExitLaw(3), DefaultKnots, true)
		}
	})
}
