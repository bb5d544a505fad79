package compare

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"
)

// Verdict is the outcome of a cross-check.
type Verdict string

const (
	// Agree: no check fails the family-wise test, and every error bar is
	// narrow enough to have seen a discrepancy of Settings.Resolution.
	Agree Verdict = "agree"
	// Disagree: at least one check fails the family-wise test.
	Disagree Verdict = "disagree"
	// Inconclusive: no check fails, but some walker error bar is too wide to
	// tell (or some check could not be evaluated, or there was nothing to
	// compare).
	Inconclusive Verdict = "inconclusive"
)

// Default settings, chosen so that (TestForkPower) a 10-percentage-point
// contradiction at a two-arm fork is found with 10^5 walkers in every one of
// 200 seeds, while a consistent fork agrees in ≥ 95% of them.
const (
	DefaultLevel      = 0.01
	DefaultResolution = 0.02
)

// Settings controls Decide. A nil *Settings means the defaults.
type Settings struct {
	// Level is the family-wise error level: the probability that a correct
	// pair of engines is declared in disagreement. Zero means DefaultLevel
	// (0.01). Must lie in (0, 1).
	Level float64
	// Resolution is the smallest discrepancy worth detecting: an absolute
	// tolerance for probabilities and for distribution checks (cumulative
	// probability), relative to |PDE| for values and times. Zero means
	// DefaultResolution (0.02). Must be positive.
	Resolution float64
}

// SettingsError reports a Settings field outside its range.
type SettingsError struct {
	Field string
	Value float64
}

func (e *SettingsError) Error() string {
	switch e.Field {
	case "level":
		return fmt.Sprintf("cross-check level %g: must lie strictly between 0 and 1", e.Value)
	}
	return fmt.Sprintf("cross-check resolution %g: must be a positive number", e.Value)
}

// Validate reports a field of s outside its range, as a *SettingsError.
// A nil s is valid. The command line should call it on user flags before
// Decide, which panics on invalid settings.
func (s *Settings) Validate() error {
	if s == nil {
		return nil
	}
	if s.Level != 0 && !(s.Level > 0 && s.Level < 1) {
		return &SettingsError{Field: "level", Value: s.Level}
	}
	if s.Resolution != 0 && !(s.Resolution > 0 && !math.IsInf(s.Resolution, 1)) {
		return &SettingsError{Field: "resolution", Value: s.Resolution}
	}
	return nil
}

func (s *Settings) values() (level, res float64) {
	if err := s.Validate(); err != nil {
		panic("compare: Decide: " + err.Error())
	}
	level, res = DefaultLevel, DefaultResolution
	if s != nil && s.Level != 0 {
		level = s.Level
	}
	if s != nil && s.Resolution != 0 {
		res = s.Resolution
	}
	return level, res
}

// Report is the outcome of Decide. It marshals to the cross-check contract's
// JSON object {"checks": [...], "verdict": "...", ...}.
type Report struct {
	Checks  []Check `json:"checks"` // the checks, with Pass set against the family-wise threshold
	Verdict Verdict `json:"verdict"`
	Worst   int     `json:"worst"`   // index of the most significant discrepancy (smallest p), -1 if none
	Explain string  `json:"explain"` // one plain-language sentence about the outcome

	// Threshold is the per-check p-value below which a check fails
	// (Level/m), and Detectable[i] the smallest discrepancy check i could
	// have detected at that threshold, in the units of its Kind (absolute,
	// or relative to |PDE| for KindValue checks): z_{1−Level/(2m)}·StdErr
	// for a z-test, the critical distance for a distribution check; +Inf
	// without data, NaN for a check that could not be evaluated.
	Threshold  float64   `json:"threshold"`
	Detectable []float64 `json:"-"`
}

// Decide runs the family-wise test over the checks and returns the verdict.
// The rule (see the package documentation for the reasons):
//
//  1. With m checks, check i fails when P_i < Level/m (Bonferroni). Any
//     failure gives Disagree.
//  2. Otherwise, if some check's detectable discrepancy exceeds Resolution,
//     or some check could not be evaluated (P is NaN), or m = 0, the verdict
//     is Inconclusive. The detectable discrepancy of a z-test is the critical
//     half-width z_{1−Level/(2m)}·StdErr (divided by |PDE| for Value checks
//     with PDE ≠ 0); of a distribution check, the critical distance
//     CriticalD(Level/m, N, CensorAt).
//  3. Otherwise Agree.
//
// The checks are copied; their Pass fields are set in the copy (a check with
// NaN P has Pass false). Decide panics if set is invalid (see
// Settings.Validate). Cost O(m) plus one bisection per distribution check.
func Decide(checks []Check, set *Settings) Report {
	level, res := set.values()
	m := len(checks)
	r := Report{Checks: append([]Check(nil), checks...), Worst: -1, Detectable: make([]float64, m)}
	if m == 0 {
		r.Verdict = Inconclusive
		r.Explain = "nothing was compared"
		return r
	}
	r.Threshold = level / float64(m)
	zc := distuv.UnitNormal.Quantile(1 - r.Threshold/2)

	var fails, invalid []int
	wide := -1
	worstScore := math.Inf(1)
	for i := range r.Checks {
		c := &r.Checks[i]
		if math.IsNaN(c.P) {
			c.Pass = false
			invalid = append(invalid, i)
			r.Detectable[i] = math.NaN()
			continue
		}
		c.Pass = c.P >= r.Threshold
		if !c.Pass {
			fails = append(fails, i)
		}
		if s := c.score(); s < worstScore || (s == worstScore && r.Worst >= 0 && c.size() > r.Checks[r.Worst].size()) {
			worstScore, r.Worst = s, i
		}
		r.Detectable[i] = c.detectable(zc, r.Threshold)
		if r.Detectable[i] > res && (wide < 0 || r.Detectable[i]/res > r.Detectable[wide]/res) {
			wide = i
		}
	}
	if r.Worst >= 0 && r.Checks[r.Worst].P >= 1 && r.Checks[r.Worst].size() == 0 {
		r.Worst = -1 // nothing differs at all
	}
	switch {
	case len(fails) > 0:
		r.Verdict = Disagree
		r.Explain = sentence(r.Checks[r.Worst])
		if len(fails) > 1 {
			r.Explain += fmt.Sprintf(" (%d of %d checks disagree at family-wise level %s)", len(fails), m, percent(level))
		} else {
			r.Explain += fmt.Sprintf(" (1 of %d checks disagrees at family-wise level %s)", m, percent(level))
		}
	case len(invalid) > 0:
		r.Verdict = Inconclusive
		c := r.Checks[invalid[0]]
		r.Explain = fmt.Sprintf("%s could not be compared: %s", c.Quantity, c.Note)
	case wide >= 0:
		r.Verdict = Inconclusive
		c := r.Checks[wide]
		det := r.Detectable[wide]
		what := fmt.Sprintf("%.2g", det)
		tol := fmt.Sprintf("%.2g", res)
		if c.Kind == KindValue && (c.Scale > 0 || c.PDE != 0) {
			what, tol = percent(det), percent(res)
		}
		switch {
		case math.IsInf(det, 1):
			r.Explain = fmt.Sprintf("no disagreement found, but %s has no walker data", c.Quantity)
		case c.Slack > 0 && 2*c.Slack >= det:
			r.Explain = fmt.Sprintf("no disagreement found, but the walkers' estimated discretisation bias in %s, %.2g, is not below the resolution %s: a finer --step or --star-fraction, not more walkers, would settle it", c.Quantity, c.Slack, tol)
		case c.Bounded && c.inResolutionUnits(c.Upper-c.Walker) > res:
			r.Explain = fmt.Sprintf("no disagreement found, but %.3g%% of the walkers were still out at the time cap, so %s is only bounded, to [%.4g, %.4g]; a longer time cap would settle it",
				100*c.Censored, c.Quantity, c.Walker, c.Upper)
		default:
			more := math.Ceil(det * det / (res * res))
			r.Explain = fmt.Sprintf("no disagreement found, but the walker error bars are too wide: %s could hide a difference of %s (resolution %s); about %g times more walkers would settle it", c.Quantity, what, tol, more)
		}
	default:
		r.Verdict = Agree
		if m == 1 {
			r.Explain = fmt.Sprintf("%s agrees within its error bar at level %s", r.Checks[0].Quantity, percent(level))
		} else {
			r.Explain = fmt.Sprintf("all %d quantities agree within their error bars at family-wise level %s", m, percent(level))
		}
	}
	return r
}

// score is ln P (smaller is more significant), from the log-space value
// when P underflowed.
func (c *Check) score() float64 {
	if c.P > 0 {
		return math.Log(c.P)
	}
	if c.lnP < 0 {
		return c.lnP
	}
	return math.Inf(-1)
}

// size is the magnitude of the discrepancy, to break ties between p-values.
func (c *Check) size() float64 {
	if c.Kind == KindLaw {
		return c.Stat
	}
	if math.IsNaN(c.Z) {
		return math.Abs(c.Walker - c.PDE)
	}
	return math.Abs(c.Z)
}

// detectable returns the smallest discrepancy c could have detected at the
// per-check threshold, in the units in which Resolution is read.
func (c *Check) detectable(zc, threshold float64) float64 {
	if c.Kind == KindLaw {
		if c.N <= 0 {
			return math.Inf(1)
		}
		return CriticalD(threshold, int(c.N), c.CensorAt) + c.Slack
	}
	h := zc * c.StdErr
	if c.Bounded {
		h += c.Upper - c.Walker
	}
	return c.inResolutionUnits(h)
}

// inResolutionUnits divides a difference h by the scale against which
// Resolution is read: Scale or |PDE| for KindValue, 1 otherwise.
func (c *Check) inResolutionUnits(h float64) float64 {
	if c.Kind == KindValue {
		switch {
		case c.Scale > 0:
			h /= c.Scale
		case c.PDE != 0:
			h /= math.Abs(c.PDE)
		}
	}
	return h
}

// percent formats a fraction as a percentage with up to 3 significant digits.
func percent(f float64) string {
	return fmt.Sprintf("%.3g%%", 100*f)
}

// sentence describes one check in plain words.
func sentence(c Check) string {
	if c.Kind == KindLaw && strings.HasPrefix(c.Quantity, "position:") {
		// The places of walkers at a time along the network's line
		// (montecarlo/crosscheck.PositionChecks; Note names the place).
		s := fmt.Sprintf("%s: the walkers' places differ from the forward solution by up to %.2g in cumulative amount along the network (walkers %.3f, PDE %.3f; KS p = %s)",
			c.Quantity, c.Stat, c.Walker, c.PDE, pString(c))
		if c.Note != "" {
			s += "; " + c.Note
		}
		return s
	}
	if c.Kind == KindLaw {
		s := fmt.Sprintf("the walker exit times differ from the PDE law by up to %.2g in cumulative probability (at t = %.4g: walkers %.3f, PDE %.3f; KS p = %s)",
			c.Stat, c.At, c.Walker, c.PDE, pString(c))
		if c.Quantity != "exit-time:distribution" {
			s = c.Quantity + ": " + s
		}
		return s
	}
	name, rest, _ := strings.Cut(c.Quantity, ":")
	zs := ""
	if !math.IsNaN(c.Z) {
		zs = fmt.Sprintf("; z = %.3g", c.Z)
	}
	if c.Bounded {
		return fmt.Sprintf("%s: the walkers bound it to [%.4g, %.4g] ± %.2g (%.3g%% were still out at the time cap); the PDE gives %.4g, outside%s",
			c.Quantity, c.Walker, c.Upper, c.StdErr, 100*c.Censored, c.PDE, zs)
	}
	switch {
	case name == "split":
		node, edge, _ := strings.Cut(rest, ":")
		return fmt.Sprintf("at %s, walkers leave along %s %.1f%% ± %.1f%% of the time; the weights imply %.1f%%%s",
			node, edge, 100*c.Walker, 100*c.StdErr, 100*c.PDE, zs)
	case name == "hit":
		return fmt.Sprintf("walkers end at %s with probability %.3f ± %.3f; the PDE gives %.3f%s", rest, c.Walker, c.StdErr, c.PDE, zs)
	case name == "weight":
		node, edge, _ := strings.Cut(rest, ":")
		return fmt.Sprintf("at %s, the walker departures imply a weight of %.4g ± %.2g on %s; the network gives %.4g%s",
			node, c.Walker, c.StdErr, edge, c.PDE, zs)
	case name == "killed":
		return fmt.Sprintf("walkers are killed with probability %.3f ± %.3f; the PDE gives %.3f%s", c.Walker, c.StdErr, c.PDE, zs)
	case c.Kind == KindProbability:
		return fmt.Sprintf("%s: walkers %.3f ± %.3f, PDE %.3f%s", c.Quantity, c.Walker, c.StdErr, c.PDE, zs)
	}
	what := c.Quantity
	longer, shorter := "higher", "lower"
	switch {
	case c.Quantity == "exit-time:mean":
		what, longer, shorter = "mean exit time", "longer", "shorter"
	case strings.HasPrefix(c.Quantity, "exit-time:"):
		what, longer, shorter = "exit time "+rest, "longer", "shorter"
	case name == "occupation":
		what, longer, shorter = "mean time spent on "+rest, "longer", "shorter"
	}
	rel := ""
	if c.PDE != 0 {
		d := (c.Walker - c.PDE) / math.Abs(c.PDE)
		word := longer
		if d < 0 {
			word, d = shorter, -d
		}
		rel = fmt.Sprintf(" (%.3g%% %s)", 100*d, word)
	}
	return fmt.Sprintf("%s: walkers %.4g ± %.2g, PDE %.4g%s%s", what, c.Walker, c.StdErr, c.PDE, rel, zs)
}

// pString formats a p-value, or its order of magnitude when it underflowed.
func pString(c Check) string {
	if c.P > 0 {
		return fmt.Sprintf("%.2g", c.P)
	}
	if s := c.score(); !math.IsInf(s, -1) {
		return fmt.Sprintf("1e%d", int(math.Floor(s/math.Ln10)))
	}
	return "0"
}
