package compare

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Kind says how a check's error bar is judged against Settings.Resolution.
type Kind uint8

const (
	// Value is a real-valued estimate (a value, a mean time, an occupation
	// time): Resolution is a tolerance relative to |PDE|.
	KindValue Kind = iota
	// Probability is an estimate in [0, 1] (hit:, split:, killed):
	// Resolution is an absolute tolerance.
	KindProbability
	// Law is a distribution check (Kolmogorov–Smirnov): Resolution is an
	// absolute tolerance on the cumulative probability.
	KindLaw
)

// String returns "value", "probability" or "law".
func (k Kind) String() string {
	switch k {
	case KindValue:
		return "value"
	case KindProbability:
		return "probability"
	case KindLaw:
		return "law"
	}
	return fmt.Sprintf("Kind(%d)", uint8(k))
}

// Check is the comparison of one quantity between the PDE answer and the
// walker estimate.
//
// For a z-test (KindValue or KindProbability) Z = (Walker − PDE)/StdErr and P is
// the two-sided normal p-value. For a distribution check (KindLaw) Stat is the
// Kolmogorov–Smirnov distance D, P its p-value, Z is NaN, and PDE, Walker and
// StdErr describe the point At where the two cumulative distribution functions
// are furthest apart (PDE and walker CDF there, and the binomial standard error
// of the walker CDF at that point).
//
// Pass is set by Decide (the constructors set it against a single-check level
// of 1%, which Decide overrides with the multiple-comparison threshold).
//
// A Check marshals to JSON with the field names of the cross-check contract;
// non-finite numbers are written as null, Z is omitted for distribution checks
// and ks/at/n are omitted when they do not apply.
type Check struct {
	Quantity string  `json:"quantity"`
	PDE      float64 `json:"pde"`
	Walker   float64 `json:"walker"`
	StdErr   float64 `json:"stderr"`
	Z        float64 `json:"z"`            // (Walker − PDE)/StdErr; NaN (omitted) for distributions
	Stat     float64 `json:"ks,omitempty"` // Kolmogorov–Smirnov distance D for distribution checks
	P        float64 `json:"p"`            // two-sided p-value of this check; NaN if it could not be computed
	Pass     bool    `json:"pass"`
	Note     string  `json:"note,omitempty"`

	Kind Kind `json:"-"` // how Decide judges the error bar; see Kind
	// Scale, for KindValue, is the magnitude against which Resolution is
	// read; 0 means |PDE|. A value whose natural scale is not its own size
	// (a Feynman–Kac value of payoffs between 0 and 1 that happens to be
	// small) sets it to that scale.
	Scale float64 `json:"-"`
	N     int64   `json:"n"`  // sample size behind the walker estimate; 0 if unknown
	At    float64 `json:"at"` // distribution checks: time of the largest CDF gap
	// Censored is the fraction of walkers still out at the time cap
	// (distribution checks only); CensorAt is F(cap) under the PDE law (1 when
	// nothing was censored), which sets the null law of D.
	Censored float64 `json:"-"`
	CensorAt float64 `json:"-"`
	// Bounded marks a check made by Bounds: the walkers only bound the
	// quantity, to [Walker, Upper] (Censored is then the fraction of walkers
	// whose end is unknown, Upper − Walker for a probability).
	Bounded bool    `json:"-"`
	Upper   float64 `json:"-"`
	// Slack, for a distribution check widened by an estimated bias of the
	// walkers (the caller reduced Stat by it before taking P), is that
	// bias: the check can hide a difference of its critical distance plus
	// Slack, which Decide reads against the resolution.
	Slack float64 `json:"bias,omitempty"`

	// lnP is ln P computed in log space, so that checks whose p-values
	// underflow to 0 can still be ranked; 0 means "not set, use ln P".
	lnP float64
}

// roundoffFloor is the smallest relative standard error a z-test uses: the
// PDE answers (exact elements, Laplace inversion) are accurate to about 1e-10
// relative, so a difference below 1e-9 of the magnitude is round-off, not a
// disagreement.
const roundoffFloor = 1e-9

// singleLevel is the level at which a constructor pre-sets Pass, before Decide
// applies the family-wise threshold.
const singleLevel = 0.01

// MarshalJSON writes c with the contract's field names. Non-finite numbers
// (an infinite standard error when nothing was observed, a NaN p-value) are
// written as null, since JSON has no NaN or Inf.
func (c Check) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteString(`{"quantity":`)
	q, err := json.Marshal(c.Quantity)
	if err != nil {
		return nil, err
	}
	b.Write(q)
	num := func(name string, v float64) {
		b.WriteString(`,"` + name + `":`)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			b.WriteString("null")
			return
		}
		b.WriteString(strconv.FormatFloat(v, 'g', -1, 64))
	}
	num("pde", c.PDE)
	num("walker", c.Walker)
	if c.Bounded {
		num("walker_upper", c.Upper)
	}
	num("stderr", c.StdErr)
	if c.Kind == KindLaw {
		num("ks", c.Stat)
		num("at", c.At)
	} else {
		num("z", c.Z)
	}
	num("p", c.P)
	if c.N > 0 {
		b.WriteString(`,"n":` + strconv.FormatInt(c.N, 10))
	}
	if (c.Kind == KindLaw || c.Bounded) && c.Censored > 0 {
		num("censored", c.Censored)
	}
	if c.Slack > 0 {
		num("bias", c.Slack)
	}
	b.WriteString(`,"pass":` + strconv.FormatBool(c.Pass))
	if c.Note != "" {
		n, err := json.Marshal(c.Note)
		if err != nil {
			return nil, err
		}
		b.WriteString(`,"note":`)
		b.Write(n)
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

// probabilityPrefixes are the quantity names that Mean treats as
// probabilities (absolute resolution).
var probabilityPrefixes = []string{"hit:", "split:", "killed", "prob:"}

func isProbabilityName(q string) bool {
	for _, p := range probabilityPrefixes {
		if strings.HasPrefix(q, p) {
			return true
		}
	}
	return false
}

// Mean returns the z-test of a walker estimate against the PDE value:
//
//	z = (walker − pde)/stderr,   p = erfc(|z|/√2)  (two-sided).
//
// Quantities named hit:…, split:…, killed… or prob:… are given
// KindProbability, every other one KindValue; use Probability to force the kind.
//
// A zero standard error does not give an infinite z: if walker == pde the
// check has z = 0 and p = 1, otherwise z is NaN and p = 0 with a Note saying
// that the error bar is missing (for proportions use BinomialStdErr, which is
// never zero). A negative or NaN standard error, or a non-finite PDE or walker
// value, gives p = NaN and a Note: Decide reports such a check as not
// evaluated. An infinite standard error (nothing observed) gives z = 0, p = 1.
// Cost O(1).
func Mean(quantity string, pde, walker, stderr float64) Check {
	k := KindValue
	if isProbabilityName(quantity) {
		k = KindProbability
	}
	return zCheck(quantity, k, pde, walker, stderr)
}

// Probability is Mean for an estimate in [0, 1], judged with an absolute
// resolution whatever its name.
func Probability(quantity string, pde, walker, stderr float64) Check {
	return zCheck(quantity, KindProbability, pde, walker, stderr)
}

// Proportion is the z-test of a walker frequency hits/n against the PDE
// probability pde, with the continuity-corrected standard error
// BinomialStdErr(hits/n, n). It panics if hits < 0, n < 0 or hits > n.
// With n = 0 the check has an infinite standard error (inconclusive).
func Proportion(quantity string, pde float64, hits, n int64) Check {
	if hits < 0 || n < 0 || hits > n {
		panic(fmt.Sprintf("compare: Proportion(%q): need 0 ≤ hits ≤ n, got hits=%d n=%d", quantity, hits, n))
	}
	if n == 0 {
		c := zCheck(quantity, KindProbability, pde, math.NaN(), math.Inf(1))
		c.Note = "no walkers"
		return c
	}
	p := float64(hits) / float64(n)
	c := zCheck(quantity, KindProbability, pde, p, BinomialStdErr(p, n))
	c.N = n
	return c
}

// Bounds is the check of a PDE value against an interval that the walkers
// give instead of an estimate: when a fraction censored of them is still out
// at the time cap, a hitting probability is only known to lie in [h, h +
// censored] (h the fraction that ended there by the cap), and a value
// of bounded payoffs in a similar interval. lower and upper are the walker
// estimates of the interval's ends, stderr the larger of their standard
// errors. The check is a z-test of the distance from pde to the interval:
//
//	z = (lower − pde)/stderr if pde < lower,  (upper − pde)/stderr if pde > upper,  0 inside,
//
// with the two-sided p-value erfc(|z|/√2) (conservative: the one-sided one is
// half of it). Decide adds the width upper − lower to the detectable
// difference, so a wide interval makes the verdict inconclusive, never agree
// (Walker holds lower, Upper holds upper). k is KindValue or
// KindProbability. It panics if upper < lower. Cost O(1).
func Bounds(quantity string, k Kind, pde, lower, upper, stderr, censored float64) Check {
	if upper < lower {
		panic(fmt.Sprintf("compare: Bounds(%q): upper %g below lower %g", quantity, upper, lower))
	}
	var c Check
	switch {
	case pde < lower:
		c = zCheck(quantity, k, pde, lower, stderr)
	case pde > upper:
		c = zCheck(quantity, k, pde, upper, stderr)
	default:
		c = zCheck(quantity, k, pde, pde, stderr)
		if !math.IsNaN(c.P) {
			c.Z, c.P, c.lnP, c.Pass = 0, 1, 0, true
			c.Note = ""
		}
	}
	c.Walker, c.Upper, c.Bounded, c.Censored = lower, upper, true, censored
	if c.Note == "" {
		c.Note = fmt.Sprintf("bounds only: %.3g%% of the walkers were still out at the time cap", 100*censored)
	}
	return c
}

func zCheck(quantity string, k Kind, pde, walker, stderr float64) Check {
	c := Check{Quantity: quantity, Kind: k, PDE: pde, Walker: walker, StdErr: stderr, Z: math.NaN(), At: math.NaN(), CensorAt: 1}
	switch {
	case math.IsInf(stderr, 1):
		c.Z, c.P, c.Pass = 0, 1, true
		if math.IsNaN(walker) {
			c.Note = "no walker estimate"
		}
		return c
	case math.IsNaN(pde) || math.IsInf(pde, 0):
		c.P = math.NaN()
		c.Note = "PDE value is not finite"
		return c
	case math.IsNaN(walker) || math.IsInf(walker, 0):
		c.P = math.NaN()
		c.Note = "walker estimate is not finite"
		return c
	case math.IsNaN(stderr) || stderr < 0:
		c.P = math.NaN()
		c.Note = "walker standard error is negative or NaN"
		return c
	}
	// A walker estimate with (almost) no spread, e.g. a value every walker
	// collects identically, would turn the PDE's round-off into a huge z.
	floor := roundoffFloor * math.Max(math.Abs(pde), math.Abs(walker))
	if stderr > 0 && stderr < floor {
		stderr = floor
		c.Note = "standard error raised to the round-off floor"
	}
	switch {
	case stderr == 0:
		if math.Abs(walker-pde) <= floor {
			c.Z, c.P, c.Pass = 0, 1, true
			c.Note = "zero standard error, values equal to round-off"
			return c
		}
		c.P = 0
		c.lnP = math.Inf(-1)
		c.Note = "zero standard error: the walker gave no error bar (use BinomialStdErr for proportions)"
		return c
	}
	c.Z = (walker - pde) / stderr
	c.P = math.Erfc(math.Abs(c.Z) / math.Sqrt2)
	c.lnP = lnNormalTail2(math.Abs(c.Z))
	c.Pass = c.P >= singleLevel
	return c
}

// lnNormalTail2 returns ln(erfc(z/√2)) for z ≥ 0, the log of the two-sided
// normal tail, accurate where erfc underflows (z > 38), from the asymptotic
// series erfc(x) ≈ e^{−x²}/(x√π)·(1 − 1/(2x²) + 3/(4x⁴)) (Abramowitz & Stegun,
// Handbook of Mathematical Functions (1964), 7.1.23 — from memory).
func lnNormalTail2(z float64) float64 {
	if p := math.Erfc(z / math.Sqrt2); p > 1e-300 {
		return math.Log(p)
	}
	x := z / math.Sqrt2
	x2 := x * x
	return -x2 - math.Log(x*math.Sqrt(math.Pi)) + math.Log1p(-1/(2*x2)+3/(4*x2*x2))
}

// BinomialStdErr returns a standard error for a proportion p estimated from n
// independent trials that is never zero:
//
//	p̃ = (n·p + 1)/(n + 2),   s = sqrt(p̃(1 − p̃)/n),
//
// the binomial (Wald) standard error evaluated at the estimate with one
// success and one failure added (Laplace's rule of succession; the same
// idea as the "add two successes and two failures" interval of Agresti &
// Coull 1998, Am. Stat. 52:119–126 — from memory). For 0 < p < 1 it differs
// from sqrt(p(1−p)/n) by a relative O(1/(n·p(1−p))); at p = 0 or 1 it is
// about 1/n instead of 0, so a frequency of exactly 0 or 1 gives a finite,
// conservative z. It returns +Inf for n = 0 and panics if n < 0 or p is
// outside [0, 1]. Cost O(1).
func BinomialStdErr(p float64, n int64) float64 {
	if n < 0 || !(p >= 0 && p <= 1) {
		panic(fmt.Sprintf("compare: BinomialStdErr(%g, %d): need 0 ≤ p ≤ 1 and n ≥ 0", p, n))
	}
	if n == 0 {
		return math.Inf(1)
	}
	nf := float64(n)
	pt := (nf*p + 1) / (nf + 2)
	return math.Sqrt(pt * (1 - pt) / nf)
}

// SplitChecks compares the departures observed at node along each incident
// edge with the splitting probabilities the weights imply. ends[i] names the
// edge of departures[i] and implied[i]; implied is normalised to sum 1 here,
// so weights w_e may be passed directly (they must be the weights of the same
// radius convention in which departures were counted: α_e at equal physical
// radius, w_e = α_e·sqrt(ρ_e/a_e) at equal diffusive radius, docs/walkers.md §3).
// Departures that ended in a kill at the node are not departures.
//
// Each edge gives one Probability check named split:NODE:EDGE with
// walker = d_e/n (n = Σ d) and the multinomial marginal standard error
// BinomialStdErr(d_e/n, n). The checks of one node are correlated (they sum to
// 1; with two edges they are the same test twice); Bonferroni in Decide stays
// valid under any dependence, only conservative.
//
// It panics if the slice lengths differ, a count is negative, or an implied
// value is negative, NaN or all are zero (programmer errors: the weights are
// validated when the network is read). Cost O(len(ends)).
func SplitChecks(node string, ends []string, departures []int64, implied []float64) []Check {
	if len(ends) != len(departures) || len(ends) != len(implied) {
		panic("compare: SplitChecks: slice length mismatch")
	}
	var n int64
	var sum float64
	for i, d := range departures {
		if d < 0 {
			panic(fmt.Sprintf("compare: SplitChecks: negative departure count %d on edge %q", d, ends[i]))
		}
		if !(implied[i] >= 0) || math.IsInf(implied[i], 0) {
			panic(fmt.Sprintf("compare: SplitChecks: implied value %g on edge %q", implied[i], ends[i]))
		}
		n += d
		sum += implied[i]
	}
	if sum <= 0 {
		panic("compare: SplitChecks: implied values are all zero at node " + node)
	}
	checks := make([]Check, len(ends))
	for i := range ends {
		checks[i] = Proportion("split:"+node+":"+ends[i], implied[i]/sum, departures[i], n)
		if n == 0 {
			checks[i].Note = "no departures observed at " + node
		}
	}
	return checks
}
