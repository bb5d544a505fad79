package compare

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// multinomial draws counts for probabilities p (summing to 1) from n trials
// by successive conditional binomials.
func multinomial(dst []int64, n int64, p []float64, src rand.Source) {
	left, rest := n, 1.0
	for i := range p {
		if i == len(p)-1 || left == 0 {
			dst[i] = left
			left = 0
			continue
		}
		q := math.Min(1, p[i]/rest)
		k := int64(distuv.Binomial{N: float64(left), P: q, Src: src}.Rand())
		dst[i] = k
		left -= k
		rest -= p[i]
	}
}

func TestFitWeightsExact(t *testing.T) {
	// Counts in exact proportion to α_e/scale_e recover α to roundoff.
	const roundoff = 1e-14
	alpha := []float64{1, 2, 0.5}
	scale := []float64{1, 0.5, 2}                  // sqrt(a/ρ) per edge
	dep := []int64{1000 * 16, 4000 * 16, 250 * 16} // ∝ α/scale = 1, 4, 0.25
	w, se := FitWeights(dep, scale, 3.5)
	for i := range alpha {
		if math.Abs(w[i]-alpha[i]) > roundoff {
			t.Errorf("α̂[%d] = %.16g, want %g", i, w[i], alpha[i])
		}
		if !(se[i] > 0) {
			t.Errorf("stderr[%d] = %g", i, se[i])
		}
	}
	// Two edges with unit scales: the delta method reduces to the binomial
	// standard error of the fraction times the total (derived in fit.go),
	// with the same pseudo-counts as BinomialStdErr.
	w, se = FitWeights([]int64{300, 700}, []float64{1, 1}, 2)
	if want := 2 * BinomialStdErr(0.3, 1000); math.Abs(se[0]-want) > roundoff || math.Abs(se[1]-want) > roundoff {
		t.Errorf("two-edge stderr %v, want %g", se, want)
	}
	if math.Abs(w[0]-0.6) > roundoff {
		t.Errorf("two-edge weight %g, want 0.6", w[0])
	}
	w, se = FitWeights([]int64{0, 0}, []float64{1, 1}, 2)
	if !math.IsNaN(w[0]) || !math.IsNaN(se[1]) {
		t.Errorf("no departures: %v %v", w, se)
	}
}

func TestFitWeightsCoverage(t *testing.T) {
	// Draw multinomial departure counts from the split the true weights
	// imply, fit, and compare: the spread of α̂ over 2000 replications must
	// match the mean stated standard error within 10% (the sd of a sample sd
	// from 2000 draws is 1/√4000 = 1.6%, the delta method's own error at
	// these counts is smaller still), and the true weight must lie within
	// 2 stated standard errors in 95.45% ± 1.6% of replications (3.5
	// binomial sd of 0.47%). Two cases: comparable counts, and one rare edge
	// (about 100 departures of 10^4).
	if testing.Short() {
		t.Skip("2000 replications per case")
	}
	for _, c := range []struct {
		name         string
		alpha, scale []float64
		n            int64
	}{
		{"three edges", []float64{1, 2, 0.5}, []float64{1, 0.5, 2}, 10000},
		{"rare edge", []float64{1, 1, 0.008}, []float64{1, 1, 0.4}, 10000},
	} {
		t.Run(c.name, func(t *testing.T) {
			const reps = 2000
			k := len(c.alpha)
			p := make([]float64, k)
			var sum, total float64
			for i := range p {
				p[i] = c.alpha[i] / c.scale[i]
				sum += p[i]
				total += c.alpha[i]
			}
			for i := range p {
				p[i] /= sum
			}
			src := rand.New(rand.NewPCG(51, 1))
			dep := make([]int64, k)
			fits := make([][]float64, k)
			meanSE := make([]float64, k)
			covered := make([]int, k)
			for range reps {
				multinomial(dep, c.n, p, src)
				w, se := FitWeights(dep, c.scale, total)
				for i := range w {
					fits[i] = append(fits[i], w[i])
					meanSE[i] += se[i] / reps
					if math.Abs(w[i]-c.alpha[i]) <= 2*se[i] {
						covered[i]++
					}
				}
			}
			for i := range c.alpha {
				sd := stat.StdDev(fits[i], nil)
				if r := meanSE[i] / sd; math.Abs(r-1) > 0.10 {
					t.Errorf("edge %d: stated stderr %.5g, observed spread %.5g (ratio %.3f)", i, meanSE[i], sd, r)
				}
				if cov := float64(covered[i]) / reps; math.Abs(cov-0.9545) > 0.016 {
					t.Errorf("edge %d: 2-stderr coverage %.4f, want 0.9545 ± 0.016", i, cov)
				}
				if bias := stat.Mean(fits[i], nil) - c.alpha[i]; math.Abs(bias) > 4*sd/math.Sqrt(reps)+0.01*sd {
					t.Errorf("edge %d: mean fit %.5g, true %g", i, stat.Mean(fits[i], nil), c.alpha[i])
				}
			}
		})
	}
}

func TestWeightChecks(t *testing.T) {
	// Departures that follow weights (1, 3) at unit scales agree with them;
	// checked against weights (2, 2) they do not.
	dep := []int64{25000, 75000}
	ok := Decide(WeightChecks("hub", []string{"a", "b"}, dep, []float64{1, 1}, []float64{1, 3}), nil)
	if ok.Verdict != Agree {
		t.Errorf("consistent weights: %s (%s)", ok.Verdict, ok.Explain)
	}
	bad := Decide(WeightChecks("hub", []string{"a", "b"}, dep, []float64{1, 1}, []float64{2, 2}), nil)
	if bad.Verdict != Disagree || bad.Checks[0].Quantity != "weight:hub:a" {
		t.Errorf("wrong weights: %s (%s)", bad.Verdict, bad.Explain)
	}
}
