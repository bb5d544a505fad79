package crosscheck

import (
	"fmt"
	"math"

	"github.com/ramify-dev/ramify/montecarlo/compare"
)

// The cross-check of a control problem (docs/controls.md §3): walkers that
// follow the computed optimal policy must reproduce the computed optimal
// value (two-sided), and walkers that follow any other policy must do no
// better than it (one-sided: a challenger's estimated payoff significantly
// below the optimum, for a minimum, refutes optimality). The family of
// 1 + len(challengers) tests is held at the level by Bonferroni's bound.

// PolicyRun is the walkers' estimate of the payoff from the start under one
// policy, with the PDE's value of that policy when known (NaN otherwise).
type PolicyRun struct {
	Name           string
	PDE            float64
	Walker, StdErr float64
	N              int64
}

// PolicyResult is the outcome of Policy.
type PolicyResult struct {
	// Checks: first the two-sided check of the optimal policy's value,
	// then one one-sided check per challenger (P is the one-sided p-value
	// that the challenger does better than the optimum; Z is its margin
	// in standard errors, positive when it does worse).
	Checks    []compare.Check
	Verdict   compare.Verdict
	Threshold float64 // the per-check p threshold, level/(1 + challengers)
	// Closest is the index of the challenger whose estimate came closest
	// to the optimum (or beyond it); Margin its estimate minus the optimum
	// in the objective's direction (≥ 0: worse than optimal), with
	// MarginErr its standard error. Closest is −1 without challengers.
	Closest           int
	Margin, MarginErr float64
	Explain           string
}

// Policy judges the runs: optimum is the computed optimal value at the
// start, opt the walkers under the optimal policy, ch the challengers;
// minimise says whether the objective is a minimum; level is the
// family-wise false-alarm level (0: compare.DefaultLevel).
func Policy(optimum float64, opt PolicyRun, ch []PolicyRun, minimise bool, level float64) PolicyResult {
	if level <= 0 {
		level = compare.DefaultLevel
	}
	res := PolicyResult{Threshold: level / float64(1+len(ch)), Closest: -1, Verdict: compare.Agree}
	c := compare.Mean("value under the optimal policy", optimum, opt.Walker, opt.StdErr)
	c.N = opt.N
	c.Pass = !(c.P < res.Threshold)
	res.Checks = append(res.Checks, c)
	sign := 1.0 // margin > 0: the challenger is worse
	if !minimise {
		sign = -1
	}
	for i, r := range ch {
		margin := sign * (r.Walker - optimum)
		z := margin / r.StdErr
		// One-sided: P(Z ≤ z) = Φ(z) under "no better than the optimum",
		// small when the challenger's margin is far below 0.
		p := 0.5 * math.Erfc(-z/math.Sqrt2)
		if math.IsNaN(z) {
			p = math.NaN()
		}
		cc := compare.Check{Quantity: "challenger " + r.Name, PDE: r.PDE, Walker: r.Walker, StdErr: r.StdErr, Z: z, P: p, N: r.N, Pass: !(p < res.Threshold)}
		if math.IsNaN(p) {
			cc.Pass = false
			cc.Note = "no estimate"
		}
		res.Checks = append(res.Checks, cc)
		if res.Closest < 0 || margin < res.Margin {
			res.Closest, res.Margin, res.MarginErr = i, margin, r.StdErr
		}
	}
	failed := -1
	for i, c := range res.Checks {
		if !c.Pass {
			res.Verdict = compare.Disagree
			if failed < 0 {
				failed = i
			}
		}
	}
	switch {
	case failed == 0:
		res.Explain = fmt.Sprintf("the walkers following the computed policy give %.6g ± %.2g, the PDE %.6g (z = %.2f, p = %.2g below the family-wise %.2g): the computed value is not that of its policy", opt.Walker, opt.StdErr, optimum, c.Z, c.P, res.Threshold)
	case failed > 0:
		r := ch[failed-1]
		res.Explain = fmt.Sprintf("challenger %s does better than the computed optimum: %.6g ± %.2g against %.6g (p = %.2g below the family-wise %.2g): the computed policy is not optimal", r.Name, r.Walker, r.StdErr, optimum, res.Checks[failed].P, res.Threshold)
	case res.Closest >= 0:
		r := ch[res.Closest]
		res.Explain = fmt.Sprintf("the walkers reproduce the optimal value (z = %.2f) and no challenger does better; the closest, %s, has a margin of %.4g ± %.2g over the optimum (%.1f standard errors; positive = worse)", c.Z, r.Name, res.Margin, res.MarginErr, res.Margin/res.MarginErr)
		if gap := sign * (r.PDE - optimum); res.Margin < 3*res.MarginErr && gap > 0 {
			res.Explain += fmt.Sprintf("; by the PDE it is worse by %.3g, which these walkers do not resolve", gap)
		}
	default:
		res.Explain = fmt.Sprintf("the walkers reproduce the optimal value (z = %.2f); no challenger was run", c.Z)
	}
	return res
}
