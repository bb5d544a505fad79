package montecarlo

import (
	"math"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo/internal/starlaw"
	"github.com/ramify-dev/ramify/vertex"
)

// TestStarArmsMeans checks the visit rule of a node whose arms decay at
// different rates, or that has an arm with drift (time stepped), against
// the exact-in-mean rule from the arm elements (vertex.NewArm,
// Law.StarArms; exact for drift without decay, docs/walkers.md §7), derived
// independently from the ODEs on the arms: the probability of leaving along
// each arm, of being killed, and the mean duration m_d + HoldScale,
// m_d = Σα_eF_e(ρ)/den. The visit law's means come from its transforms
// (−ψ'(0) by a five-point difference of step h: error of order h⁴E X⁵/30
// plus round-off 1e−16/h, below 1e−9 for the scaled visit times here, which
// reach E X ≈ 10 on the smallest star).
func TestStarArmsMeans(t *testing.T) {
	const (
		roundoff = 1e-12
		diff     = 1e-8
	)
	type armSpec struct{ L, a, b, c, rho, w float64 }
	for _, tc := range []struct {
		name  string
		specs []armSpec
	}{
		{"decay at different rates", []armSpec{{1, 1, 0, 0.5, 1, 1}, {2, 0.5, 0, 0, 2, 0.6}, {1.5, 2, 0, 3, 0.5, 1.3}}},
		// A drift arm (away from the node) with a large step, so that
		// the star is wide enough for the drift to matter (γ = 0.05).
		{"drift arm", []armSpec{{1, 1, 0.8, 0, 1, 1}, {2, 0.5, 0, 0, 2, 0.6}, {1.5, 2, 0, 0, 0.5, 1.3}}},
		{"drift arm beside a decaying arm", []armSpec{{1, 1, 0.8, 0, 1, 1}, {2, 0.5, 0, 0.7, 2, 0.6}, {1.5, 2, 0, 0, 0.5, 1.3}}},
		{"drift towards the node", []armSpec{{1, 1, -2, 0, 1, 1}, {2, 0.5, 0, 0, 2, 0.6}, {1.5, 2, 0, 0, 0.5, 1.3}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			specs := tc.specs
			law := vertex.Law{Kind: vertex.Balance, Leak: 0.7, Capacity: 0.4, Inject: 0.2}
			net := &graphpde.Network{}
			net.AddNode(graphpde.Node{ID: "centre", Law: law})
			for k, s := range specs {
				net.AddNode(graphpde.Node{ID: "end" + string(rune('a'+k)), Law: vertex.Law{Kind: vertex.Fixed}})
				net.AddEdge(graphpde.Edge{ID: string(rune('A' + k)), From: 0, To: k + 1, Length: s.L, A: s.a, B: s.b, C: s.c, Rho: s.rho, Weight: [2]float64{s.w, s.w}})
			}
			set := Settings{StarFraction: 1.0 / 8, Step: 0.01}
			m, err := prepare(net, &set)
			if err != nil {
				t.Fatal(err)
			}
			nd := &m.nodes[0]
			if nd.mode != modeStarArms {
				t.Fatalf("mode %d, want modeStarArms", nd.mode)
			}
			r := nd.r
			n := len(specs)
			alpha, arms := make([]float64, n), make([]vertex.Arm, n)
			p, q, g := make([]float64, n), make([]float64, n), make([]float64, n)
			var den, dm, sw float64
			for k, s := range specs {
				alpha[k] = s.w
				sk := math.Sqrt(s.rho / s.a)
				p[k] = s.w * sk
				sw += p[k]
				q[k] = s.c / s.rho * r * r / 2
				g[k] = s.b * (r / sk) / (2 * s.a)
				arms[k] = vertex.NewArm(s.a, s.b, s.c, 0, r/sk)
				den += alpha[k] * (arms[k].AmB + arms[k].B)
				dm += alpha[k] * vertex.NewArm(s.a, s.b, s.c, s.rho, r/sk).F
			}
			t.Logf("r = %.4g, γ = %.3g", r, g)
			for k := range p {
				p[k] /= sw
			}
			den += law.Leak
			var visit vertex.Visit
			law.StarArms(&visit, alpha, arms)
			prev := nd.killP
			killed := nd.killP
			for k := range specs {
				a := &nd.arms[k]
				ex := a.cx - prev
				ck := a.ck
				if k == n-1 {
					ck = 1
				}
				killed += ck - a.cx
				prev = ck
				if math.Abs(ex-visit.Move[k]) > roundoff {
					t.Errorf("arm %d: P(leave) = %.15g, StarArms %.15g", k, ex, visit.Move[k])
				}
			}
			if math.Abs(killed-visit.Kill) > roundoff {
				t.Errorf("P(killed) = %.15g, StarArms %.15g", killed, visit.Kill)
			}
			// Mean duration from the transforms.
			mean := func(l *starlaw.Law) float64 {
				const h = 1e-4
				d1 := l.Psi(complex(-h, 0)) - l.Psi(complex(h, 0))
				d2 := l.Psi(complex(-2*h, 0)) - l.Psi(complex(2*h, 0))
				return real(8*d1-d2) / (12 * h)
			}
			kappa := r * law.Leak / sw
			mix, _ := starlaw.MixtureDrift(kappa, 2*law.Capacity/(r*sw), p, q, g)
			_, ex, ki := starlaw.RatesDrift(kappa, p, q, g, nil, nil)
			et := mean(mix)
			for k := range specs {
				et += ex[k] * mean(starlaw.ExitLaw(q[k]+g[k]*g[k]/2))
				if q[k] > 0 {
					et += ki[k] * mean(starlaw.KillLawDrift(q[k], g[k]))
				}
			}
			et *= r * r / 2
			want := dm/den + visit.HoldScale
			if math.Abs(et-want) > diff*want {
				t.Errorf("mean visit time %.12g, arm elements %.12g", et, want)
			}
		})
	}
}
