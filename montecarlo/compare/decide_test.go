package compare

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"
)

func TestDecideCases(t *testing.T) {
	// Hand-made check sets whose verdict follows from the rule in doc.go.
	// With m = 3 and the default level 1%, the per-check threshold is
	// 0.01/3 = 0.00333 (|z| > 2.935) and the critical half-width is
	// 2.935·stderr, to be compared with the resolution 0.02.
	tight := Probability("hit:a", 0.5, 0.502, 0.002)              // z = 1, detectable 0.0059
	tightMean := Mean("exit-time:mean", 2, 2.01, 0.005)           // z = 2, detectable 0.73%
	tooFar := Probability("hit:b", 0.3, 0.312, 0.003)             // z = 4 → fails
	wide := Probability("hit:c", 0.5, 0.51, 0.01)                 // z = 1, detectable 0.029 > 0.02
	wideMean := Mean("exit-time:mean", 2, 2.05, 0.05)             // detectable 7.3% > 2%
	borderline := Probability("hit:d", 0.5, 0.5+2.9*0.002, 0.002) // z = 2.9 < 2.935: passes
	invalid := Mean("value", math.NaN(), 1, 0.1)
	for _, c := range []struct {
		name   string
		checks []Check
		want   Verdict
		worst  int
		phrase string
	}{
		{"agree", []Check{tight, tightMean, borderline}, Agree, 2, "all 3 quantities agree"},
		{"disagree", []Check{tight, tooFar, tightMean}, Disagree, 1, "walkers end at b with probability 0.312 ± 0.003; the PDE gives 0.300"},
		{"disagree beats wide", []Check{wide, tooFar, wideMean}, Disagree, 1, "1 of 3 checks disagrees"},
		{"wide probability", []Check{tight, wide, tightMean}, Inconclusive, 2, "hit:c could hide a difference of 0.029"},
		{"wide mean", []Check{tight, wideMean, tightMean}, Inconclusive, 2, "exit-time:mean could hide a difference of 7.34%"},
		{"not evaluated", []Check{tight, invalid, tightMean}, Inconclusive, 1, "value could not be compared"},
		{"empty", nil, Inconclusive, -1, "nothing was compared"},
	} {
		t.Run(c.name, func(t *testing.T) {
			r := Decide(c.checks, nil)
			if r.Verdict != c.want {
				t.Errorf("verdict %s, want %s (%s)", r.Verdict, c.want, r.Explain)
			}
			if c.worst >= 0 && r.Worst != c.worst && c.want == Disagree {
				t.Errorf("worst = %d, want %d", r.Worst, c.worst)
			}
			if !strings.Contains(r.Explain, c.phrase) {
				t.Errorf("explanation %q lacks %q", r.Explain, c.phrase)
			}
			for i, ch := range r.Checks {
				if want := !math.IsNaN(ch.P) && ch.P >= r.Threshold; ch.Pass != want {
					t.Errorf("check %d (%s): pass = %v with p = %g, threshold %g", i, ch.Quantity, ch.Pass, ch.P, r.Threshold)
				}
			}
		})
	}
	// The input is not modified.
	in := []Check{tooFar}
	in[0].Pass = true
	Decide(in, nil)
	if !in[0].Pass {
		t.Error("Decide modified its input")
	}
}

func TestDecideSettings(t *testing.T) {
	c := []Check{Probability("hit:a", 0.5, 0.51, 0.01)} // z = 1, detectable 2.58·0.01
	if r := Decide(c, &Settings{Resolution: 0.03}); r.Verdict != Agree {
		t.Errorf("resolution 0.03: %s", r.Verdict)
	}
	if r := Decide(c, &Settings{Level: 0.4}); r.Verdict != Disagree { // z = 1 has p = 0.317 < 0.4
		t.Errorf("level 0.4: %s", r.Verdict)
	}
	for _, s := range []Settings{{Level: 1}, {Level: -0.1}, {Resolution: -1}, {Level: math.NaN()}} {
		if err := s.Validate(); err == nil {
			t.Errorf("%+v accepted", s)
		}
	}
	var sp *Settings
	if err := sp.Validate(); err != nil {
		t.Errorf("nil settings: %v", err)
	}
}

func TestExplainSentences(t *testing.T) {
	// The plain-language sentence for each kind of quantity.
	for _, c := range []struct {
		check Check
		want  string
	}{
		{Probability("split:hub:arm2", 0.6667, 0.431, 0.005), "at hub, walkers leave along arm2 43.1% ± 0.5% of the time; the weights imply 66.7%"},
		{Proportion("hit:tip1", 0.667, 431, 1000), "walkers end at tip1 with probability 0.431 ± 0.016; the PDE gives 0.667"},
		{Mean("exit-time:mean", 0.5, 0.5305, 0.004), "mean exit time: walkers 0.5305 ± 0.004, PDE 0.5 (6.1% longer)"},
		{Mean("occupation:arm1", 2, 1.9, 0.01), "mean time spent on arm1: walkers 1.9 ± 0.01, PDE 2 (5% shorter)"},
		{Mean("killed", 0.2, 0.25, 0.001), "walkers are killed with probability 0.250 ± 0.001; the PDE gives 0.200"},
		{Mean("value", 1, 1.1, 0.01), "value: walkers 1.1 ± 0.01, PDE 1 (10% higher)"},
		{Mean("weight:hub:arm1", 2, 1.5, 0.01), "at hub, the walker departures imply a weight of 1.5 ± 0.01 on arm1; the network gives 2"},
	} {
		if got := sentence(c.check); !strings.HasPrefix(got, c.want) {
			t.Errorf("got  %q\nwant %q…", got, c.want)
		}
	}
	d := Distribution("exit-time:distribution", []float64{3, 3.1, 3.2, 3.3, 3.4, 3.5, 3.6, 3.7, 3.8, 3.9}, 0, 0, expSurvival)
	if got := sentence(d); !strings.HasPrefix(got, "the walker exit times differ from the PDE law by up to 0.95 in cumulative probability") {
		t.Errorf("distribution: %q", got)
	}
}

func TestDecideBonferroni(t *testing.T) {
	// 20 checks of pure noise (z ~ N(0,1), independent) must give Disagree
	// in at most Level of the replications: Bonferroni gives 1 − (1 −
	// 0.01/20)^20 = 0.00998 for independent checks. Over 20000 replications
	// the binomial sd is 0.0007, so the rate must lie within 0.00998 ±
	// 4 sd — it must not be anti-conservative, and here (independence) it
	// is not much conservative either. The same noise judged at 3σ per
	// check, without the correction, gives 1 − 0.9973^20 = 5.3% false
	// alarms: that is why the threshold is Level/m.
	const reps, m = 20000, 20
	if testing.Short() {
		t.Skip("20000 replications")
	}
	rng := rand.New(rand.NewPCG(31, 1))
	checks := make([]Check, m)
	disagree, naive := 0, 0
	for range reps {
		any3 := false
		for i := range checks {
			z := rng.NormFloat64()
			checks[i] = Probability("hit:n", 0.5, 0.5+0.001*z, 0.001)
			any3 = any3 || math.Abs(z) > 3
		}
		if Decide(checks, nil).Verdict == Disagree {
			disagree++
		}
		if any3 {
			naive++
		}
	}
	want := 1 - math.Pow(1-0.01/m, m)
	sd := math.Sqrt(want * (1 - want) / reps)
	t.Logf("family-wise rate %.5f, naive %.4f", float64(disagree)/reps, float64(naive)/reps)
	if r := float64(disagree) / reps; math.Abs(r-want) > 4*sd {
		t.Errorf("family-wise false alarm rate %.5f, want %.5f ± %.5f", r, want, 4*sd)
	}
	if r := float64(naive) / reps; r < 0.045 {
		t.Errorf("naive 3σ rate %.4f: expected about 0.053", r)
	}
}

// forkChecks simulates the check set of a two-arm fork with equal arms,
// walkers starting at the hub: split checks at the hub (n departures, the
// fewest possible with n walkers), hit checks at both tips, the mean exit
// time and its distribution. On equal arms the exit-time law does not
// depend on the split (docs/references.md S1 (i)), and the hit probability of a
// tip is the split probability of its arm; the exit-time law is taken
// exponential here (any continuous law serves to exercise Decide).
func forkChecks(rng *rand.Rand, n int, walkerSplit, impliedSplit float64, times []float64) []Check {
	b := distuv.Binomial{N: float64(n), P: walkerSplit, Src: rng}
	d1 := int64(b.Rand())
	k1 := int64(b.Rand())
	const mu = 0.5 // PDE mean exit time
	var sum, sum2 float64
	for i := range times {
		x := mu * rng.ExpFloat64()
		times[i] = x
		sum += x
		sum2 += x * x
	}
	nf := float64(n)
	mean := sum / nf
	se := math.Sqrt((sum2/nf - mean*mean) / (nf - 1))
	checks := SplitChecks("hub", []string{"arm1", "arm2"}, []int64{d1, int64(n) - d1}, []float64{impliedSplit, 1 - impliedSplit})
	checks = append(checks,
		Proportion("hit:tip1", impliedSplit, k1, int64(n)),
		Proportion("hit:tip2", 1-impliedSplit, int64(n)-k1, int64(n)),
		Mean("exit-time:mean", mu, mean, se),
		Distribution("exit-time:distribution", times, 0, 0, func(t float64) float64 { return math.Exp(-t / mu) }),
	)
	return checks
}

func TestForkPower(t *testing.T) {
	// The requirement behind the defaults: at 10^5 walkers, a fork whose
	// walkers split 50/50 while the weights imply 2/3 vs 1/3, or any
	// 10-percentage-point contradiction, is Disagree in ≥ 99% of seeds, and
	// a consistent fork is Agree in ≥ 95%. (A 10-point gap is 60 standard
	// errors at this size; a consistent fork fails only by a family-wise
	// false alarm, ≤ 1%, or by an error bar wider than the resolution, which
	// at 10^5 walkers is 4× narrower than 0.02.)
	// 60 seeds for a consistent fork: ≥ 95% allows 3 misses where about 0.6
	// are expected; 30 for a contradiction, which at 60 sd never passes.
	short := testing.Short()
	const n = 100000
	times := make([]float64, n)
	for _, c := range []struct {
		name            string
		walker, implied float64
		want            Verdict
		minRate         float64
		seeds           int
	}{
		{"consistent 2/3", 2.0 / 3, 2.0 / 3, Agree, 0.95, 60},
		{"consistent 1/2", 0.5, 0.5, Agree, 0.95, 60},
		{"50/50 against 2/3", 0.5, 2.0 / 3, Disagree, 0.99, 30},
		{"10 points", 0.45, 0.55, Disagree, 0.99, 30},
	} {
		t.Run(c.name, func(t *testing.T) {
			seeds := c.seeds
			if short {
				seeds = 5
			}
			hits := 0
			for s := range seeds {
				rng := rand.New(rand.NewPCG(41, uint64(s)))
				r := Decide(forkChecks(rng, n, c.walker, c.implied, times), nil)
				if r.Verdict == c.want {
					hits++
				} else {
					t.Logf("seed %d: %s: %s", s, r.Verdict, r.Explain)
				}
			}
			if rate := float64(hits) / float64(seeds); rate < c.minRate {
				t.Errorf("%s in %.3f of seeds, want ≥ %g", c.want, rate, c.minRate)
			}
		})
	}
	// With 10^3 walkers a consistent fork is not yet Agree: the split error
	// bar (critical half-width 3.1·0.015 = 0.047) exceeds the resolution.
	rng := rand.New(rand.NewPCG(42, 0))
	r := Decide(forkChecks(rng, 1000, 2.0/3, 2.0/3, make([]float64, 1000)), nil)
	if r.Verdict != Inconclusive || !strings.Contains(r.Explain, "more walkers") {
		t.Errorf("10^3 walkers: %s: %s", r.Verdict, r.Explain)
	}
}

// TestDecideScale checks that a value check's Scale replaces |PDE| as the
// magnitude the resolution is read against: a value of 0.1 with stderr 0.002
// cannot resolve 2% of itself (3.3·0.002/0.1 ≈ 6.6%) but can resolve 2% of a
// payoff scale of 1.
func TestDecideScale(t *testing.T) {
	c := Mean("value", 0.1, 0.1, 0.002)
	if r := Decide([]Check{c}, nil); r.Verdict != Inconclusive {
		t.Errorf("without scale: %s, want inconclusive", r.Verdict)
	}
	c.Scale = 1
	if r := Decide([]Check{c}, nil); r.Verdict != Agree {
		t.Errorf("with scale 1: %s, want agree (%s)", r.Verdict, r.Explain)
	}
}
