package vertex

import (
	"fmt"
	"math"
)

// Visit is what one visit of a walker to a balance node does, in the star
// coordinates of the package documentation: the walker leaves along end k with
// probability Move[k], is killed with probability Kill (Σ Move + Kill = 1), and
// collects Reward. Besides the diffusive time to leave the star, the visit is
// held at the node for a time with the law of HoldScale times a standard
// exponential draw (zero when the node has no capacity).
type Visit struct {
	Move      []float64
	Kill      float64
	Reward    float64
	HoldScale float64
}

// Star fills dst with the per-visit rule of the balance law l for a star of
// radius r (> 0, in diffusion-time coordinates y) whose arms carry weights
// w[k] > 0:
//
//	den     = Σ w + r β
//	Move[k] = w[k]/den,  Kill = rβ/den,  Reward = rγ/den,
//	HoldScale = ρ_v·r/den.
//
// The hold is ρ_v times the node's local time during the visit, which is
// exponential with mean r/den whether the visit ends by a move or by killing
// (the minimum of two independent exponential clocks), so this part of the
// visit's duration is exact in law. dst.Move is resized to len(w). Star panics
// if l is not a balance law. Cost O(len(w)), no allocation when dst.Move has
// the capacity.
func (l Law) Star(dst *Visit, w []float64, r float64) {
	if l.Kind != Balance {
		panic(fmt.Sprintf("vertex: Star of a %v node", l.Kind))
	}
	var sum float64
	for _, x := range w {
		sum += x
	}
	den := sum + r*l.Leak
	if cap(dst.Move) < len(w) {
		dst.Move = make([]float64, len(w))
	}
	dst.Move = dst.Move[:len(w)]
	for k, x := range w {
		dst.Move[k] = x / den
	}
	dst.Kill = r * l.Leak / den
	dst.Reward = r * l.Inject / den
	dst.HoldScale = l.Capacity * r / den
}

// MeanVisitTime returns the expected duration of one visit to the star of
// radius r (generator d²/dy² on every arm) started at the node:
//
//	(r ρ_v + r² Σw/2) / (Σw + rβ),
//
// the diffusive part r²/2 weighted by the survival of the visit plus the
// expected hold. Derived by solving T” = −1 on the arms with T(r) = 0 and the
// balance law with source ρ_v at the node.
func (l Law) MeanVisitTime(w []float64, r float64) float64 {
	var sum float64
	for _, x := range w {
		sum += x
	}
	return (r*l.Capacity + r*r*sum/2) / (sum + r*l.Leak)
}

// ApplySplit writes into dst the weights that make walkers split in the
// proportions split[k] at equal physical radius while keeping the total
// Σ alpha, so that the leak's killing probability is unchanged:
//
//	dst[k] = split[k]/Σ split · Σ alpha.
//
// It is how a walker-only split override enters the walker rules. The slices
// must have equal length; ApplySplit panics otherwise.
func ApplySplit(dst, alpha, split []float64) {
	if len(dst) != len(alpha) || len(alpha) != len(split) {
		panic("vertex: ApplySplit length mismatch")
	}
	var sa, ss float64
	for k := range alpha {
		sa += alpha[k]
		ss += split[k]
	}
	for k := range dst {
		dst[k] = split[k] / ss * sa
	}
}

// StarScales are the numbers that set the law of one visit to a star of
// radius r (> 0, diffusion-time coordinates y) whose arms carry weights w
// (docs/walkers.md): with W = Σ w,
//
//	Kappa = rβ/W          the leak against the arms (the visit is killed
//	                      with probability Kappa/(1 + Kappa)),
//	Eta   = 2ρ_v/(rW)     the node capacity against the arms (it enters the
//	                      transform of the visit's duration as η·s),
//	Hold  = ρ_v·r/(W + rβ) the scale of the exponential hold at the node
//	                      (Visit.HoldScale of Star).
type StarScales struct {
	W, Kappa, Eta, Hold float64
}

// StarScales returns the scales of a visit to the star of radius r with arm
// weights w under the balance law l. It panics if l is not a balance law.
// Cost O(len(w)).
func (l Law) StarScales(w []float64, r float64) StarScales {
	if l.Kind != Balance {
		panic(fmt.Sprintf("vertex: StarScales of a %v node", l.Kind))
	}
	var sum float64
	for _, x := range w {
		sum += x
	}
	return StarScales{
		W:     sum,
		Kappa: r * l.Leak / sum,
		Eta:   2 * l.Capacity / (r * sum),
		Hold:  l.Capacity * r / (sum + r*l.Leak),
	}
}

// StarRewardDecay is the mean injection collected per visit to a star of
// radius r with weights w when every arm decays at the common rate k = c/ρ
// (> 0): γ·tanh(r√k)/(√k·W), W = Σ w. The injection is collected per unit
// local time at the node; with the arm elements of NewArm its mean per
// visit is γ/Σ α_e A_e, A_e = κ_e coth(κ_e ε_e), and with a common rate
// κ_e ε_e = r√k and α_e κ_e = √k·w_e. As k → 0 it tends to rγ/W, Star's
// Reward. It panics if l is not a balance law.
func (l Law) StarRewardDecay(w []float64, r, k float64) float64 {
	if l.Kind != Balance {
		panic(fmt.Sprintf("vertex: StarRewardDecay of a %v node", l.Kind))
	}
	var sum float64
	for _, x := range w {
		sum += x
	}
	sk := math.Sqrt(k)
	return l.Inject * math.Tanh(r*sk) / (sk * sum)
}

// Isolated returns the fate of a walker at a balance node without edges:
// it is killed by the leak (probability 1 when β > 0, else it stays
// forever and kill = 0), collecting γ/β and held for ρ_v/β times a standard
// exponential draw. It panics if l is not a balance law.
func (l Law) Isolated() (kill, reward, holdScale float64) {
	if l.Kind != Balance {
		panic(fmt.Sprintf("vertex: Isolated of a %v node", l.Kind))
	}
	if l.Leak > 0 {
		return 1, l.Inject / l.Leak, l.Capacity / l.Leak
	}
	return 0, 0, 0
}
