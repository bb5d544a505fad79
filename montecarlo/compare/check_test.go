package compare

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

func TestMean(t *testing.T) {
	for _, c := range []struct {
		name                string
		q                   string
		pde, walker, stderr float64
		kind                Kind
		z, p                float64 // NaN: expect NaN
		note                bool
	}{
		// p-values from the normal law: 2Φ(−1.96) = 0.04999579, 2Φ(−3) =
		// 0.002699796 (any normal table; computed here with erfc).
		{"two sigma", "exit-time:mean", 1, 1.0196, 0.01, KindValue, 1.96, 0.04999579, false},
		{"three sigma below", "hit:tip", 0.5, 0.47, 0.01, KindProbability, -3, 0.002699796, false},
		{"zero stderr equal", "hit:tip", 1, 1, 0, KindProbability, 0, 1, true},
		{"zero stderr differ", "value", 1, 0.9, 0, KindValue, math.NaN(), 0, true},
		{"no data", "value", 1, math.NaN(), math.Inf(1), KindValue, 0, 1, true},
		{"NaN PDE", "value", math.NaN(), 1, 0.1, KindValue, math.NaN(), math.NaN(), true},
		{"negative stderr", "value", 1, 1, -0.1, KindValue, math.NaN(), math.NaN(), true},
		{"split is a probability", "split:hub:a", 0.5, 0.5, 0.1, KindProbability, 0, 1, false},
		{"killed is a probability", "killed", 0.5, 0.5, 0.1, KindProbability, 0, 1, false},
	} {
		t.Run(c.name, func(t *testing.T) {
			got := Mean(c.q, c.pde, c.walker, c.stderr)
			if got.Kind != c.kind {
				t.Errorf("kind %v, want %v", got.Kind, c.kind)
			}
			same := func(a, b float64) bool {
				return (math.IsNaN(a) && math.IsNaN(b)) || math.Abs(a-b) <= 1e-7*math.Max(1, math.Abs(b))
			}
			if !same(got.Z, c.z) {
				t.Errorf("z = %g, want %g", got.Z, c.z)
			}
			if !same(got.P, c.p) {
				t.Errorf("p = %.10g, want %.10g", got.P, c.p)
			}
			if (got.Note != "") != c.note {
				t.Errorf("note %q", got.Note)
			}
			if math.IsInf(got.Z, 0) {
				t.Errorf("z is infinite")
			}
		})
	}
	// Log-space p-value of a huge z ranks it: ln erfc(50/√2) =
	// −1254.138213958860 (computed with mpmath at 30 digits). The asymptotic
	// series is cut after the x⁻⁴ term, so the next term 15/(8x⁶) ≈ 1e-9
	// bounds the error.
	const series = 1e-8
	c := Mean("value", 0, 50, 1)
	if c.P != 0 || math.Abs(c.score()-(-1254.138213958860)) > series {
		t.Errorf("z = 50: P = %g, ln P = %g", c.P, c.score())
	}
}

func TestBinomialStdErr(t *testing.T) {
	// Away from 0 and 1 it is the Wald standard error sqrt(p(1−p)/n) up to a
	// relative O(1/(n p(1−p))) (derived: p̃ − p = (1 − 2p)/(n + 2)).
	for _, c := range []struct {
		p float64
		n int64
	}{{0.5, 1000}, {0.3, 100000}, {0.9, 10000}} {
		wald := math.Sqrt(c.p * (1 - c.p) / float64(c.n))
		tol := 2 / (float64(c.n) * c.p * (1 - c.p))
		if got := BinomialStdErr(c.p, c.n); math.Abs(got-wald)/wald > tol {
			t.Errorf("p = %g, n = %d: %g, Wald %g", c.p, c.n, got, wald)
		}
	}
	// At p = 0 and 1 it is about 1/n (exactly sqrt((n+1)/n)/(n+2)), never 0.
	for _, p := range []float64{0, 1} {
		n := int64(1000)
		want := math.Sqrt(float64(n+1)/float64(n)) / float64(n+2)
		if got := BinomialStdErr(p, n); math.Abs(got-want) > 1e-15 {
			t.Errorf("p = %g: %g, want %g", p, got, want)
		}
	}
	if !math.IsInf(BinomialStdErr(0.5, 0), 1) {
		t.Error("n = 0 should give +Inf")
	}
}

func TestProportionCoverage(t *testing.T) {
	// The z-test with BinomialStdErr has close to nominal size for a
	// moderate probability: 4000 binomial draws at p = 0.3, n = 2000, must
	// reject at 5% in 5% ± 1.05% of them (3 binomial sd of 0.345%).
	if testing.Short() {
		t.Skip("4000 replications")
	}
	const reps, p, n = 4000, 0.3, 2000
	b := distuv.Binomial{N: n, P: p, Src: rand.New(rand.NewPCG(21, 1))}
	rej := 0
	for range reps {
		c := Proportion("hit:x", p, int64(b.Rand()), n)
		if c.P < 0.05 {
			rej++
		}
	}
	if r := float64(rej) / reps; math.Abs(r-0.05) > 3*math.Sqrt(0.05*0.95/reps) {
		t.Errorf("rejection rate %.4f, want 0.05 ± %.4f", r, 3*math.Sqrt(0.05*0.95/reps))
	}
}

func TestSplitChecks(t *testing.T) {
	const roundoff = 1e-15
	cs := SplitChecks("hub", []string{"a", "b", "c"}, []int64{500, 300, 200}, []float64{2, 1, 1})
	if len(cs) != 3 {
		t.Fatalf("%d checks", len(cs))
	}
	want := []struct {
		q         string
		pde, walk float64
	}{{"split:hub:a", 0.5, 0.5}, {"split:hub:b", 0.25, 0.3}, {"split:hub:c", 0.25, 0.2}}
	for i, w := range want {
		c := cs[i]
		if c.Quantity != w.q || math.Abs(c.PDE-w.pde) > roundoff || math.Abs(c.Walker-w.walk) > roundoff || c.Kind != KindProbability || c.N != 1000 {
			t.Errorf("check %d = %+v, want %+v", i, c, w)
		}
		if se := BinomialStdErr(w.walk, 1000); c.StdErr != se {
			t.Errorf("check %d stderr %g, want %g", i, c.StdErr, se)
		}
	}
	none := SplitChecks("hub", []string{"a", "b"}, []int64{0, 0}, []float64{1, 1})
	if !math.IsInf(none[0].StdErr, 1) || !strings.Contains(none[0].Note, "no departures") {
		t.Errorf("no departures: %+v", none[0])
	}
}

func TestCheckJSON(t *testing.T) {
	// The contract: {"quantity", "pde", "walker", "stderr", "z", "pass"},
	// with a KS statistic and p-value for the distribution; no NaN or Inf in
	// the output (JSON cannot carry them).
	checks := []Check{
		Mean("exit-time:mean", 0.5, 0.51, 0.004),
		Distribution("exit-time:distribution", []float64{0.1, 0.4, 0.8, 1.5}, 1, 1, expSurvival),
		Proportion("hit:tip", 0.5, 0, 0),
		Mean("value", 1, 0.9, 0),
	}
	b, err := json.Marshal(struct {
		Checks []Check `json:"checks"`
	}{checks})
	if err != nil {
		t.Fatal(err)
	}
	var back struct {
		Checks []map[string]any `json:"checks"`
	}
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatalf("output is not valid JSON: %v\n%s", err, b)
	}
	for _, key := range []string{"quantity", "pde", "walker", "stderr", "z", "p", "pass"} {
		if _, ok := back.Checks[0][key]; !ok {
			t.Errorf("mean check lacks %q: %s", key, b)
		}
	}
	if _, ok := back.Checks[1]["z"]; ok {
		t.Errorf("distribution check carries z: %v", back.Checks[1])
	}
	for _, key := range []string{"ks", "p", "at", "censored"} {
		if _, ok := back.Checks[1][key]; !ok {
			t.Errorf("distribution check lacks %q: %v", key, back.Checks[1])
		}
	}
	if v, ok := back.Checks[2]["stderr"]; !ok || v != nil {
		t.Errorf("infinite stderr should be null: %v", back.Checks[2])
	}
	if v := back.Checks[3]["z"]; v != nil {
		t.Errorf("undefined z should be null: %v", back.Checks[3])
	}
}

func TestReportJSON(t *testing.T) {
	// A Report marshals to {"checks": [...], "verdict": ...} even when a check
	// has an infinite error bar or could not be evaluated.
	r := Decide([]Check{
		Proportion("hit:tip", 0.5, 0, 0),
		Mean("value", math.NaN(), 1, 0.1),
		Distribution("exit-time:distribution", []float64{0.2, 0.9}, 0, 0, expSurvival),
	}, nil)
	b, err := json.Marshal(r)
	if err != nil {
		t.Fatal(err)
	}
	var back struct {
		Checks  []map[string]any `json:"checks"`
		Verdict string           `json:"verdict"`
	}
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatalf("not valid JSON: %v\n%s", err, b)
	}
	if back.Verdict != "inconclusive" || len(back.Checks) != 3 {
		t.Errorf("round trip: %s", b)
	}
}

// TestRoundoffFloor checks that a walker estimate with no spread is compared
// with the PDE up to round-off: a relative difference of 1e-13 passes, one of
// 1e-6 does not.
func TestRoundoffFloor(t *testing.T) {
	if c := Mean("value", 1.7, 1.7*(1+1e-13), 3.7e-17); !c.Pass {
		t.Errorf("round-off difference failed: z = %g", c.Z)
	}
	if c := Mean("value", 1.7, 1.7*(1+1e-6), 3.7e-17); c.Pass {
		t.Errorf("a 1e-6 difference passed: z = %g", c.Z)
	}
}

// TestBounds checks the comparison of a PDE value with walker bounds: inside
// the interval it passes with z = 0; outside, z is the distance to the near
// end in standard errors, with its sign; an interval wider than the
// resolution makes the verdict inconclusive (never agree) and the
// explanation names the time cap; a narrow one can agree; and the JSON
// carries both ends and the censored fraction.
func TestBounds(t *testing.T) {
	const roundoff = 1e-12
	in := Bounds("hit:a", KindProbability, 0.5, 0.1, 0.9, 0.01, 0.8)
	if in.Z != 0 || in.P != 1 || !in.Pass {
		t.Errorf("inside: %+v", in)
	}
	below := Bounds("hit:a", KindProbability, 0.05, 0.1, 0.9, 0.01, 0.8)
	above := Bounds("hit:a", KindProbability, 0.95, 0.1, 0.9, 0.01, 0.8)
	if math.Abs(below.Z-5) > roundoff || math.Abs(above.Z+5) > roundoff || below.Pass || above.Pass {
		t.Errorf("outside: z %g and %g, want +5 and −5", below.Z, above.Z)
	}
	r := Decide([]Check{in}, nil)
	if r.Verdict != Inconclusive || !strings.Contains(r.Explain, "time cap") {
		t.Errorf("wide bounds: %s (%s)", r.Verdict, r.Explain)
	}
	narrow := Bounds("hit:a", KindProbability, 0.5, 0.499, 0.5005, 0.001, 0.0015)
	if r := Decide([]Check{narrow}, nil); r.Verdict != Agree {
		t.Errorf("narrow bounds: %s (%s)", r.Verdict, r.Explain)
	}
	if r := Decide([]Check{in, below}, nil); r.Verdict != Disagree || !strings.Contains(r.Explain, "bound it to") {
		t.Errorf("bounds that miss: %s (%s)", r.Verdict, r.Explain)
	}
	b, err := json.Marshal(in)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"walker":0.1`, `"walker_upper":0.9`, `"censored":0.8`} {
		if !strings.Contains(string(b), want) {
			t.Errorf("JSON %s lacks %s", b, want)
		}
	}
}
