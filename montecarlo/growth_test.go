package montecarlo_test

import (
	"context"
	"errors"
	"math"
	"testing"

	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex"
)

// TestGrowthWeights: a negative decay is walked with growth weights when
// Settings.Growth allows it. On (0, 1) with u” + k²u = 0 (a = 1, c = −k²),
// u(0) = 0, u(1) = 1, the value is u(x) = sin(kx)/sin(k) while k < π (below
// the principal eigenvalue; derived, elementary ODE): at k = 1.5, x = 0.5,
// 0.68335. A second case puts a balance node with a growing arm in the
// middle (two halves, the same solution: the node's visits carry the
// growth at the arms' rate). Bound: 4 standard errors plus the
// time-stepping allowance of TestTimeStepping. Without Growth the negative
// decay is a *CoefficientError.
func TestGrowthWeights(t *testing.T) {
	const k = 1.5
	prof := func(x float64) (a, b, c, f, rho float64) { return 1, 0, -k * k, 0, 1 }
	want := math.Sin(k*0.5) / math.Sin(k)
	t.Run("interval", func(t *testing.T) {
		net := interval(tEdge{L: 1, prof: prof}, 0, 1)
		res := run(t, net, onEdge(0, 0.5), montecarlo.Settings{Particles: 40000, Seed: 31, Growth: true})
		t.Logf("u(0.5) = %.5f ± %.5f, want %.5f, max weight %.3g", res.Value.Mean, res.Value.StdErr, want, res.MaxWeight)
		if math.Abs(res.Value.Mean-want) > 4*res.Value.StdErr+tsBias*want {
			t.Errorf("u(0.5) = %.5f ± %.5f, want %.5f", res.Value.Mean, res.Value.StdErr, want)
		}
		if !(res.MaxWeight > 1) {
			t.Errorf("MaxWeight %g: no growth recorded", res.MaxWeight)
		}
	})
	t.Run("node between growing halves", func(t *testing.T) {
		net := &tNet{}
		l, m, r := net.node(fixed(0)), net.node(kirchhoff), net.node(fixed(1))
		net.edge(tEdge{from: l, to: m, L: 0.5, prof: prof})
		net.edge(tEdge{from: m, to: r, L: 0.5, prof: prof})
		res := run(t, net, vertex.AtNode(m), montecarlo.Settings{Particles: 8000, Seed: 32, Growth: true})
		t.Logf("u(m) = %.5f ± %.5f, want %.5f", res.Value.Mean, res.Value.StdErr, want)
		if math.Abs(res.Value.Mean-want) > 4*res.Value.StdErr+tsBias*want {
			t.Errorf("u(m) = %.5f ± %.5f, want %.5f", res.Value.Mean, res.Value.StdErr, want)
		}
	})
	t.Run("refused without Growth", func(t *testing.T) {
		net := interval(tEdge{L: 1, prof: prof}, 0, 1)
		_, err := montecarlo.Run(context.Background(), net, onEdge(0, 0.5), &montecarlo.Settings{Particles: 10})
		var ce *montecarlo.CoefficientError
		if !errors.As(err, &ce) || ce.Field != "decay" {
			t.Errorf("error %v, want a decay CoefficientError", err)
		}
	})
}
