package starlaw

import (
	"encoding/binary"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"sync"
)

// Decaying arms. When arm e kills at rate q_e (in the time of the reflected
// Brownian motion B of the package documentation) and the walker enters it
// with probability p_e = w_e/Σw per excursion, each excursion is marked
// killed or not independently, and by the marking theorem of Poisson point
// processes the excursions split into independent Poisson processes in local
// time (n the excursion measure, ζ the lifetime, T_1 the hitting time of 1):
//
//   - the visit ends on arm e by reaching the rim at rate p_e·E e^{−q_eT_f}
//     = p_e ψ_f(q_e), ψ_f(s) = sqrt(2s)/sinh(sqrt(2s));
//   - it ends on arm e by being killed before the rim at rate
//     p_e·n(1 − e^{−q_e(ζ∧T_1)}) = p_e[Φ(q_e) + 1 − ψ_f(q_e)] (excursions
//     below 1 and the climb of those above);
//   - the leak ends it at rate κ;
//   - the surviving excursions below 1 form a subordinator with exponent
//     Σ p_e[Φ(s + q_e) − Φ(q_e)].
//
// So the visit's local time is L_v ~ Exp(μ), μ = κ + Σ p_e[Φ(q_e) + 1],
// independent of the fate (whose probabilities are the rates over μ), Y has
// transform μ/(μ + Σ p_e[Φ(s + q_e) − Φ(q_e)] + ηs) (Mixture), a rim exit on
// e adds the climb with transform ψ_f(s + q_e)/ψ_f(q_e) (ExitLaw) and a
// killing on e adds the time from the start of the fatal excursion to the
// killing, with transform
// q_e[Φ(q_e + s) + 1 − ψ_f(q_e + s)]/((q_e + s)[Φ(q_e) + 1 − ψ_f(q_e)])
// (KillLaw; n(∫_0^{ζ∧T_1} e^{−pt}dt) = n(1 − e^{−p(ζ∧T_1)})/p). With all
// q_e = 0 this is Visit and FinalLaw.

// oneMinusFinal returns 1 − sqrt(2p)/sinh(sqrt(2p)) without cancellation.
func oneMinusFinal(p complex128) complex128 {
	z := cmplx.Sqrt(2 * p)
	if cmplx.Abs(z) < 0.1 {
		z2 := z * z
		return z2 * (1.0/6 + z2*(-7.0/360+z2*(31.0/15120+z2*(-127.0/604800+z2*73/3421440))))
	}
	return 1 - FinalTransform(p)
}

// finalRatio returns ψ_f(p)/ψ_f(q) for real q ≥ 0 without overflow.
func finalRatio(p complex128, q float64) complex128 {
	z1, z0 := cmplx.Sqrt(2*p), complex(math.Sqrt(2*q), 0)
	if cmplx.Abs(z1) < 0.1 || real(z0) < 0.1 {
		return FinalTransform(p) / FinalTransform(complex(q, 0))
	}
	return z1 / z0 * cmplx.Exp(z0-z1) * (1 - cmplx.Exp(-2*z0)) / (1 - cmplx.Exp(-2*z1))
}

// phiPrime returns Φ'(p) = (coth z − z csch²z)/z, z = sqrt(2p), for real p
// off the poles p = −n²π²/2.
func phiPrime(p float64) float64 {
	if math.Abs(2*p) < 0.01 {
		x := 2 * p
		return 2.0/3 + x*(-4.0/45+x*(12.0/945+x*(-8.0/4725)))
	}
	z := cmplx.Sqrt(complex(2*p, 0))
	e := cmplx.Exp(-2 * z)
	coth := (1 + e) / (1 - e)
	csch2 := 4 * e / ((1 - e) * (1 - e))
	return real((coth - z*csch2) / z)
}

func phiReal(p float64) float64 { return real(Phi(complex(p, 0))) }

// Drifting arms. An arm whose motion has the drift γ_e (in the scaled
// coordinates: generator ½d² + γ_e d on [0, 1], γ_e > 0 away from the node)
// is by Girsanov's theorem the driftless motion weighted by
// e^{γ_eX_t − γ_e²t/2}: an excursion that returns to 0 has weight
// e^{−γ_e²ζ/2}, so the drift acts on it like the kill rate d_e = γ_e²/2, one
// that reaches the rim has weight e^{γ_e − γ_e²T_1/2}. With Q_e = q_e + d_e
// (decay and drift) the arm's rate of ending excursions is
// n_e(1 − e^{−sζ}1{ζ < T_1}) = γ_e + sqrt(2(s + Q_e))·coth sqrt(2(s + Q_e)),
// the flux −ψ'(0) of ψ(x) = e^{−γx} sinh(m(1 − x))/sinh m,
// m = sqrt(γ² + 2(s + q)), the solution of ½ψ” + γψ' = (s + q)ψ with
// ψ(0) = 1, ψ(1) = 0; so
//
//   - the visit's local time is Exp(μ), μ = κ + Σ p_e[γ_e + 1 + Φ(Q_e)];
//   - the subordinator of the excursions below the rim has exponent
//     Σ p_e[Φ(s + Q_e) − Φ(Q_e)] (the same form as without drift);
//   - the rim is reached on e at rate p_e e^{γ_e}ψ_f(Q_e), and the climb
//     has transform ψ_f(s + Q_e)/ψ_f(Q_e) (ExitLaw(Q_e));
//   - arm e's decay kills at rate p_e G_e(q_e), with
//     G_e(p) = γ_e + 1 + Φ(p + d_e) − e^{γ_e}ψ_f(p + d_e) (zero at p = 0),
//     after a time with transform q_eG_e(q_e + s)/((q_e + s)G_e(q_e))
//     (KillLawDrift).
//
// For γ_e = 0 these are the formulas above. The tests check the whole visit
// transform against the arm ODE with drift. (Girsanov's theorem and the
// excursion measure: D. Revuz and M. Yor, Continuous Martingales and
// Brownian Motion, 3rd ed., ch. VIII and XII, from memory; the formulas are
// derived here.)

// MixtureDrift returns the law of Y for a leak κ ≥ 0, capacity η ≥ 0 and
// arms with entry probabilities p (Σp = 1), kill rates q ≥ 0 and drifts g
// (nil: none), and μ. Its poles are the zeros of
// D(s) = μ + Σ p_e[Φ(s + Q_e) − Φ(Q_e)] + ηs, Q_e = q_e + g_e²/2, one in each
// interval between consecutive poles s = −Q_e − n²π²/2 of the Φ terms (D
// increases from −∞ to +∞ there), found by bisection. It panics on
// parameters out of range or mismatched lengths.
func MixtureDrift(kappa, eta float64, p, q, g []float64) (*Law, float64) {
	if len(p) != len(q) || (g != nil && len(g) != len(p)) || !(kappa >= 0) || !(eta >= 0) {
		panic("starlaw: Mixture parameters")
	}
	mu := kappa
	Q := make([]float64, len(p))
	var poles []float64
	for e := range p {
		if !(p[e] >= 0) || !(q[e] >= 0) || math.IsInf(q[e], 0) || (g != nil && !finite(g[e])) {
			panic(fmt.Sprintf("starlaw: Mixture arm %d: p = %g, q = %g", e, p[e], q[e]))
		}
		ge := 0.0
		if g != nil {
			ge = g[e]
		}
		Q[e] = q[e] + ge*ge/2
		if p[e] == 0 {
			continue
		}
		mu += p[e] * armRate(q[e], ge)
		poles = append(poles, -Q[e]-math.Pi*math.Pi/2, -Q[e]-2*math.Pi*math.Pi)
	}
	slices.Sort(poles)
	slices.Reverse(poles)
	poles = slices.CompactFunc(poles, func(a, b float64) bool { return math.Abs(a-b) <= 1e-12*math.Abs(a) })
	D := func(s float64) float64 {
		d := mu + eta*s
		for e := range p {
			if p[e] > 0 {
				d += p[e] * (phiReal(s+Q[e]) - phiReal(Q[e]))
			}
		}
		return d
	}
	Dp := func(s float64) float64 {
		d := eta
		for e := range p {
			if p[e] > 0 {
				d += p[e] * phiPrime(s+Q[e])
			}
		}
		return d
	}
	root := func(lo, hi float64) float64 { // D(lo+) = −∞ < 0 < D(hi−)
		for range 200 {
			mid := 0.5 * (lo + hi)
			if mid <= lo || mid >= hi {
				break // adjacent numbers: further halvings change nothing
			}
			if D(mid) < 0 {
				lo = mid
			} else {
				hi = mid
			}
		}
		return 0.5 * (lo + hi)
	}
	pole := func(s0 float64) (lam, c float64) {
		return -s0, mu / (-s0 * Dp(s0))
	}
	// The transform without the constant Φ(Q_e) terms: d0 = μ − Σ p_eΦ(Q_e).
	d0 := mu
	for e := range p {
		if p[e] > 0 {
			d0 -= p[e] * phiReal(Q[e])
		}
	}
	l := &Law{Psi: func(s complex128) complex128 {
		d := complex(d0, 0) + complex(eta, 0)*s
		for e := range p {
			if p[e] > 0 {
				d += complex(p[e], 0) * Phi(s+complex(Q[e], 0))
			}
		}
		return complex(mu, 0) / d
	}}
	l.Lam1, l.C1 = pole(root(poles[0], 0))
	l.Lam2, l.C2 = pole(root(poles[1], poles[0]))
	return l, mu
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// armRate returns an arm's rate of ending excursions, γ + 1 + Φ(q + γ²/2)
// = γ + z coth z, z = sqrt(2q + γ²), for real q ≥ 0. For a drift towards
// the node (γ < −1) the two terms nearly cancel, and it is computed as
// (z − |γ|) + z(coth z − 1), z − |γ| = 2q/(z + |γ|), z(coth z − 1) =
// 2z e^{−2z}/(1 − e^{−2z}) (for q = 0 it is 2|γ|/(e^{2|γ|} − 1), the 1/φ of
// docs/walkers.md §2 in these units).
func armRate(q, gam float64) float64 {
	if gam >= -1 {
		return gam + 1 + phiReal(q+gam*gam/2)
	}
	g := -gam
	z := math.Sqrt(2*q + g*g)
	return 2*q/(z+g) + 2*z/math.Expm1(2*z)
}

// ExitLaw returns the law of the climb to the rim of an excursion that
// survives a kill rate q ≥ 0: transform ψ_f(s + q)/ψ_f(q), poles
// s = −q − n²π²/2 with weights (−1)^{n+1}n²π²/(ψ_f(q)(q + n²π²/2)).
func ExitLaw(q float64) *Law {
	pf := real(FinalTransform(complex(q, 0)))
	l1, l2 := q+math.Pi*math.Pi/2, q+2*math.Pi*math.Pi
	return &Law{
		Psi:  func(s complex128) complex128 { return finalRatio(s+complex(q, 0), q) },
		Lam1: l1, C1: math.Pi * math.Pi / (pf * l1),
		Lam2: l2, C2: -4 * math.Pi * math.Pi / (pf * l2),
	}
}

// KillLaw returns the law of the time from the start of an excursion to its
// killing at rate q > 0, given that it is killed before the rim: transform
// q·g(q + s)/((q + s)·g(q)), g(p) = Φ(p) + 1 − ψ_f(p); the poles are those of
// g at p = −n²π²/2 for odd n (they cancel for even n), with weights
// 4q/(g(q)(q + n²π²/2)).
func KillLaw(q float64) *Law {
	if !(q > 0) || math.IsInf(q, 0) {
		panic("starlaw: KillLaw needs 0 < q < ∞")
	}
	g := func(p complex128) complex128 { return Phi(p) + oneMinusFinal(p) }
	b := real(g(complex(q, 0)))
	l1, l2 := q+math.Pi*math.Pi/2, q+9*math.Pi*math.Pi/2
	return &Law{
		Psi: func(s complex128) complex128 {
			p := s + complex(q, 0)
			return complex(q/b, 0) * g(p) / p
		},
		Lam1: l1, C1: 4 * q / (b * l1),
		Lam2: l2, C2: 4 * q / (b * l2),
	}
}

// driftKillG returns G(p) = γ + 1 + Φ(p + d) − e^γψ_f(p + d), d = γ²/2,
// written as Φ(p + d) + e^γ(1 − ψ_f(p + d)) − (e^γ − 1 − γ).
func driftKillG(p complex128, gam float64) complex128 {
	P := p + complex(gam*gam/2, 0)
	return Phi(P) + complex(math.Exp(gam), 0)*oneMinusFinal(P) - complex(math.Expm1(gam)-gam, 0)
}

// KillLawDrift returns the law of the time from the start of an excursion
// on an arm with drift γ to its killing at rate q > 0, given that it is
// killed before the rim: transform q·G(q + s)/((q + s)·G(q)) (see
// MixtureDrift). G(p) has its poles at p + γ²/2 = −n²π²/2 with residues
// −n²π²(1 − (−1)ⁿe^γ), so P(X > t) = Σ C_n e^{−λ_n t} with
// λ_n = q + γ²/2 + n²π²/2 and C_n = q n²π²(1 − (−1)ⁿe^γ)/(G(q)(λ_n − q)λ_n).
// KillLawDrift(q, 0) is KillLaw(q). It panics unless 0 < q < ∞ and γ is
// finite.
func KillLawDrift(q, gam float64) *Law {
	if gam == 0 {
		return KillLaw(q)
	}
	if !(q > 0) || math.IsInf(q, 0) || !finite(gam) {
		panic("starlaw: KillLawDrift needs 0 < q < ∞ and a finite drift")
	}
	b := real(driftKillG(complex(q, 0), gam))
	if gam < -1 {
		b = armRate(q, gam) - math.Exp(gam)*real(FinalTransform(complex(q+gam*gam/2, 0)))
	}
	d := gam * gam / 2
	weight := func(n int) (lam, c float64) {
		sign := 1.0
		if n%2 == 1 {
			sign = -1
		}
		nn := float64(n*n) * math.Pi * math.Pi
		lam = q + d + nn/2
		return lam, q * nn * (1 - sign*math.Exp(gam)) / (b * (d + nn/2) * lam)
	}
	l1, c1 := weight(1)
	l2, c2 := weight(2)
	_, c3 := weight(3)
	return &Law{
		Psi: func(s complex128) complex128 {
			p := s + complex(q, 0)
			return complex(q/b, 0) * driftKillG(p, gam) / p
		},
		// C2 bounds the second and third terms together (for small γ the
		// second is small and the third comparable to it).
		Lam1: l1, C1: c1,
		Lam2: l2, C2: math.Abs(c2) + math.Abs(c3),
	}
}

// RatesDrift returns the fate probabilities of a visit with decaying arms
// with drifts g (nil: none): the leak's κ/μ, and per arm the rim exit
// p_e e^{γ_e}ψ_f(Q_e)/μ and the killing p_e G_e(q_e)/μ (exactly 0 when
// q_e = 0; without drift p_e[Φ(q_e) + 1 − ψ_f(q_e)]/μ), Q_e = q_e + γ_e²/2
// (see MixtureDrift), written into exit and kill (resized).
func RatesDrift(kappa float64, p, q, g []float64, exit, kill []float64) (leak float64, ex, ki []float64) {
	mu := kappa
	gam := func(e int) float64 {
		if g == nil {
			return 0
		}
		return g[e]
	}
	for e := range p {
		ge := gam(e)
		mu += p[e] * armRate(q[e], ge)
	}
	ex, ki = exit[:0], kill[:0]
	for e := range p {
		ge := gam(e)
		Q := q[e] + ge*ge/2
		pf := real(FinalTransform(complex(Q, 0)))
		ex = append(ex, p[e]*math.Exp(ge)*pf/mu)
		k := 0.0
		if q[e] > 0 {
			G := real(driftKillG(complex(q[e], 0), ge))
			if ge < -1 {
				G = armRate(q[e], ge) - math.Exp(ge)*pf
			}
			k = p[e] * G / mu
		}
		ki = append(ki, k)
	}
	return kappa / mu, ex, ki
}

var (
	armMu    sync.Mutex
	armCache = map[string]*Table{}
)

func cached(key string, build func() *Table) *Table {
	armMu.Lock()
	tb, ok := armCache[key]
	armMu.Unlock()
	if ok {
		return tb
	}
	tb = build()
	armMu.Lock()
	if len(armCache) < maxCached {
		armCache[key] = tb
	}
	armMu.Unlock()
	return tb
}

// quantumBits is the number of low mantissa bits that Quantise rounds
// away: parameters are kept to 2^−41 ≈ 5e−13 relative, so laws whose
// parameters agree that far agree far below the tables' accuracy (about
// 1e−11 in probability) and share one table.
const quantumBits = 12

// Quantise rounds x to quantumBits fewer mantissa bits (to nearest).
// Tables are built from quantised parameters, so a table shared by laws
// whose parameters round alike is the same whichever of them asks first.
func Quantise(x float64) float64 {
	if x == 0 || !finite(x) {
		return x
	}
	b := math.Float64bits(x)
	b = (b + 1<<(quantumBits-1)) &^ (1<<quantumBits - 1)
	return math.Float64frombits(b)
}

// key appends the quantised values of xs to a key.
func key(k []byte, xs ...float64) []byte {
	for _, x := range xs {
		k = binary.LittleEndian.AppendUint64(k, math.Float64bits(Quantise(x)))
	}
	return k
}

func quantised(xs []float64) []float64 {
	if xs == nil {
		return nil
	}
	out := make([]float64, len(xs))
	for i, x := range xs {
		out[i] = Quantise(x)
	}
	return out
}

// MixtureKey returns the key under which MixtureDriftTable shares its
// tables: the quantised parameters.
func MixtureKey(kappa, eta float64, p, q, g []float64) string {
	k := make([]byte, 0, 8*(2+3*len(p))+2)
	k = append(k, 'm')
	k = key(k, kappa, eta)
	k = key(k, p...)
	k = key(k, q...)
	if g != nil {
		k = append(k, 'g')
		k = key(k, g...)
	}
	return string(k)
}

// MixtureDriftTable returns a shared table of MixtureDrift(kappa, eta, p, q,
// g) with its parameters quantised (see VisitTable and Quantise).
func MixtureDriftTable(kappa, eta float64, p, q, g []float64) *Table {
	return cached(MixtureKey(kappa, eta, p, q, g), func() *Table {
		l, _ := MixtureDrift(Quantise(kappa), Quantise(eta), quantised(p), quantised(q), quantised(g))
		return NewTable(l, DefaultKnots, false)
	})
}

// ExitTable returns a shared table of ExitLaw(q) (Final for q = 0), q
// quantised.
func ExitTable(q float64) *Table {
	if q == 0 {
		return Final()
	}
	q = Quantise(q)
	return cached(string(key([]byte{'e'}, q)), func() *Table { return NewTable(ExitLaw(q), DefaultKnots, true) })
}

// KillDriftTable returns a shared table of KillLawDrift(q, g), q > 0, both
// quantised.
func KillDriftTable(q, g float64) *Table {
	q, g = Quantise(q), Quantise(g)
	return cached(string(key([]byte{'k'}, q, g)), func() *Table { return NewTable(KillLawDrift(q, g), DefaultKnots, false) })
}

// Tilted laws. ExitLaw(q) and KillLaw(q) are exponential tilts of laws
// that do not depend on q: the climb of an excursion that survives the kill
// rate q has the density e^{−qt}f_f(t)/ψ_f(q) (f_f that of T_f, transform
// ψ_f(s + q)/ψ_f(q)), and the time to a killing at rate q has the density
// e^{−qt}h(t)·q/g(q), h(t) = n(ζ∧T_1 > t), transform q·g(q + s)/((q + s)g(q)),
// which is e^{−qt} times the density h(t)/g'(0) of KillBase (g'(0) = Φ'(0) +
// 1/3 = 1) up to the constant q/g(q). So both are drawn exactly by rejection
// from one shared table: draw X from the base law and keep it with
// probability e^{−qX} (an Exp(1) draw above qX), with acceptance E e^{−qX},
// ψ_f(q) and g(q)/q respectively (derived; rejection sampling: L. Devroye,
// Non-Uniform Random Variate Generation, 1986, §II.3, from memory). Below
// minAccept a table of the law itself is cheaper per draw.

// minAccept is the smallest acceptance at which a tilted law is drawn by
// rejection (at most two base draws per draw on average).
const minAccept = 0.5

// KillBase returns the law of the time from the start of an excursion to
// its end by reaching 0 or 1, under the excursion measure normalised by its
// mean: transform g(s)/s, g(p) = Φ(p) + 1 − ψ_f(p), poles s = −n²π²/2 for
// odd n with weights 8/(n²π²) (the limit q → 0 of KillLaw's).
func KillBase() *Law {
	g := func(p complex128) complex128 { return Phi(p) + oneMinusFinal(p) }
	l1, l2 := math.Pi*math.Pi/2, 9*math.Pi*math.Pi/2
	return &Law{
		Psi:  func(s complex128) complex128 { return g(s) / s },
		Lam1: l1, C1: 4 / l1,
		Lam2: l2, C2: 4 / l2,
	}
}

var (
	killBaseOnce  sync.Once
	killBaseTable *Table
)

// KillBaseTable returns the shared table of KillBase, built on first use.
func KillBaseTable() *Table {
	killBaseOnce.Do(func() { killBaseTable = NewTable(KillBase(), 2*DefaultKnots, false) })
	return killBaseTable
}

// Tilt draws from the law with density proportional to e^{−Q·x} times the
// density of Base by rejection. Read-only, safe for concurrent use.
type Tilt struct {
	Base *Table
	Q    float64
}

// Draw returns one draw: base draws and exponential draws from rng until
// one is kept (1/acceptance pairs on average).
func (t Tilt) Draw(rng *rand.Rand) float64 {
	for {
		x := t.Base.Draw(rng)
		if rng.ExpFloat64() > t.Q*x {
			return x
		}
	}
}

// ExitTilt returns the tilt of T_f that draws ExitLaw(q), q ≥ 0, and false
// where its acceptance ψ_f(q) is below minAccept (use ExitTable there).
func ExitTilt(q float64) (Tilt, bool) {
	if !(q >= 0) || real(FinalTransform(complex(q, 0))) < minAccept {
		return Tilt{}, false
	}
	return Tilt{Base: Final(), Q: q}, true
}

// KillTilt returns the tilt of KillBase that draws KillLaw(q), q > 0, and
// false where its acceptance g(q)/q is below minAccept (use KillDriftTable
// there).
func KillTilt(q float64) (Tilt, bool) {
	if !(q > 0) || math.IsInf(q, 0) {
		return Tilt{}, false
	}
	if g := real(Phi(complex(q, 0)) + oneMinusFinal(complex(q, 0))); g/q < minAccept {
		return Tilt{}, false
	}
	return Tilt{Base: KillBaseTable(), Q: q}, true
}
