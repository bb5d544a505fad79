package vertex

import (
	"errors"
	"math"
	"testing"
)

// roundoff is the tolerance for identities that hold exactly in real
// arithmetic and involve a handful of operations.
const roundoff = 1e-14

// TestValidate checks that every inadmissible law is rejected naming its
// field, and that admissible ones pass.
func TestValidate(t *testing.T) {
	for _, c := range []struct {
		name  string
		law   Law
		field string // "" if admissible
	}{
		{"kirchhoff", Law{Kind: Balance}, ""},
		{"fixed", Law{Kind: Fixed, Value: -3}, ""},
		{"leaky sticky source", Law{Kind: Balance, Leak: 1, Capacity: 2, Inject: -4}, ""},
		{"negative leak", Law{Kind: Balance, Leak: -1}, "leak"},
		{"negative capacity", Law{Kind: Balance, Capacity: -0.5}, "capacity"},
		{"NaN injection", Law{Kind: Balance, Inject: math.NaN()}, "inject"},
		{"infinite value", Law{Kind: Fixed, Value: math.Inf(1)}, "fixed"},
	} {
		t.Run(c.name, func(t *testing.T) {
			err := c.law.Validate()
			if c.field == "" {
				if err != nil {
					t.Fatalf("unexpected error %v", err)
				}
				return
			}
			var le *LawError
			if !errors.As(err, &le) || le.Field != c.field {
				t.Fatalf("error %v, want a LawError on %q", err, c.field)
			}
		})
	}
}

// TestStar checks the per-visit rule against the balance law it comes from
// (docs/walkers.md §3): the probabilities sum to one, and for a function linear on
// every arm of the star, u_k(y) = u0 + s_k·y, the visit's expectation
// Σ Move[k]·u_k(r) + Reward equals u0 exactly when u satisfies the balance
// −Σ w_k s_k + β u0 = γ.
func TestStar(t *testing.T) {
	law := Law{Kind: Balance, Leak: 0.7, Inject: 1.3, Capacity: 2}
	w := []float64{0.5, 1.5, 2}
	const r = 0.3
	var v Visit
	law.Star(&v, w, r)
	sum := v.Kill
	for _, p := range v.Move {
		sum += p
	}
	if math.Abs(sum-1) > roundoff {
		t.Errorf("probabilities sum to %v", sum)
	}
	// Slopes s chosen freely on two arms; the third from the balance law.
	u0, s := 0.8, []float64{0.4, -1.1, 0}
	s[2] = (law.Leak*u0 - law.Inject - w[0]*s[0] - w[1]*s[1]) / w[2]
	expect := v.Reward
	for k := range w {
		expect += v.Move[k] * (u0 + s[k]*r)
	}
	if math.Abs(expect-u0) > roundoff {
		t.Errorf("visit expectation %v, want u0 = %v", expect, u0)
	}
	// The hold is ρ_v times an exponential local time of mean r/(Σw + rβ).
	if want := law.Capacity * r / (4 + r*law.Leak); math.Abs(v.HoldScale-want) > roundoff {
		t.Errorf("HoldScale %v, want %v", v.HoldScale, want)
	}
}

// TestMeanVisitTime checks the mean duration of a visit against its two
// limits: a pure Kirchhoff star, where it is the mean exit time r²/2 of
// d²/dy² from (−r, r) (docs/references.md B2 with the time scaling of trap 4:
// E τ = r² for ½d², halved for d²), and a capacity with no diffusion time
// left in the limit r → 0, where it is ρ_v r/Σw.
func TestMeanVisitTime(t *testing.T) {
	w := []float64{1, 2, 3}
	if got := (Law{Kind: Balance}).MeanVisitTime(w, 0.4); math.Abs(got-0.08) > roundoff {
		t.Errorf("Kirchhoff star: %v, want 0.08", got)
	}
	law := Law{Kind: Balance, Capacity: 5}
	const r = 1e-6
	if got, want := law.MeanVisitTime(w, r), 5*r/6; math.Abs(got/want-1) > 1e-6 {
		t.Errorf("sticky node: %v, want %v", got, want)
	}
}

// TestApplySplit checks that a split keeps the total weight and sets the
// proportions, and that zero entries are kept as zeros.
func TestApplySplit(t *testing.T) {
	alpha := []float64{1, 2, 5}
	dst := make([]float64, 3)
	ApplySplit(dst, alpha, []float64{0.5, 0, 1.5})
	want := []float64{2, 0, 6}
	for k := range dst {
		if math.Abs(dst[k]-want[k]) > roundoff {
			t.Errorf("dst[%d] = %v, want %v", k, dst[k], want[k])
		}
	}
}

// TestRow checks the balance row terms and that a fixed node has none.
func TestRow(t *testing.T) {
	diag, rhs := Law{Kind: Balance, Leak: 0.5, Capacity: 2, Inject: 3}.Row(0.25)
	if diag != 1 || rhs != 3 {
		t.Errorf("Row = %v, %v; want 1, 3", diag, rhs)
	}
	defer func() {
		if recover() == nil {
			t.Errorf("Row of a fixed node did not panic")
		}
	}()
	Law{Kind: Fixed}.Row(0)
}
