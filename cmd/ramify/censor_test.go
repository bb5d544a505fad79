package main

import (
	"context"
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// starFile is a three-arm star (a = ½, arms of length 1, 2, 3 to tips held
// at 1, 0, 0). From the hub the hitting probabilities are proportional to
// the arms' conductances a/L (Kirchhoff at the hub, docs/node-laws.md):
// P(tip1) = 1/(1 + 1/2 + 1/3) = 6/11 (derived). The mean exit time solves
// ½T” = −1 on each arm with T(tip) = 0 and Σ T'(hub) = 0: T = −x² + (L −
// T₀/L)x + T₀, so T₀ = ΣL/Σ(1/L) = 36/11 (derived). At a time cap of 0.5
// about 89% of the walkers are still out.
const starFile = `[[node]]
id = "hub"
[[node]]
id = "tip1"
fixed = 1
[[node]]
id = "tip2"
fixed = 0
[[node]]
id = "tip3"
fixed = 0
[[edge]]
id = "arm1"
from = "hub"
to = "tip1"
length = 1
diffusivity = 0.5
[[edge]]
id = "arm2"
from = "hub"
to = "tip2"
length = 2
diffusivity = 0.5
[[edge]]
id = "arm3"
from = "hub"
to = "tip3"
length = 3
diffusivity = 0.5
`

// TestCensoredCrosscheck is the regression test of walkers still out at
// --time-cap: with 89% censored the cross-check used to compare the value
// and hitting probabilities as if complete and say "disagree" (z ≈ −450).
// Now they are compared as bounds that hold the PDE's answers, the censored
// fraction itself is compared with the PDE's P(τ > cap), and the verdict is
// inconclusive, saying why.
func TestCensoredCrosscheck(t *testing.T) {
	star := writeFile(t, "star.toml", starFile)
	code, out, errs := runCLI(t, context.Background(), "crosscheck", star, "--from", "hub", "--time-cap", "0.5", "--particles", "20000", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Checks []struct {
			Quantity                 string
			PDE, Walker, WalkerUpper float64
			Censored                 float64
			Pass                     bool
		}
		Verdict, Explanation string
	}
	if err := json.Unmarshal([]byte(strings.ReplaceAll(out, "walker_upper", "walkerupper")), &got); err != nil {
		t.Fatal(err)
	}
	if got.Verdict != "inconclusive" || !strings.Contains(got.Explanation, "time cap") {
		t.Errorf("verdict %s (%s), want inconclusive because of the time cap", got.Verdict, got.Explanation)
	}
	seen := map[string]bool{}
	for _, c := range got.Checks {
		seen[c.Quantity] = true
		if !c.Pass {
			t.Errorf("%s fails: %+v", c.Quantity, c)
		}
		if strings.HasPrefix(c.Quantity, "hit:") || c.Quantity == "value" {
			if !(c.Censored > 0.8 && c.Walker <= c.PDE && c.PDE <= c.WalkerUpper) {
				t.Errorf("%s: bounds [%g, %g] (censored %g) do not hold the PDE's %g", c.Quantity, c.Walker, c.WalkerUpper, c.Censored, c.PDE)
			}
		}
	}
	if !seen["censored"] || seen["exit-time:mean"] {
		t.Errorf("checks %v: want the censored fraction compared and the mean exit time not", seen)
	}
	if p := got.Checks[1].PDE; math.Abs(p-6.0/11) > 1e-9 {
		t.Errorf("PDE P(tip1) = %.12g, want 6/11", p)
	}

	// The human output says so too.
	_, text, _ := runCLI(t, context.Background(), "crosscheck", star, "--from", "hub", "--time-cap", "0.5", "--particles", "20000")
	if !strings.Contains(text, "still out at the time cap") || !strings.Contains(text, "–") {
		t.Errorf("human output does not show the censoring and the bounds:\n%s", text)
	}
}

// TestCensoredWalk checks walk's output with censored walkers: the value,
// the hitting probabilities and the mean exit time are null in JSON (not
// biased numbers), bounds that hold the true 6/11 take their place, the
// exit-time moments given an exit are kept apart, and quantiles beyond the
// cap are null.
func TestCensoredWalk(t *testing.T) {
	star := writeFile(t, "star.toml", starFile)
	code, out, errs := runCLI(t, context.Background(), "walk", star, "--from", "hub", "--time-cap", "0.5", "--particles", "20000", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got struct {
		Value struct {
			Mean, Lower, Upper *float64
		}
		Exit struct {
			Time struct {
				Mean      *float64
				Quantiles map[string]*float64
				AtLeast   *float64                `json:"at_least"`
				GivenExit *struct{ Mean float64 } `json:"given_exit"`
			}
			Hit              map[string]struct{ P, Lower, Upper *float64 }
			CensoredFraction float64 `json:"censored_fraction"`
			TimeCap          float64 `json:"time_cap"`
		}
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	const tol = 4 * 0.0036 // 4 binomial standard errors at n = 20000, p ≤ ½
	v := got.Value
	if v.Mean != nil || v.Lower == nil || v.Upper == nil || !(*v.Lower-tol <= 6.0/11 && 6.0/11 <= *v.Upper+tol) {
		t.Errorf("value: %+v, want mean null and bounds around 6/11", v)
	}
	h := got.Exit.Hit["tip1"]
	if h.P != nil || h.Lower == nil || !(*h.Lower-tol <= 6.0/11 && 6.0/11 <= *h.Upper+tol) {
		t.Errorf("hit tip1: %+v", h)
	}
	tm := got.Exit.Time
	if tm.Mean != nil || tm.AtLeast == nil || tm.GivenExit == nil || tm.GivenExit.Mean >= 0.5 || *tm.AtLeast < tm.GivenExit.Mean {
		t.Errorf("exit time: %+v", tm)
	}
	if tm.Quantiles["0.5"] != nil || tm.Quantiles["0.1"] == nil {
		t.Errorf("quantiles %v: want the median null (beyond the cap) and the 0.1-quantile given", tm.Quantiles)
	}
	if got.Exit.TimeCap != 0.5 || got.Exit.CensoredFraction < 0.8 {
		t.Errorf("time cap %g, censored fraction %g", got.Exit.TimeCap, got.Exit.CensoredFraction)
	}
}

// TestAutoTimeCap checks the automatic time cap: 50 PDE mean exit times
// plus 10 standard deviations, so that nothing is censored on the star; and
// a refusal, at once, of a walk whose walkers would live about 1e300 time
// units (it used to run for ever with an automatic cap of 1e303).
func TestAutoTimeCap(t *testing.T) {
	star := writeFile(t, "star.toml", starFile)
	ctx := context.Background()
	code, out, errs := runCLI(t, ctx, "exit", star, "--from", "hub", "--json")
	if code != 0 {
		t.Fatalf("exit: %d %s", code, errs)
	}
	var x struct{ Time struct{ Mean, SD float64 } }
	if err := json.Unmarshal([]byte(out), &x); err != nil {
		t.Fatal(err)
	}
	if math.Abs(x.Time.Mean-36.0/11) > 1e-9 {
		t.Errorf("PDE mean exit time %.12g, want 36/11", x.Time.Mean)
	}
	code, out, errs = runCLI(t, ctx, "walk", star, "--from", "hub", "--particles", "20000", "--json")
	if code != 0 {
		t.Fatalf("walk: %d %s", code, errs)
	}
	var w struct {
		Exit struct {
			Censored int64
			TimeCap  float64 `json:"time_cap"`
		}
	}
	if err := json.Unmarshal([]byte(out), &w); err != nil {
		t.Fatal(err)
	}
	const roundoff = 1e-9
	if want := capMeans*x.Time.Mean + capSDs*x.Time.SD; math.Abs(w.Exit.TimeCap-want) > roundoff*want || w.Exit.Censored != 0 {
		t.Errorf("time cap %g with %d censored, want %g and none", w.Exit.TimeCap, w.Exit.Censored, want)
	}

	floating := writeFile(t, "float.toml", "[[node]]\nid = \"a\"\n[[node]]\nid = \"b\"\n[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n")
	code, _, errs = runCLI(t, ctx, "walk", floating, "--from", "a", "--particles", "1000")
	if code != 1 || !strings.Contains(errs, "--time-cap") || strings.Contains(errs, "TimeCap") {
		t.Errorf("walkers that never end: exit %d, %q", code, errs)
	}

	endless := writeFile(t, "endless.toml", "[[node]]\nid = \"pool\"\nleak = 1e-300\n[[edge]]\nid = \"loop\"\nfrom = \"pool\"\nto = \"pool\"\nlength = 1\ndiffusivity = 1\n")
	code, _, errs = runCLI(t, ctx, "walk", endless, "--from", "pool")
	if code != 1 || !strings.Contains(errs, "nothing to estimate") {
		t.Errorf("endless walk: exit %d, %q", code, errs)
	}
}
