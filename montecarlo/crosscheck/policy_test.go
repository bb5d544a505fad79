package crosscheck

import (
	"math/rand/v2"
	"testing"
)

// TestPolicyFalseAlarms: with the optimal walkers unbiased and every
// challenger exactly tied with the optimum (the hardest honest case), the
// family-wise false-alarm rate must not exceed the level. 4000 trials of
// 1 + 4 checks at level 0.05 (one-sided challengers, two-sided optimum):
// Bonferroni gives at most 0.05, the exact rate here is 1 − (1 − 0.01)^5 ≈
// 0.049; the bound allows 4 binomial standard errors (0.0034 each).
// Fixed seed.
func TestPolicyFalseAlarms(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	const trials, level = 4000, 0.05
	alarms := 0
	for range trials {
		opt := PolicyRun{Walker: 0.5 + 0.01*rng.NormFloat64(), StdErr: 0.01}
		var ch []PolicyRun
		for range 4 {
			ch = append(ch, PolicyRun{Name: "tie", Walker: 0.5 + 0.01*rng.NormFloat64(), StdErr: 0.01})
		}
		if Policy(0.5, opt, ch, true, level).Verdict != "agree" {
			alarms++
		}
	}
	if rate := float64(alarms) / trials; rate > level+4*0.0034 {
		t.Errorf("false-alarm rate %.4f > %.2f", rate, level)
	}
}

// TestPolicyDetects: a challenger 6 standard errors better than the
// optimum (for a minimum) is caught and named; one 6 standard errors worse
// is the closest challenger with its margin; an optimal value 6 standard
// errors off is caught by the two-sided check.
func TestPolicyDetects(t *testing.T) {
	opt := PolicyRun{Walker: 1, StdErr: 0.01}
	r := Policy(1, opt, []PolicyRun{{Name: "far", Walker: 1.5, StdErr: 0.01}, {Name: "sly", Walker: 0.94, StdErr: 0.01}}, true, 0)
	if r.Verdict != "disagree" || r.Closest != 1 || r.Checks[2].Pass {
		t.Errorf("better challenger not caught: %+v", r)
	}
	r = Policy(1, opt, []PolicyRun{{Name: "far", Walker: 1.5, StdErr: 0.01}, {Name: "near", Walker: 1.06, StdErr: 0.01}}, true, 0)
	if r.Verdict != "agree" || r.Closest != 1 || r.Margin < 0.059 || r.Margin > 0.061 {
		t.Errorf("closest challenger: %+v", r)
	}
	// Maximise: a larger challenger is the better one.
	r = Policy(1, opt, []PolicyRun{{Name: "up", Walker: 1.06, StdErr: 0.01}}, false, 0)
	if r.Verdict != "disagree" {
		t.Errorf("maximise: better challenger not caught: %+v", r)
	}
	r = Policy(1, PolicyRun{Walker: 1.06, StdErr: 0.01}, nil, true, 0)
	if r.Verdict != "disagree" || r.Checks[0].Pass {
		t.Errorf("value off by 6 se not caught: %+v", r)
	}
}
