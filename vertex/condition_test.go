package vertex

import (
	"errors"
	"math"
	"testing"
)

// TestLinearCondition checks the residual form of a linear balance law
// against the balance written out by hand, its derivatives against central
// differences, and the monotonicity verdicts.
func TestLinearCondition(t *testing.T) {
	// Differences of an affine function are exact up to round-off of the
	// values, |G| ≈ 10 here, over a step of 1e-3.
	const diffTol = 1e-9
	c := Linear{Law: Law{Kind: Balance, Leak: 0.5, Inject: 2}, Alpha: []float64{1, 3}}
	u, d := 1.5, []float64{0.2, -0.7}
	dd := make([]float64, 2)
	g, du := c.Residual(u, d, dd)
	// By hand: −(1·0.2 + 3·(−0.7)) + 0.5·1.5 − 2 = 1.9 + 0.75 − 2 = 0.65,
	// up to the rounding of four operations on numbers of size 2.
	const roundoff = 1e-15
	if math.Abs(g-0.65) > roundoff || du != 0.5 || dd[0] != -1 || dd[1] != -3 {
		t.Fatalf("G = %g, ∂u = %g, ∂d = %v; want 0.65, 0.5, [-1 -3]", g, du, dd)
	}
	const h = 1e-3
	for j := range d {
		dp := append([]float64(nil), d...)
		dm := append([]float64(nil), d...)
		dp[j] += h
		dm[j] -= h
		gp, _ := c.Residual(u, dp, make([]float64, 2))
		gm, _ := c.Residual(u, dm, make([]float64, 2))
		if fd := (gp - gm) / (2 * h); math.Abs(fd-dd[j]) > diffTol {
			t.Errorf("∂G/∂d[%d] = %g, difference quotient %g", j, dd[j], fd)
		}
	}
	if err := c.Monotone(u, d); err != nil {
		t.Errorf("admissible law: %v", err)
	}
	if err := CheckMonotone(c, u, d, dd); err != nil {
		t.Errorf("CheckMonotone: %v", err)
	}
	fx := Linear{Law: Law{Kind: Fixed, Value: 3}}
	if g, du := fx.Residual(2, nil, nil); g != -1 || du != 1 {
		t.Errorf("fixed: G = %g, ∂u = %g; want −1, 1", g, du)
	}
	bad := Linear{Law: Law{Kind: Balance, Leak: -1}, Alpha: []float64{1}}
	var me *MonotoneError
	if err := bad.Monotone(0, []float64{0}); !errors.As(err, &me) || me.End != -1 {
		t.Errorf("negative leak: %v, want a MonotoneError on u", err)
	}
	neg := Linear{Law: Law{Kind: Balance}, Alpha: []float64{1, -2}}
	if err := CheckMonotone(neg, 0, []float64{0, 0}, dd); !errors.As(err, &me) || me.End != 1 {
		t.Errorf("negative weight: %v, want a MonotoneError on end 1", err)
	}
}

// TestStarScales checks the visit scales against Star, which states the
// same laws as probabilities: Kill = κ/(1+κ), HoldScale = Hold; and the
// decayed injection reward against its k → 0 limit rγ/W (Star's Reward) and
// against the arm elements (γ/Σ α_e A_e with NewArm's A = AmB + B) on a star
// of plain arms with a common decay rate.
func TestStarScales(t *testing.T) {
	const roundoff = 1e-14
	l := Law{Kind: Balance, Leak: 0.7, Inject: 1.3, Capacity: 0.4}
	w := []float64{1, 2.5, 0.5}
	r := 0.3
	sc := l.StarScales(w, r)
	var v Visit
	l.Star(&v, w, r)
	if math.Abs(sc.Kappa/(1+sc.Kappa)-v.Kill) > roundoff || math.Abs(sc.Hold-v.HoldScale) > roundoff {
		t.Errorf("κ/(1+κ) = %g, Kill = %g; Hold = %g, HoldScale = %g", sc.Kappa/(1+sc.Kappa), v.Kill, sc.Hold, v.HoldScale)
	}
	if want := 2 * 0.4 / (r * 4); math.Abs(sc.Eta-want) > roundoff {
		t.Errorf("η = %g, want %g", sc.Eta, want)
	}
	// Small k: tanh(r√k)/√k = r(1 − r²k/3 + …), relative error r²k/3.
	const kSmall = 1e-10 // r²k/3 = 3e−12 relative: well inside smallK
	const smallK = 1e-10
	if got, want := l.StarRewardDecay(w, r, kSmall), r*l.Inject/4; math.Abs(got-want) > smallK*want {
		t.Errorf("k → 0: %g, want %g", got, want)
	}
	// Arms with a = ρ = 1 (so w = α) and c = k: γ/Σ α_e A_e.
	k := 2.0
	var den float64
	for _, a := range w {
		arm := NewArm(1, 0, k, 0, r)
		den += a * (arm.AmB + arm.B)
	}
	if got, want := l.StarRewardDecay(w, r, k), l.Inject/den; math.Abs(got-want) > roundoff*want {
		t.Errorf("common decay: %g, arm elements give %g", got, want)
	}
	kill, rew, hold := l.Isolated()
	if kill != 1 || math.Abs(rew-1.3/0.7) > roundoff || math.Abs(hold-0.4/0.7) > roundoff {
		t.Errorf("Isolated = %g, %g, %g", kill, rew, hold)
	}
}
