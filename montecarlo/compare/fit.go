package compare

import (
	"fmt"
	"math"
)

// FitWeights estimates the node weights α_e of one balance node from walker
// departure counts observed at equal diffusive radius (y = x·sqrt(ρ_e/a_e),
// the walk-on-stars radius of docs/walkers.md §3). There a walker leaves along e
// with probability p_e = w_e/Σw, w_e = α_e·sqrt(ρ_e/a_e), so
//
//	α_e ∝ p_e·scale_e,   scale_e = sqrt(a_e/ρ_e).
//
// With p̂_e = d_e/n (n = Σd), Q = Σ_f p̂_f·scale_f and T = total:
//
//	α̂_e = T·p̂_e·scale_e / Q,
//
// normalised so Σα̂ = T (pass the PDE weights' total at the node, so the
// numbers compare directly with the file's weights). scale_e = 1 for
// departures counted at equal physical radius.
//
// Standard error (delta method on the multinomial). Cov(p̂) = (diag p − p pᵀ)/n
// and, with A_e = α_e/T = p_e s_e/Q,
//
//	∂α̂_e/∂p_f = (T/Q)(s_e δ_ef − A_e s_f).
//
// The gradient g is orthogonal to p (Σ_f p_f g_f = (T/Q)(p_e s_e − A_e Q) = 0:
// α̂ does not change when all p scale together), so the p pᵀ term drops and
//
//	Var α̂_e = (1/n) Σ_f p_f g_f² = (T/Q)²·[p_e s_e²(1 − 2A_e) + A_e² M₂]/n,
//	M₂ = Σ_f p_f s_f².
//
// (Two edges with s = 1: T²p(1−p)/n, the binomial variance, as it must be.)
// The standard error is evaluated at p̃_e = (d_e + 1)/(n + k), k edges (one
// pseudo-count per edge, as in BinomialStdErr), so an edge with no departures
// gets a finite error bar; the estimate itself uses p̂. TestFitWeightsCoverage
// checks the spread and the coverage by simulation.
//
// If no departures were observed (n = 0) every entry of w and stderr is NaN.
// It panics if the lengths differ, a count is negative, a scale is not
// positive and finite, or total is not positive and finite (programmer
// errors). Cost O(k), two allocations.
func FitWeights(departures []int64, scale []float64, total float64) (w, stderr []float64) {
	k := len(departures)
	if len(scale) != k {
		panic("compare: FitWeights: slice length mismatch")
	}
	if !(total > 0) || math.IsInf(total, 1) {
		panic(fmt.Sprintf("compare: FitWeights: total %g must be positive and finite", total))
	}
	var n int64
	for i, d := range departures {
		if d < 0 {
			panic(fmt.Sprintf("compare: FitWeights: negative count %d at edge %d", d, i))
		}
		if !(scale[i] > 0) || math.IsInf(scale[i], 1) {
			panic(fmt.Sprintf("compare: FitWeights: scale %g at edge %d must be positive and finite", scale[i], i))
		}
		n += d
	}
	w = make([]float64, k)
	stderr = make([]float64, k)
	if n == 0 {
		for i := range w {
			w[i], stderr[i] = math.NaN(), math.NaN()
		}
		return w, stderr
	}
	nf := float64(n)
	var q float64
	for i, d := range departures {
		q += float64(d) / nf * scale[i]
	}
	for i, d := range departures {
		w[i] = total * float64(d) / nf * scale[i] / q
	}
	// Error bars at the smoothed frequencies.
	var qt, m2 float64
	pt := func(i int) float64 { return (float64(departures[i]) + 1) / (nf + float64(k)) }
	for i := range departures {
		qt += pt(i) * scale[i]
		m2 += pt(i) * scale[i] * scale[i]
	}
	for i := range departures {
		p, s := pt(i), scale[i]
		a := p * s / qt
		v := (p*s*s*(1-2*a) + a*a*m2) / nf
		stderr[i] = total / qt * math.Sqrt(math.Max(v, 0))
	}
	return w, stderr
}

// WeightChecks compares the weights fitted from departures (FitWeights, at
// equal diffusive radius with the given scales) with the weights of the
// network at that node, one Value check per edge named weight:NODE:EDGE.
// The fitted weights are normalised to the total of weights. With k edges
// only k − 1 of the checks are independent (the totals agree by
// construction). Panics as FitWeights and SplitChecks. Cost O(k).
func WeightChecks(node string, ends []string, departures []int64, scale, weights []float64) []Check {
	if len(ends) != len(departures) || len(weights) != len(departures) {
		panic("compare: WeightChecks: slice length mismatch")
	}
	var total float64
	for _, w := range weights {
		total += w
	}
	fit, se := FitWeights(departures, scale, total)
	checks := make([]Check, len(ends))
	var n int64
	for _, d := range departures {
		n += d
	}
	for i := range ends {
		q := "weight:" + node + ":" + ends[i]
		if n == 0 {
			checks[i] = zCheck(q, KindValue, weights[i], math.NaN(), math.Inf(1))
			checks[i].Note = "no departures observed at " + node
			continue
		}
		checks[i] = zCheck(q, KindValue, weights[i], fit[i], se[i])
		checks[i].N = n
	}
	return checks
}
