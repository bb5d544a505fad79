// Package exitlaw holds the law of τ₁, the exit time of a standard Brownian
// motion (generator ½ d²/dx²) from (−1, 1) started at 0, and a sampler for it.
//
// Every exact walker step draws its duration as a multiple of τ₁: for the
// generator D d²/dx² on (x − r, x + r) the exit time from x is r²τ₁/(2D).
//
// The survival function has two series (Feller, An Introduction to Probability
// Theory and Its Applications vol. II, p. 342 as cited in docs/references.md B2;
// both series derived there and checked to agree to 15 digits):
//
//	P(τ₁ > t) = (4/π) Σ_{k≥0} (−1)^k/(2k+1) · exp(−(2k+1)² π² t/8)     (eigen series)
//	P(τ₁ ≤ t) = 2 Σ_{k≥0} (−1)^k erfc((2k+1)/sqrt(2t))                (image series)
//
// E τ₁ = 1 and Var τ₁ = 2/3.
package exitlaw

import (
	"math"
	"math/rand/v2"
	"sync"
)

// imageMax is the largest t at which the image series is used; above it the
// eigen series converges in a few terms (its second term is below 1.5e−5).
const imageMax = 1.0

const terms = 12

// CDF returns P(τ₁ ≤ t), with full relative accuracy for small t. Cost: a
// dozen exp or erfc calls.
func CDF(t float64) float64 {
	if t <= 0 {
		return 0
	}
	if t <= imageMax {
		var s float64
		z := 1 / math.Sqrt(2*t)
		for k := terms - 1; k >= 0; k-- {
			term := math.Erfc(float64(2*k+1) * z)
			if k%2 == 1 {
				term = -term
			}
			s += term
		}
		return 2 * s
	}
	return 1 - survivalEigen(t)
}

// Survival returns P(τ₁ > t), with full relative accuracy for large t.
func Survival(t float64) float64 {
	if t <= imageMax {
		return 1 - CDF(t)
	}
	return survivalEigen(t)
}

func survivalEigen(t float64) float64 {
	var s float64
	for k := terms - 1; k >= 0; k-- {
		n := float64(2*k + 1)
		term := math.Exp(-n*n*math.Pi*math.Pi*t/8) / n
		if k%2 == 1 {
			term = -term
		}
		s += term
	}
	return 4 / math.Pi * s
}

// Density returns the probability density of τ₁ at t.
func Density(t float64) float64 {
	if t <= 0 {
		return 0
	}
	var s float64
	if t <= imageMax {
		for k := terms - 1; k >= 0; k-- {
			n := float64(2*k + 1)
			term := n * math.Exp(-n*n/(2*t))
			if k%2 == 1 {
				term = -term
			}
			s += term
		}
		return 2 * s / math.Sqrt(2*math.Pi*t*t*t)
	}
	for k := terms - 1; k >= 0; k-- {
		n := float64(2*k + 1)
		term := n * math.Exp(-n*n*math.Pi*math.Pi*t/8)
		if k%2 == 1 {
			term = -term
		}
		s += term
	}
	return math.Pi / 2 * s
}

// TailStart is the time beyond which the sampler uses the exact exponential
// tail t = (8/π²) ln(4/(π(1−u))): there the eigen series' second term is
// (1/3)exp(−π² t) ≤ 1e−9 of the first.
const TailStart = 2.0

// ellMax bounds ℓ = −ln u on the table: rand.Float64 returns multiples of
// 2⁻⁵³, so the smallest non-zero u has ℓ = 36.74.
const ellMax = 37.0

// Table samples τ₁ by its inverse CDF. Below TailStart it interpolates
// q = 1/t as a function of ℓ = −ln u on a uniform ℓ grid by cubic Hermite
// polynomials with the exact slopes dq/dℓ = u/(t² f(t)) (f the density); above
// TailStart it uses the exact exponential tail. A Table is read-only after
// NewTable and safe for concurrent use.
type Table struct {
	uTail    float64 // CDF(TailStart)
	ell0, dl float64 // grid start and spacing in ℓ
	q, dq    []float64
}

// DefaultKnots is the number of table knots used by Default.
const DefaultKnots = 4096

var (
	defaultOnce  sync.Once
	defaultTable *Table
)

// Default returns the shared table with DefaultKnots knots, built on first use
// (about 50 ms).
func Default() *Table {
	defaultOnce.Do(func() { defaultTable = NewTable(DefaultKnots) })
	return defaultTable
}

// NewTable builds a table with n ≥ 2 knots. Cost O(n) series evaluations and
// root finds. It panics if n < 2.
func NewTable(n int) *Table {
	if n < 2 {
		panic("exitlaw: NewTable needs at least 2 knots")
	}
	tb := &Table{uTail: CDF(TailStart)}
	tb.ell0 = -math.Log(tb.uTail)
	tb.dl = (ellMax - tb.ell0) / float64(n-1)
	tb.q = make([]float64, n)
	tb.dq = make([]float64, n)
	for i := range n {
		ell := tb.ell0 + float64(i)*tb.dl
		var t float64
		if i == 0 {
			t = TailStart
		} else {
			t = invertCDF(math.Exp(-ell))
		}
		u := CDF(t)
		tb.q[i] = 1 / t
		tb.dq[i] = u / (t * t * Density(t))
	}
	return tb
}

// invertCDF solves CDF(t) = u for 0 < u < CDF(TailStart) by bisection on
// log t followed by Newton polishing.
func invertCDF(u float64) float64 {
	lo, hi := 1e-4, TailStart
	for CDF(lo) > u {
		lo /= 2
	}
	for range 200 {
		mid := math.Sqrt(lo * hi)
		if CDF(mid) < u {
			lo = mid
		} else {
			hi = mid
		}
		if hi-lo <= 1e-15*hi {
			break
		}
	}
	t := math.Sqrt(lo * hi)
	for range 3 {
		d := Density(t)
		if d <= 0 {
			break
		}
		nt := t - (CDF(t)-u)/d
		if nt <= lo || nt >= hi {
			break
		}
		t = nt
	}
	return t
}

// Quantile returns the table's inverse CDF at u ∈ [0, 1). Cost: one log and
// a cubic evaluation; no allocation.
func (tb *Table) Quantile(u float64) float64 {
	if u >= tb.uTail {
		return 8 / (math.Pi * math.Pi) * math.Log(4/(math.Pi*(1-u)))
	}
	if u <= 0 {
		return 0
	}
	s := (-math.Log(u) - tb.ell0) / tb.dl
	i := int(s)
	if i >= len(tb.q)-1 {
		// Only u below e^−37 lands here, which Float64 never returns
		// except 0; use the small-t asymptote t ≈ 1/(2ℓ).
		return 1 / (2 * -math.Log(u))
	}
	h := s - float64(i)
	h2 := h * h
	h3 := h2 * h
	q := (2*h3-3*h2+1)*tb.q[i] + (h3-2*h2+h)*tb.dl*tb.dq[i] +
		(-2*h3+3*h2)*tb.q[i+1] + (h3-h2)*tb.dl*tb.dq[i+1]
	return 1 / q
}

// Draw returns one draw of τ₁ using one uniform from rng.
func (tb *Table) Draw(rng *rand.Rand) float64 {
	return tb.Quantile(rng.Float64())
}
