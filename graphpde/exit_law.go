package graphpde

// The law of the lifetime: survival function, density and quantiles by
// numerical inversion of its Laplace transform (Talbot windows on the exact
// path, Gaver–Stehfest on the grid path; docs/exit-statistics.md).

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"runtime"
	"slices"
	"sync"

	"github.com/ramify-dev/ramify/internal/laplace"
)

// fillDistribution fills Survival and Quantiles, then checks what no
// correct law can violate: P(τ > t) non-increasing in t and quantiles
// non-decreasing in p (values are in [0, 1] by survival). A violation
// beyond the inversion's accuracy turns the whole list into NaN with a
// note.
func (x *ExitStats) fillDistribution(s *ExitSettings) error {
	// Quantiles first: their searches open the windows around the body
	// of the law, which the requested times then share where they can.
	x.Quantiles = make([]Quantile, len(s.Quantiles))
	for i, p := range s.Quantiles {
		t, err := x.law.quantile(p, x.Mean)
		if err != nil {
			x.Notes = append(x.Notes, fmt.Sprintf("quantile %g is not reported (NaN): %v", p, err))
			t = math.NaN()
		}
		x.Quantiles[i] = Quantile{P: p, T: t}
	}
	if err := x.law.planPoints(s.Times); err != nil {
		return err
	}
	x.Survival = make([]TimeProb, len(s.Times))
	for i, t := range s.Times {
		p, _, err := x.law.survival(t)
		if err != nil {
			return err
		}
		x.Survival[i] = TimeProb{T: t, P: p}
	}
	var nanT, nanP []float64
	for _, sp := range x.Survival {
		if math.IsNaN(sp.P) {
			nanT = append(nanT, sp.T)
		}
	}
	for _, q := range x.Quantiles {
		if math.IsNaN(q.T) {
			nanP = append(nanP, q.P)
		}
	}
	if len(nanT)+len(nanP) > 0 {
		x.Notes = append(x.Notes, fmt.Sprintf("the Laplace inversion could not be verified for P(τ > t) at t = %v and the quantiles %v (the law is too sharp or has complex decay rates there): those are not reported (NaN)", nanT, nanP))
	}
	tol := x.law.tolerance()
	for i := range x.Survival {
		for j := range x.Survival {
			a, b := x.Survival[i], x.Survival[j]
			if a.T < b.T && a.P < b.P-tol {
				x.Notes = append(x.Notes, fmt.Sprintf("P(τ > t) from the Laplace inversion increases from t = %g to %g (%.6g to %.6g): the survival values are not reported (NaN)", a.T, b.T, a.P, b.P))
				for k := range x.Survival {
					x.Survival[k].P = math.NaN()
				}
				break
			}
		}
	}
	for i := range x.Quantiles {
		for j := range x.Quantiles {
			a, b := x.Quantiles[i], x.Quantiles[j]
			if a.P < b.P && a.T > b.T*(1+tol) {
				x.Notes = append(x.Notes, fmt.Sprintf("the quantiles from the Laplace inversion are out of order (%g: %.6g, %g: %.6g): they are not reported (NaN)", a.P, a.T, b.P, b.T))
				for k := range x.Quantiles {
					x.Quantiles[k].T = math.NaN()
				}
				break
			}
		}
	}
	return nil
}

// delayMass is the probability the shifted inversion may ignore: the
// lifetime is below the delay T_s with at most this probability, and
// P(τ > t) is reported as 1 for t ≤ T_s.
const delayMass = 1e-14

// minDelay is the delay, relative to the mean, from which the inversion is
// shifted: below it the law is not delay-like and the plain contours work.
const minDelay = 0.25

// findDelay finds a time T_s below which the lifetime lies with probability
// at most delayMass, by the Chernoff bound P(τ ≤ T) ≤ e^{sT}·E e^{−sτ} for
// every s > 0 (derived from Markov's inequality applied to e^{−sτ}):
//
//	T_s = max_s (ln delayMass − ln L(s))/s
//
// over s = 2^k/mean, k = 0 … 40 (L at real s; the maximum of this unimodal
// function is approached from below, so a coarse lattice only gives a
// smaller, still valid T_s). With a strong drift towards the exit the
// lifetime is nearly a delay (inverse Gaussian with a small coefficient of
// variation: T_s ≈ mean − 6.5 sd at Péclet number 500) and L(s) ≈ e^{−s·mean}
// for moderate s, which no contour of fixed shape inverts in float64
// (e^{s(t − mean)} grows on the left half of the contour for t < mean).
// When T_s ≥ minDelay·mean, the law is inverted for τ − T_s instead: the
// transform e^{sT_s}L(s), times t − T_s, and octave windows from
// mean − T_s; every window is then also checked on a second contour.
func (lw *lifetimeLaw) findDelay(mean float64) error {
	if lw.zero || !(mean > 0) || math.IsInf(mean, 0) {
		return nil
	}
	logEps := math.Log(delayMass)
	best := math.Inf(-1)
	down := 0
	vals := lw.realValues(41, mean)
	for k := 0; k <= 40; k++ {
		s := math.Exp2(float64(k)) / mean
		L, err := vals(k)
		if err != nil {
			return err
		}
		if !(L > 1e-280) || L > 1 {
			break
		}
		lw.chernoff = append(lw.chernoff, [2]float64{s, math.Log(L)})
		phi := (logEps - math.Log(L)) / s
		if phi > best {
			best, down = phi, 0
		} else if best > 0 {
			if down++; down == 3 {
				break
			}
		}
		if n := len(lw.chernoff); n >= 2 && best < minDelay*mean {
			// ln L is convex (L is a Laplace transform), so beyond s it
			// lies above its secant through the last two points: with
			// slope m ≥ −minDelay·mean, φ stays below minDelay·mean for
			// every larger s as well, and no delay can be found there.
			a, b := lw.chernoff[n-2], lw.chernoff[n-1]
			if (b[1]-a[1])/(b[0]-a[0]) >= -minDelay*mean {
				break
			}
		}
	}
	if best >= minDelay*mean && best < mean {
		lw.delay = best
		lw.base = mean - best
		lw.check = true
		lw.wide = false // shifted windows are checked octave by octave
	}
	return nil
}

// realValues returns a function giving L(2^k/mean) for k = 0 … n−1 in
// turn, on either path: on the exact path the values are computed in
// batches of GOMAXPROCS (atMany), so that a caller stopping at k has paid
// for at most the rest of its batch. The caller must not hold lw.mu.
func (lw *lifetimeLaw) realValues(n int, mean float64) func(k int) (float64, error) {
	if lw.real != nil {
		return func(k int) (float64, error) { return lw.realValue(math.Exp2(float64(k)) / mean) }
	}
	var got []complex128
	var errs []error
	return func(k int) (float64, error) {
		if k >= len(got) {
			b := min(runtime.GOMAXPROCS(0), n-len(got))
			ss := make([]complex128, b)
			for j := range ss {
				ss[j] = complex(math.Exp2(float64(len(got)+j))/mean, 0)
			}
			v, e := make([]complex128, b), make([]error, b)
			lw.mu.Lock()
			lw.tr.atMany(ss, v, e)
			lw.mu.Unlock()
			got, errs = append(got, v...), append(errs, e...)
		}
		return real(got[k]), errs[k]
	}
}

// realValue returns L(s) at a real s > 0 on either path. The caller must
// not hold lw.mu.
func (lw *lifetimeLaw) realValue(s float64) (float64, error) {
	lw.mu.Lock()
	defer lw.mu.Unlock()
	if lw.real != nil {
		return lw.real(s)
	}
	v, err := lw.tr.at(complex(s, 0))
	return real(v), err
}

// shifted returns e^{s·delay}·L, the transform of τ − delay, without
// overflow (L = 0 stays 0: the mass the shift ignores is below delayMass).
func (lw *lifetimeLaw) shifted(s, L complex128) complex128 {
	if lw.delay == 0 {
		return L
	}
	if L == 0 {
		return 0
	}
	return cmplx.Exp(s*complex(lw.delay, 0) + cmplx.Log(L))
}

// tolerance is the accuracy of the inversion, with a margin: what the
// consistency checks of fillDistribution allow.
func (lw *lifetimeLaw) tolerance() float64 {
	if lw.real != nil {
		return stehfestQuantileTol * 50
	}
	return 1e-7
}

// suspectTimes returns the windows whose contours disagree, in times of τ.
func (lw *lifetimeLaw) suspectTimes() [][2]float64 {
	out := make([][2]float64, len(lw.suspects))
	for i, w := range lw.suspects {
		out[i] = [2]float64{w[0] + lw.delay, w[1] + lw.delay}
	}
	return out
}

// lifetimeLaw evaluates the law of τ from its Laplace transform. Times are
// grouped in octaves [base·2^k, base·2^{k+1}]; each octave gets one Talbot
// window contour whose transform values are computed once (m complex
// solves) and reused for every t in it, so the survival function and its
// density are cheap after the first call in an octave and do not depend on
// the order of calls.
//
// On the grid path real is set instead of tr: L(s) at real s, inverted by
// the Gaver–Stehfest formula with weights stehfest, results cached per t.
type lifetimeLaw struct {
	mu   sync.Mutex
	zero bool // τ = 0 a.s. (start at a fixed node)
	tr   *transformer
	m    int     // nodes per window
	base float64 // octave origin (the mean lifetime)
	win  map[int]*lawWindow

	real     func(s float64) (float64, error)
	stehfest []float64
	// stehfestCheck are the weights of a shorter Gaver–Stehfest sum on the
	// first of the same shifts: where the two differ by more than
	// stehfestAgreement the law is too sharp for the method and the value
	// is NaN.
	stehfestCheck []float64
	cache         map[float64][2]float64

	// wide: windows of two octaves [base·4^k, base·4^{k+1}] on
	// laplace.TalbotWideWindow contours (40 nodes) instead of octaves of m
	// nodes: for reversible walkers (no check contour) with the default
	// number of nodes. Set before the first window.
	wide bool
	// wideGap is the largest difference of P(τ > t) between two wide
	// windows at the time they share; above wideAgreement the law is
	// inverted again on octave windows (exitStatistics).
	wideGap float64
	// points holds the contours of single requested times (planPoints),
	// which survival uses before the windows.
	points map[float64]*lawWindow
	// check: evaluate every window also on a check contour, climbing the
	// levels of laplace.TalbotWindowLevel until the two agree, and record
	// where they never do (non-reversible problems only).
	check    bool
	suspects [][2]float64 // windows [t0, 2t0] whose contours disagree (times of τ − delay)
	worst    float64      // largest disagreement seen

	// delay is T_s of findDelay (0 when not shifted): the law is inverted
	// for τ − delay.
	delay float64
	// evalErr is the first failure of a transform evaluation on a
	// contour (its window is then not reported).
	evalErr error
	// chernoff holds (s, ln L(s)) at the real shifts findDelay evaluated:
	// P(τ ≤ t) ≤ min e^{st + ln L(s)} (see leftTail).
	chernoff [][2]float64
}

// leftTailTol is the probability below which leftTail reports P(τ > t) = 1:
// the accuracy of the Talbot inversion (about 1e−11) with a margin.
const leftTailTol = 1e-10

// leftTail reports whether the Chernoff bound of findDelay puts
// P(τ ≤ t) below leftTailTol, so that P(τ > t) = 1 to that accuracy
// without an inversion (far in the left tail the shifted transform is
// needed at |s| so large that its values lose their digits).
func (lw *lifetimeLaw) leftTail(t float64) bool {
	lt := math.Log(leftTailTol)
	for _, c := range lw.chernoff {
		if c[0]*t+c[1] <= lt {
			return true
		}
	}
	return false
}

// wideAgreement is the largest difference between two neighbouring wide
// windows at their common end time accepted as agreement: each is within
// 5e−12 on smooth laws (laplace.TalbotWideWindow), and a larger gap shows
// a law too sharp for them (common practice, no source: a margin of 200).
const wideAgreement = 1e-9

// contourAgreement is the largest difference between the window and check
// contours accepted as agreement: the check contours' own errors (at most
// 4e−8, laplace.TalbotWindowLevel) with a margin.
const contourAgreement = 2e-7

// lawWindow holds one octave's contour and the values of L(s) and
// (1 − L(s))/s at its nodes.
type lawWindow struct {
	c      laplace.Contour
	fl, fs []complex128
	bad    bool // the check contour disagrees: values here are not reported
}

// window returns the octave window that contains t > 0, computing it if
// needed. The caller holds lw.mu.
func (lw *lifetimeLaw) window(t float64) (*lawWindow, error) {
	if lw.wide && lw.check {
		panic("graphpde: wide windows with a check contour")
	}
	k, t0, ratio := lw.windowIndex(t)
	if w, ok := lw.win[k]; ok {
		return w, nil
	}
	if lw.wide {
		w, err := lw.evalWindow(laplace.TalbotWideWindow(t0, ratio*t0))
		if err != nil {
			return nil, err
		}
		if w.bad {
			lw.suspects = append(lw.suspects, [2]float64{t0, ratio * t0})
		} else {
			// A free check: a neighbouring window shares an end time
			// with this one, where both must give the same P(τ > t).
			for _, nb := range [2]int{k - 1, k + 1} {
				o, ok := lw.win[nb]
				if !ok || o.bad {
					continue
				}
				tb := t0
				if nb > k {
					tb = ratio * t0
				}
				lw.wideGap = math.Max(lw.wideGap, math.Abs(w.c.Apply(tb, w.fs)-o.c.Apply(tb, o.fs)))
			}
		}
		lw.store(k, w)
		return w, nil
	}
	if !lw.check {
		w, err := lw.evalWindow(laplace.TalbotWindow(t0, 2*t0, lw.m))
		if err != nil {
			return nil, err
		}
		if w.bad {
			lw.suspects = append(lw.suspects, [2]float64{t0, 2 * t0})
		}
		lw.store(k, w)
		return w, nil
	}
	// Non-reversible: climb the levels until the window and check contours
	// agree.
	var w *lawWindow
	var d float64
	for level := range laplace.WindowLevels {
		c, cc := laplace.TalbotWindowLevel(t0, 2*t0, level)
		var err error
		if w, err = lw.evalWindow(c); err != nil {
			return nil, err
		}
		wc, err := lw.evalWindow(cc)
		if err != nil {
			return nil, err
		}
		if w.bad || wc.bad {
			d = math.Inf(1)
			continue
		}
		d = 0
		for _, tt := range []float64{t0, t0 * math.Sqrt2, 2 * t0} {
			d = math.Max(d, math.Abs(w.c.Apply(tt, w.fs)-wc.c.Apply(tt, wc.fs)))
		}
		if d <= contourAgreement {
			break
		}
	}
	lw.worst = math.Max(lw.worst, d)
	if d > contourAgreement {
		lw.suspects = append(lw.suspects, [2]float64{t0, 2 * t0})
		w.bad = true
	}
	lw.store(k, w)
	return w, nil
}

// windowIndex returns the window [t0, ratio·t0] that serves t > 0: the
// octaves [base·2^k, base·2^{k+1}], or with wide windows (base·4^k,
// base·4^{k+1}], closed on the right: a lattice time base·4^k of the
// quantile brackets closes the window below it, which the times just below
// it need anyway, instead of opening one above.
func (lw *lifetimeLaw) windowIndex(t float64) (k int, t0, ratio float64) {
	ratio = float64(laplace.WindowRatio)
	if lw.wide {
		ratio = laplace.WideWindowRatio
	}
	k = int(math.Floor(math.Log(t/lw.base) / math.Log(ratio)))
	pow := func(k int) float64 { return lw.base * math.Pow(ratio, float64(k)) }
	t0 = pow(k)
	for t < t0 {
		k--
		t0 = pow(k)
	}
	for t > ratio*t0 {
		k++
		t0 = pow(k)
	}
	if lw.wide && t <= t0*(1+1e-12) {
		k--
		t0 = pow(k)
	}
	return k, t0, ratio
}

// planPoints gives each requested time that no window computed so far
// serves, and that is alone in its wide window, a contour of its own
// (laplace.TalbotContour, laplace.DefaultM = 24 values instead of 40):
// times far from the body of the law, where no quantile search goes.
// Times that share a window get the window when they are evaluated. Only
// with wide windows (reversible laws; no delay). The caller must not hold
// lw.mu.
func (lw *lifetimeLaw) planPoints(times []float64) error {
	if !lw.wide || lw.zero || lw.real != nil || lw.delay > 0 {
		return nil
	}
	lw.mu.Lock()
	defer lw.mu.Unlock()
	alone := make(map[int][]float64)
	for _, t := range times {
		if !(t > 0) {
			continue
		}
		k, _, _ := lw.windowIndex(t)
		if _, ok := lw.win[k]; ok {
			continue
		}
		if !slices.Contains(alone[k], t) {
			alone[k] = append(alone[k], t)
		}
	}
	for _, ts := range alone {
		if len(ts) != 1 {
			continue
		}
		w, err := lw.evalWindow(laplace.TalbotContour(ts[0], laplace.DefaultM))
		if err != nil {
			return err
		}
		if w.bad {
			lw.suspects = append(lw.suspects, [2]float64{ts[0], ts[0]})
		}
		if lw.points == nil {
			lw.points = make(map[float64]*lawWindow)
		}
		lw.points[ts[0]] = w
	}
	return nil
}

// evalWindow evaluates the transform at the nodes of c. The caller holds
// lw.mu.
func (lw *lifetimeLaw) evalWindow(c laplace.Contour) (*lawWindow, error) {
	w := &lawWindow{c: c, fl: make([]complex128, len(c.S)), fs: make([]complex128, len(c.S))}
	vals, errs := make([]complex128, len(c.S)), make([]error, len(c.S))
	lw.tr.atMany(c.S, vals, errs)
	for j, s := range c.S {
		L, err := vals[j], errs[j]
		if err != nil {
			// Contours reach far into the left half plane (the more so
			// for the shifted inversion), where the transform may
			// overflow or the shifted node system be singular: the
			// window is not reported, and the first such error is
			// kept for the note.
			w.bad = true
			if lw.evalErr == nil {
				lw.evalErr = err
			}
			return w, nil
		}
		L = lw.shifted(s, L)
		w.fl[j] = L
		w.fs[j] = (1 - L) / s
	}
	return w, nil
}

func (lw *lifetimeLaw) store(k int, w *lawWindow) {
	if lw.win == nil {
		lw.win = make(map[int]*lawWindow)
	}
	lw.win[k] = w
}

// taylor returns the Taylor coefficients c_0 … c_n of L at 0 from N points
// on the circle |s| = R: c_k ≈ (1/N) Σ_j L(R ω^j) ω^{−jk} / R^k, ω = e^{2πi/N}.
// L(conj s) = conj L(s) halves the solves.
func (lw *lifetimeLaw) taylor(R float64, N, n int) ([]float64, error) {
	lw.mu.Lock()
	defer lw.mu.Unlock()
	vals := make([]complex128, N)
	ss := make([]complex128, N/2+1)
	for j := range ss {
		ss[j] = cmplx.Rect(R, 2*math.Pi*float64(j)/float64(N))
		if j == 0 {
			ss[j] = complex(R, 0)
		} else if 2*j == N {
			ss[j] = complex(-R, 0)
		}
	}
	got, errs := make([]complex128, len(ss)), make([]error, len(ss))
	lw.tr.atMany(ss, got, errs)
	for j := range ss {
		if errs[j] != nil {
			return nil, errs[j]
		}
		v := got[j]
		vals[j] = v
		if j > 0 && 2*j < N {
			vals[N-j] = cmplx.Conj(v)
		}
	}
	coef := make([]float64, n+1)
	for k := 0; k <= n; k++ {
		var sum complex128
		for j, v := range vals {
			sum += v * cmplx.Rect(1, -2*math.Pi*float64(j*k%N)/float64(N))
		}
		coef[k] = real(sum) / float64(N) / math.Pow(R, float64(k))
	}
	return coef, nil
}

// survival returns P(τ > t), clamped to [0, 1], and the density of τ at t.
func (lw *lifetimeLaw) survival(t float64) (S, dens float64, err error) {
	if lw.zero {
		return 0, 0, nil
	}
	if t <= lw.delay || (lw.delay > 0 && lw.leftTail(t)) {
		return 1, 0, nil
	}
	t -= lw.delay
	lw.mu.Lock()
	defer lw.mu.Unlock()
	if lw.real != nil {
		return lw.stehfestAt(t)
	}
	w, ok := lw.points[t]
	if !ok {
		w, err = lw.window(t)
	}
	if err != nil {
		return math.NaN(), math.NaN(), err
	}
	if w.bad {
		return math.NaN(), math.NaN(), nil
	}
	S = w.c.Apply(t, w.fs)
	if S < -clampSlack || S > 1+clampSlack {
		// Far outside [0, 1]: the inversion failed here.
		return math.NaN(), math.NaN(), nil
	}
	S = math.Min(1, math.Max(0, S))
	return S, w.c.Apply(t, w.fl), nil
}

// quantileTol is the accuracy of a quantile search in probability with
// Talbot inversion: a hundred times its error (1e−11); below it there is
// nothing left to gain. stehfestQuantileTol is the same for the grid path,
// whose Gaver–Stehfest inversion is good to about 1e−5 and whose values
// carry rounding noise of about 1e−5 (the grid transform's rounding, 1e−13,
// times weights of up to 1e8; measured), so that a finer search only
// bisects noise. quantileWidth is the relative width of the bracket at which
// the search stops in any case.
const (
	// clampSlack is how far outside [0, 1] an inverted P(τ > t) may fall
	// and still be clamped (the Talbot error is about 1e−11; Gaver–Stehfest
	// about 1e−5); beyond it the value is NaN.
	clampSlack         = 1e-6
	stehfestClampSlack = 1e-3
	// stehfestAgreement: Gaver–Stehfest with 16 and with stehfestCheckN
	// terms differ by about 1e−4 on smooth laws (measured on the grid
	// tests); a larger difference means the law is too sharp (strong drift)
	// for real-axis inversion.
	stehfestAgreement   = 1e-3
	stehfestCheckN      = 12
	quantileTol         = 1e-9
	stehfestQuantileTol = 2e-5
	quantileWidth       = 1e-12
	stehfestWidth       = 1e-7
)

// quantile returns T with P(τ ≤ T) = p, 0 < p < 1, for a lifetime of the
// given mean. The root is bracketed on the lattice mean·2^k (whose values
// are shared among quantiles: the Talbot windows are the octaves of the same
// lattice, and the Gaver–Stehfest values are cached), then found by Newton
// steps with the density where they stay inside the bracket and bisection
// in log t otherwise.
func (lw *lifetimeLaw) quantile(p, mean float64) (float64, error) {
	if lw.zero {
		return 0, nil
	}
	tol, width := quantileTol, quantileWidth
	if lw.real != nil {
		tol, width = stehfestQuantileTol, stehfestWidth
	}
	y := 1 - p
	lo, hi := mean, mean
	// surv is lw.survival; a NaN (an unverified inversion) ends the search
	// with a NaN quantile.
	errNaN := errors.New("NaN")
	surv := func(t float64) (float64, float64, error) {
		S, d, err := lw.survival(t)
		if err == nil && math.IsNaN(S) {
			err = errNaN
		}
		return S, d, err
	}
	q, err := func() (float64, error) {
		slo, _, err := surv(mean)
		if err != nil {
			return 0, err
		}
		shi := slo
		const maxOctaves = 200 // t from mean·2^−200 to mean·2^200
		if slo > y {
			for k := 1; shi > y; k++ {
				if k > maxOctaves {
					return 0, fmt.Errorf("quantile %g: P(τ > t) stays above %g up to t = %g", p, y, hi)
				}
				lo, slo = hi, shi
				hi = mean * math.Exp2(float64(k))
				if shi, _, err = surv(hi); err != nil {
					return 0, err
				}
			}
		} else {
			for k := 1; slo <= y; k++ {
				if k > maxOctaves {
					return 0, fmt.Errorf("quantile %g: P(τ > t) stays below %g down to t = %g", p, y, lo)
				}
				hi, shi = lo, slo
				lo = mean * math.Exp2(-float64(k))
				if slo, _, err = surv(lo); err != nil {
					return 0, err
				}
			}
		}
		// Start from linear interpolation in log t.
		t := math.Exp(math.Log(lo) + (slo-y)/(slo-shi)*math.Log(hi/lo))
		for it := 0; it < 100; it++ {
			st, ft, err := surv(t)
			if err != nil {
				return 0, err
			}
			if math.Abs(st-y) <= tol {
				return t, nil
			}
			if st > y {
				lo = t
			} else {
				hi = t
			}
			if hi-lo <= width*hi {
				return t, nil
			}
			next := t + (st-y)/ft
			if !(ft > 0) || !(next > lo && next < hi) {
				next = math.Sqrt(lo * hi)
			}
			t = next
		}
		return t, nil
	}()
	if err == errNaN {
		return math.NaN(), nil
	}
	return q, err
}
