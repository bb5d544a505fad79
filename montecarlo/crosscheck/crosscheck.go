package crosscheck

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/interp"

	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/montecarlo/compare"
	"github.com/ramify-dev/ramify/vertex"
)

// PDE holds the PDE side's answers for the start point, in the network's
// node and edge numbering.
type PDE struct {
	// HasValue says whether Value is to be compared (the network has a
	// payoff and the steady solve gave one); ValueNote, when not empty,
	// says why a value was not available and becomes a note.
	HasValue  bool
	Value     float64
	ValueNote string
	// Hit[v] is the probability of absorption at fixed node v.
	Hit []float64
	// Killed is the probability of being killed before absorption.
	Killed float64
	// Mean is the mean lifetime.
	Mean float64
	// Survival, when not nil, is the survival function P(τ > t); nil
	// means the law of the lifetime is not available.
	Survival func(t float64) (float64, error)
	// Occupation[e] is the expected time spent on edge e.
	Occupation []float64
	// Positions, one per res.PositionTimes, are the forward densities
	// that the walkers' places at those times are compared with
	// (PositionChecks); nil when the run recorded no positions.
	Positions []Density
}

// Options selects the optional parts of a cross-check.
type Options struct {
	Fit        bool // estimate node weights from the walkers' departures
	Occupation bool // compare edge occupation times too
	// Widen, when set, adds variances to the probability checks: the
	// squared estimated bias of approximate walker steps and its own
	// squared standard error (value and mean exit time are widened by the
	// caller through the Result's standard errors).
	Widen *Widen
	// PositionsFine, when set, is the finer run (half the step and star
	// fraction, same seed, same position times) whose records widen the
	// position checks by the estimated bias of the places
	// (PositionChecksBias).
	PositionsFine *montecarlo.Result
}

// Widen holds per node the variance added to the hitting-probability
// check, and the variance added to the killed-fraction check.
type Widen struct {
	Hit    []float64
	Killed float64
}

// WeightFit is the fitted weight of one edge end at a node, beside the
// file's.
type WeightFit struct {
	Node, Edge           string
	File, Fitted, StdErr float64
}

// Result is a cross-check: the decision, the fitted weights, notes on what
// was not compared and why, the band level of the figures, and whether the
// exit-time law was compared (and so can be drawn).
type Result struct {
	Report      compare.Report
	Fits        []WeightFit
	Notes       []string
	Level       float64
	LawCompared bool
}

// killedEps is the PDE's probability of being killed below which, with no
// walker killed either, "killed" is not compared: a probability of 1e-9 is
// rounding of 1 − Σ Hit, not a way to end.
const killedEps = 1e-9

// Run compares pde with the walker run res from start on net, with the
// decision settings set (nil: defaults) and options opt. It fails only
// when the survival function fails where the test evaluates it. Cost:
// O(nodes + edges) plus the distribution test (about 1300 evaluations of
// the survival function and O(n log n) in the walkers' exit times).
func Run(net montecarlo.Network, start vertex.Point, pde *PDE, res *montecarlo.Result, set *compare.Settings, opt Options) (*Result, error) {
	if set == nil {
		set = &compare.Settings{}
	}
	nn, ne := net.Size()
	cc := &Result{Level: set.Level}
	if cc.Level == 0 {
		cc.Level = compare.DefaultLevel
	}
	var checks []compare.Check
	if pde.ValueNote != "" {
		cc.Notes = append(cc.Notes, pde.ValueNote)
	}
	// Walkers still out at the time cap ended nowhere yet: where their
	// share q could move an estimate by more than a tenth of its error bar
	// (Negligible), the walkers only bound the value and the hitting and
	// killing probabilities (compare.Bounds: inconclusive when the bounds
	// are wider than the resolution, never a false disagreement), and the
	// share itself is compared with the PDE's survival P(τ > cap).
	q := res.CensoredFraction()
	if res.Censored > 0 {
		cc.Notes = append(cc.Notes, fmt.Sprintf("%.3g%% of the walkers (%d) were still out at the time cap %.4g: where that matters the value and the hitting probabilities are compared as bounds", 100*q, res.Censored, res.TimeCap))
	}
	if pde.HasValue {
		lo, hi, bounded := ValueBounds(net, res)
		switch {
		case bounded && !Negligible(1, hi-lo, res.Value.StdErr):
			c := compare.Bounds("value", compare.KindValue, pde.Value, lo, hi, res.Value.StdErr, q)
			c.Scale = payoffScale(net, c.PDE)
			checks = append(checks, c)
		case !bounded && res.Censored > 0:
			cc.Notes = append(cc.Notes, "value not compared: sources keep paying the walkers still out at the time cap, so it cannot even be bounded")
		default:
			c := compare.Mean("value", pde.Value, res.Value.Mean, res.Value.StdErr)
			c.Scale = payoffScale(net, c.PDE)
			checks = append(checks, c)
		}
	}
	// Probabilities of where walkers end, as proportions of all finished
	// walkers (censored ones in the denominator: they ended nowhere yet, so
	// the frequency is a lower bound and the frequency plus q an upper one).
	count := func(e montecarlo.Estimate) int64 { return int64(math.Round(e.Mean * float64(res.Finished))) }
	prob := func(name string, pde float64, e montecarlo.Estimate, extra float64) compare.Check {
		k := count(e)
		n := res.Finished
		if Negligible(q, 1, e.StdErr) {
			c := compare.Proportion(name, pde, k, n)
			if extra > 0 && n > 0 {
				c = compare.Probability(name, pde, c.Walker, math.Sqrt(c.StdErr*c.StdErr+extra))
				c.N = n
			}
			return c
		}
		se := math.Max(compare.BinomialStdErr(float64(k)/float64(n), n), compare.BinomialStdErr(float64(k+res.Censored)/float64(n), n))
		return compare.Bounds(name, compare.KindProbability, pde, float64(k)/float64(n), float64(k+res.Censored)/float64(n), math.Sqrt(se*se+extra), q)
	}
	ids := make([]string, nn)
	laws := make([]vertex.Law, nn)
	ends := make([][]vertex.End, nn)
	for v := range nn {
		ids[v], laws[v], ends[v], _ = net.WalkNode(v)
		if laws[v].Kind == vertex.Fixed {
			extra := 0.0
			if opt.Widen != nil && v < len(opt.Widen.Hit) {
				extra = opt.Widen.Hit[v]
			}
			checks = append(checks, prob("hit:"+ids[v], pde.Hit[v], res.Hit[v], extra))
		}
	}
	if pde.Killed > killedEps || res.Killed.Mean > 0 {
		extra := 0.0
		if opt.Widen != nil {
			extra = opt.Widen.Killed
		}
		checks = append(checks, prob("killed", pde.Killed, res.Killed, extra))
	}
	if res.Censored > 0 && pde.Survival != nil {
		if s, err := pde.Survival(res.TimeCap); err == nil {
			checks = append(checks, compare.Proportion("censored", s, res.Censored, res.Finished))
		} else {
			cc.Notes = append(cc.Notes, "the censored fraction is not compared: "+err.Error())
		}
	}
	if res.Censored == 0 {
		checks = append(checks, compare.Mean("exit-time:mean", pde.Mean, res.ExitTime.Mean, res.ExitTime.StdErr))
	} else {
		cc.Notes = append(cc.Notes, "the mean exit time is not compared (the walkers still out would lengthen it by an unknown amount); the distribution check accounts for them")
	}
	atFixed := start.Edge < 0 && laws[start.Node].Kind == vertex.Fixed
	switch {
	case atFixed:
		cc.Notes = append(cc.Notes, "the start is a fixed node: every walker is absorbed at once, so the exit-time law is a point mass at 0 and is not compared")
	case pde.Survival != nil:
		cc.LawCompared = true
		times := ExitTimes(res)
		sv := Survival{At: pde.Survival}
		ch := compare.Distribution("exit-time:distribution", times, res.TimeCap, int(res.Censored), SurvivalTable(sv.Eval, times))
		if sv.Err != nil {
			return nil, fmt.Errorf("exit-time law from the PDE: %w", sv.Err)
		}
		checks = append(checks, ch)
	default:
		cc.Notes = append(cc.Notes, "the exit-time distribution is not available from the PDE for this network; it is not compared")
	}
	if opt.Occupation && res.Censored == 0 {
		for e := 0; e < ne && e < len(res.Occupation) && e < len(pde.Occupation); e++ {
			id, _, _, _, _, _ := net.WalkEdge(e)
			checks = append(checks, compare.Mean("occupation:"+id, pde.Occupation[e], res.Occupation[e].Mean, res.Occupation[e].StdErr))
		}
	}
	// Split frequencies are compared at junctions with enough departures to
	// resolve the resolution: a binomial frequency near ½ has standard error
	// 0.5/sqrt(n), and 4 of them must fit within it. Rarely visited
	// junctions would only make the verdict inconclusive; they are counted
	// in a note (their effect still shows in the hitting probabilities).
	resolution := compare.DefaultResolution
	if set.Resolution != 0 {
		resolution = set.Resolution
	}
	minDepartures := int64(math.Ceil(4 * 0.5 / resolution * 4 * 0.5 / resolution))
	sparse := 0
	for v := range nn {
		if laws[v].Kind != vertex.Balance || v >= len(res.Departures) || res.Departures[v] == nil || len(ends[v]) < 2 || v >= len(res.SplitExact) || !res.SplitExact[v] {
			continue
		}
		var departed int64
		for _, d := range res.Departures[v] {
			departed += d
		}
		enough := departed >= minDepartures
		if !enough {
			sparse++
			if !opt.Fit {
				continue
			}
		}
		w, scale, alpha, names := starWeights(net, ends[v])
		var sw float64
		for _, x := range w {
			sw += x
		}
		implied := make([]float64, len(w))
		for k := range w {
			implied[k] = w[k] / sw
		}
		if enough {
			checks = append(checks, compare.SplitChecks(ids[v], names, res.Departures[v], implied)...)
		}
		if opt.Fit {
			var total float64
			for _, a := range alpha {
				total += a
			}
			fw, fse := compare.FitWeights(res.Departures[v], scale, total)
			for k := range fw {
				cc.Fits = append(cc.Fits, WeightFit{Node: ids[v], Edge: names[k], File: alpha[k], Fitted: fw[k], StdErr: fse[k]})
			}
		}
	}
	if sparse > 0 {
		cc.Notes = append(cc.Notes, fmt.Sprintf("split frequencies not compared at %d junctions that walkers left fewer than %d times", sparse, minDepartures))
	}
	if len(res.PositionTimes) > 0 {
		pc, notes, err := PositionChecksBias(net, res, opt.PositionsFine, pde.Positions)
		if err != nil {
			return nil, err
		}
		checks = append(checks, pc...)
		cc.Notes = append(cc.Notes, notes...)
	}
	cc.Report = compare.Decide(checks, set)
	return cc, nil
}

// payoffScale is the magnitude against which the resolution of the value
// u(start) is read: the largest fixed value, or |u| itself if larger, so that
// a small probability-like value of payoffs in [0, 1] is judged on the
// payoffs' scale and not relative to its own size.
func payoffScale(net montecarlo.Network, u float64) float64 {
	s := math.Abs(u)
	nn, _ := net.Size()
	for v := range nn {
		if _, law, _, _ := net.WalkNode(v); law.Kind == vertex.Fixed {
			s = math.Max(s, math.Abs(law.Value))
		}
	}
	return s
}

// starWeights returns, for the ends of a node, the weights
// w_e = α_e·sqrt(ρ_e/a_e) (docs/walkers.md), the scales sqrt(a_e/ρ_e) that
// turn them back into α, the α themselves and the names of the ends (the
// edge id, with the side for a self-loop).
func starWeights(net montecarlo.Network, ends []vertex.End) (w, scale, alpha []float64, names []string) {
	n := len(ends)
	w, scale, alpha, names = make([]float64, n), make([]float64, n), make([]float64, n), make([]string, n)
	for k, end := range ends {
		id, from, to, length, al, _ := net.WalkEdge(end.Edge)
		x := 0.0
		if end.Side == 1 {
			x = length
		}
		a, _, _, _, rho := net.EdgeCoeffs(end.Edge, x)
		alpha[k] = al[end.Side]
		scale[k] = math.Sqrt(a / rho)
		w[k] = alpha[k] / scale[k]
		names[k] = id
		if from == to {
			names[k] += [2]string{"(from end)", "(to end)"}[end.Side]
		}
	}
	return w, scale, alpha, names
}

// ExitTimes returns the exit times of the walkers that were absorbed or
// killed (censored walkers excluded), from res.Samples.
func ExitTimes(res *montecarlo.Result) []float64 {
	times := make([]float64, 0, len(res.Samples))
	for _, s := range res.Samples {
		if s.Node >= montecarlo.Killed {
			times = append(times, s.Time)
		}
	}
	return times
}

// Survival adapts a survival function that can fail to the plain functions
// of package compare: Eval returns 0 after a failure and keeps the first
// error in Err, which the caller must check before using what Eval fed.
type Survival struct {
	At  func(float64) (float64, error)
	Err error
}

// Eval returns At(t), or 0 once At has failed.
func (s *Survival) Eval(t float64) float64 {
	if s.Err != nil {
		return 0
	}
	v, err := s.At(t)
	if err != nil {
		s.Err = err
		return 0
	}
	return v
}

// Knots of SurvivalTable: quantiles of the sample and equispaced points.
const (
	tableQuantiles  = 1024
	tableEquispaced = 256
	// tableMerge merges knots closer than this fraction of the largest
	// exit time (rounding of equal times).
	tableMerge = 1e-12
	// tableMinSample is the sample size below which the survival function
	// is called directly.
	tableMinSample = 64
)

// SurvivalTable returns a monotone cubic interpolant of the survival function
// s on knots that follow the walkers' exit times (1024 quantiles of the
// sample plus 256 equispaced points), so that a KS test over 10⁶ sample
// points costs about 1300 Laplace inversions instead of one per point. Between
// knots the law changes by at most about 1/1024 in probability, where a cubic
// interpolant of a smooth function errs by far less than the statistical
// resolution 1/sqrt(n). Beyond the last knot s itself is called.
func SurvivalTable(s func(float64) float64, times []float64) func(float64) float64 {
	if len(times) < tableMinSample {
		return s
	}
	sorted := slices.Clone(times)
	slices.Sort(sorted)
	tmax := sorted[len(sorted)-1]
	if !(tmax > 0) {
		return s
	}
	knots := []float64{0}
	for i := 1; i <= tableEquispaced; i++ {
		knots = append(knots, tmax*float64(i)/tableEquispaced)
	}
	for i := 1; i < tableQuantiles; i++ {
		knots = append(knots, sorted[i*(len(sorted)-1)/tableQuantiles])
	}
	slices.Sort(knots)
	knots = slices.CompactFunc(knots, func(a, b float64) bool { return math.Abs(b-a) <= tableMerge*tmax })
	vals := make([]float64, len(knots))
	for i, t := range knots {
		vals[i] = s(t)
	}
	var f interp.FritschButland
	if err := f.Fit(knots, vals); err != nil {
		return s
	}
	return func(t float64) float64 {
		if t < 0 || t > tmax {
			return s(t)
		}
		return f.Predict(t)
	}
}

// PayoffRange returns the least and the greatest payoff that a walker still
// out at the time cap could yet collect: a fixed node's value, or 0 if it is
// killed. ok is false when sources or injections make it unbounded (the
// payoff then grows with the rest of the walker's life). Edges whose
// coefficients vary are checked at 33 points. Cost O(nodes + edges).
func PayoffRange(net montecarlo.Network) (lo, hi float64, ok bool) {
	nn, ne := net.Size()
	for v := range nn {
		_, law, _, _ := net.WalkNode(v)
		switch {
		case law.Kind == vertex.Fixed:
			lo, hi = math.Min(lo, law.Value), math.Max(hi, law.Value)
		case law.Inject != 0:
			return 0, 0, false
		}
	}
	const samples = 33
	for e := range ne {
		_, _, _, length, _, constant := net.WalkEdge(e)
		for i := range samples {
			if _, _, _, f, _ := net.EdgeCoeffs(e, length*float64(i)/(samples-1)); f != 0 {
				return 0, 0, false
			}
			if constant {
				break
			}
		}
	}
	return lo, hi, true
}

// ValueBounds returns the interval in which u(start) lies, up to Monte Carlo
// error, given what the walkers of res collected by the time cap and the
// share of them still out then; ok is false when PayoffRange is unbounded.
func ValueBounds(net montecarlo.Network, res *montecarlo.Result) (lo, hi float64, ok bool) {
	plo, phi, ok := PayoffRange(net)
	if !ok {
		return math.NaN(), math.NaN(), false
	}
	q := res.CensoredFraction()
	return res.Value.Mean + q*plo, res.Value.Mean + q*phi, true
}

// Negligible reports whether censoring at fraction q can move an estimate
// by at most a tenth of its standard error se (bias bound q·width, width the
// range of what a censored walker could still add), so that the estimate can
// be used as it is (common practice, no source: a tenth of an error bar
// changes a z-score by at most 0.1).
func Negligible(q, width, se float64) bool {
	return q == 0 || q*width <= 0.1*se
}
