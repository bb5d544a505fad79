package graphpde

import (
	"errors"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// The fast path of the exact spectrum (docs/time-and-spectrum.md §4a).
//
// The count N(λ) decides, and nothing else: every eigenvalue is still
// bracketed by two counts to the width byCount asks, so none is missed and
// multiplicities are the jumps of N. What changes is where the counts are
// taken. Below the least λ at which an edge comes near one of its clamped
// eigenvalues (fastLimit) the node matrix K(λ) on the nodes alone is
// smooth in λ, and
//
//  1. shift-invert Lanczos on the linearised pencil K(σ) − μ M(σ),
//     M = −K', estimates every eigenvalue near σ from one factorisation
//     (error O(μ²), the curvature of K); a second shift just below the
//     first estimate sharpens them. Those estimates are the first trial
//     values of byCount, so that no bisection is needed to separate
//     neighbours;
//  2. from a trial value, Halley's method on g(λ) = 1/(xᵀK(λ)⁻¹x) uses
//     g' = −g²·yᵀM y with y = K(λ)⁻¹x (derived: d K⁻¹/dλ = K⁻¹ M K⁻¹) and
//     g″ from one more solve and K″, which the same factorisation gives,
//     and converges cubically where the secant on the old fixed vector
//     converged superlinearly;
//  3. the probe x is the last y (one step of inverse iteration per count),
//     so that near λ_k it is the k-th mode and g has no pole near λ_k: the
//     other modes' poles of xᵀK⁻¹x are divided out.
//
// Counts above fastLimit, and every count of a network without unknowns,
// are those of wwSystem (edges split near their poles).

// exactCounter counts with the node system dyn below lim and with the
// split system ww above (built on first use: on a large network the
// wanted eigenvalues usually lie below lim).
type exactCounter struct {
	net   *Network
	scale float64
	ww    *wwSystem  // nil until split() builds it
	dyn   *dynSystem // nil: no unknowns
	lim   float64
	// probe is the vector x of g (nil: dyn's fixed vector); y is K(λ)⁻¹x
	// and my = M y of the last count with dyn, slope g'(λ) there (NaN after
	// a count with ww).
	probe, y, my, z []float64
	slope, curv     float64 // g' and g″ of the last count with dyn (NaN otherwise)
	fresh           bool    // the probe was reset since the last count
}

func newExactCounter(net *Network, scale float64) *exactCounter {
	c := &exactCounter{net: net, scale: scale, lim: math.Inf(-1), slope: math.NaN()}
	lim := fastLimit(net)
	if _, nodes := numberNodes(net); len(nodes) > 0 && lim > 0 {
		c.dyn = newDyn(net)
		c.lim = lim
		c.y = make([]float64, c.dyn.n)
		c.my = make([]float64, c.dyn.n)
		c.z = make([]float64, c.dyn.n)
	}
	return c
}

// split returns the split system, building it on first use.
func (c *exactCounter) split() *wwSystem {
	if c.ww == nil {
		c.ww = newWW(c.net)
		c.ww.scale = c.scale
	}
	return c.ww
}

func (c *exactCounter) factorizations() int {
	n := 0
	if c.ww != nil {
		n = c.ww.facts
	}
	if c.dyn != nil {
		n += c.dyn.facts
	}
	return n
}

// countAt returns N(λ) and g(λ) (see eigenCounter) and sets c.slope and
// c.curv to g'(λ) and g″(λ) where dyn counted, NaN otherwise.
func (c *exactCounter) countAt(lam float64) (int, float64, error) {
	c.slope, c.curv = math.NaN(), math.NaN()
	if c.dyn == nil || !(lam < c.lim) {
		return c.split().countAt(lam)
	}
	d := c.dyn
	d.assemble(lam)
	d.facts++
	if err := d.fac.Factorize(d.mat); err != nil {
		return 0, 0, err
	}
	neg, ok := d.fac.Inertia()
	if !ok {
		return 0, 0, errors.New("graphpde: node matrix not factored symmetrically")
	}
	x := c.probe
	if x == nil {
		x = d.e
	} else {
		// Steps of inverse iteration at λ first (two after a reset of
		// the probe, one when it was advanced at the last count): g is
		// then that of (nearly) the mode of the eigenvalue nearest λ,
		// whose pole the other modes do not disturb.
		steps := 1
		if c.fresh {
			steps, c.fresh = 2, false
		}
		for range steps {
			d.fac.SolveTo(c.y, x)
			nrm := math.Sqrt(dot(c.y, c.y))
			if !(nrm > 0) || math.IsInf(nrm, 0) {
				break
			}
			for i, v := range c.y {
				x[i] = v / nrm
			}
		}
	}
	d.fac.SolveTo(c.y, x)
	d.mulM(c.my, c.y)
	h, hp := 0.0, 0.0
	for i, v := range c.y {
		h += x[i] * v
		hp += v * c.my[i]
	}
	// h″ = 2(My)ᵀK⁻¹(My) − yᵀK″y (derived, as h')
	d.fac.SolveTo(c.z, c.my)
	hpp := 2*dot(c.my, c.z) - d.quadK2(c.y)
	g := 1 / h
	c.slope = -g * g * hp
	c.curv = g * g * (2*g*hp*hp - hpp)
	return neg, g, nil
}

// setProbe makes x (copied) the vector of g; nil restores the fixed one.
func (c *exactCounter) setProbe(x []float64) {
	if c.dyn == nil {
		return
	}
	if c.probe == nil {
		c.probe = make([]float64, c.dyn.n)
	}
	if x == nil {
		x = c.dyn.e
	}
	copy(c.probe, x)
	c.fresh = true
}

// advanceProbe replaces the probe by K(λ)⁻¹x of the last count with dyn,
// scaled to unit length (one step of inverse iteration); it reports
// whether it did.
func (c *exactCounter) advanceProbe() bool {
	if c.dyn == nil || math.IsNaN(c.slope) {
		return false
	}
	nrm := math.Sqrt(dot(c.y, c.y))
	if !(nrm > 0) || math.IsInf(nrm, 0) {
		return false
	}
	if c.probe == nil {
		c.probe = make([]float64, c.dyn.n)
	}
	for i, v := range c.y {
		c.probe[i] = v / nrm
	}
	return true
}

// countSeeds are what the Lanczos estimates give byCount: counts already
// taken at the shifts, and estimates of eigenvalues (sorted, distinct).
type countSeeds struct {
	counts []struct {
		lam float64
		n   int
	}
	est []float64
}

// lanczosSeeds estimates the smallest eigenvalues below c.lim by
// shift-invert Lanczos on the linearised pencil K(σ) − μM(σ): first at σ₀
// just below 0 (every eigenvalue is ≥ 0, so K(σ₀) is positive definite and
// the smallest eigenvalues are the extreme ones of the Lanczos process),
// then at σ₁ = σ₀ + 0.9·(λ̃₁ − σ₀), just below the first estimate, where
// μ = λ − σ₁ is small and the linearisation error O(μ²) with it. Estimates
// of the second shift are kept, with those of the first above the largest
// of them. Only Ritz values whose Lanczos residual bound is small are
// kept. Cost: one factorisation and lanczosSteps(count) solves and
// products with M per shift.
func lanczosSeeds(c *exactCounter, scale float64, count int, stop func() bool) *countSeeds {
	seeds := &countSeeds{}
	if c.dyn == nil {
		return seeds
	}
	add := func(lam float64, n int) {
		seeds.counts = append(seeds.counts, struct {
			lam float64
			n   int
		}{lam, n})
	}
	steps := lanczosSteps(count, c.dyn.n)
	sigma := -1e-3 * scale
	if !(sigma < c.lim) || stop() {
		return seeds
	}
	sigma0 := sigma
	keep := func(est []float64) []float64 {
		var out []float64
		for _, l := range est {
			if l > sigma0 && l < c.lim {
				out = append(out, l)
			}
		}
		return out
	}
	// (the first shift is for the least eigenvalue and a rough picture:
	// fewer steps, and all of them only if that gave no estimate)
	n, est0, err := c.dyn.lanczos(sigma, min(steps, count+10), stop)
	if err == nil && len(keep(est0)) == 0 && steps > count+10 && !stop() {
		n, est0, err = c.dyn.lanczos(sigma, steps, stop)
	}
	if err != nil || len(est0) == 0 {
		return seeds
	}
	add(sigma, n)
	est0 = keep(est0)
	seeds.est = est0
	if len(est0) == 0 || stop() {
		return seeds
	}
	sigma = sigma + 0.9*(est0[0]-sigma)
	n, est1, err := c.dyn.lanczos(sigma, steps, stop)
	if err != nil {
		return seeds
	}
	add(sigma, n)
	est1 = keep(est1)
	if len(est1) == 0 {
		return seeds
	}
	if len(est1) < count && !stop() {
		// Too few estimates: a third shift at the largest one, whose
		// estimates replace those of the second above the middle of
		// the two shifts.
		s2 := est1[len(est1)-1] + 1e-3*(est1[len(est1)-1]-sigma)
		if s2 < c.lim {
			if n2, est2, err := c.dyn.lanczos(s2, steps, stop); err == nil {
				add(s2, n2)
				mid := 0.5 * (sigma + s2)
				var merged []float64
				for _, l := range est1 {
					if l < mid {
						merged = append(merged, l)
					}
				}
				for _, l := range keep(est2) {
					if l >= mid {
						merged = append(merged, l)
					}
				}
				est1 = merged
			}
		}
	}
	top := est1[len(est1)-1]
	for _, l := range est0 {
		if l > top {
			est1 = append(est1, l)
		}
	}
	seeds.est = est1
	return seeds
}

// lanczosSteps is the dimension of the Krylov space: twice the count and
// 20 more, at most the number of unknowns and 300 (the dense eigenproblem
// of the tridiagonal matrix costs its cube; eigenvalues beyond the
// estimates are found by the count alone).
func lanczosSteps(count, n int) int { return min(n, 2*count+20, 300) }

// lanczos factors K(σ) and runs steps of the Lanczos process on
// K(σ)⁻¹M(σ), self-adjoint in the M inner product, without
// reorthogonalisation (Parlett, The Symmetric Eigenvalue Problem, SIAM
// 1998, ch. 13; from memory): a converged Ritz value may repeat (a
// "ghost"), which does no harm to seeds that are only trial values of the
// count, and is merged here. It returns N(σ) and the estimates σ + 1/θ of
// the Ritz values θ whose residual bound |β_k y_k| is below 1e-3 of |θ|,
// sorted and with values closer than 1e-9 relative merged. When stop
// returns true (checked at every step) it ends with the steps taken.
func (d *dynSystem) lanczos(sigma float64, steps int, stop func() bool) (int, []float64, error) {
	d.assemble(sigma)
	d.facts++
	if err := d.fac.Factorize(d.mat); err != nil {
		return 0, nil, err
	}
	neg, ok := d.fac.Inertia()
	if !ok {
		return 0, nil, errors.New("graphpde: node matrix not factored symmetrically")
	}
	n := d.n
	q0 := make([]float64, n)
	q := make([]float64, n)
	p := make([]float64, n) // M q
	w := make([]float64, n)
	pw := make([]float64, n)
	copy(q, d.e)
	d.mulM(p, q)
	nrm := math.Sqrt(dot(q, p))
	if !(nrm > 0) {
		return neg, nil, nil
	}
	for i := range q {
		q[i] /= nrm
		p[i] /= nrm
	}
	var alpha, beta []float64
	betaPrev := 0.0
	for j := 0; j < steps && (j == 0 || !stop()); j++ {
		d.fac.SolveTo(w, p)
		for i := range w {
			w[i] -= betaPrev * q0[i]
		}
		a := dot(p, w)
		for i := range w {
			w[i] -= a * q[i]
		}
		// one local reorthogonalisation against q
		a2 := dot(p, w)
		for i := range w {
			w[i] -= a2 * q[i]
		}
		alpha = append(alpha, a+a2)
		d.mulM(pw, w)
		b2 := dot(w, pw)
		if !(b2 > 0) {
			beta = append(beta, 0)
			break
		}
		b := math.Sqrt(b2)
		beta = append(beta, b)
		if b <= 1e-14*math.Abs(a+a2) {
			break // an invariant subspace
		}
		q0, q = q, q0
		for i := range q {
			q[i] = w[i] / b
			p[i] = pw[i] / b
		}
		betaPrev = b
	}
	k := len(alpha)
	T := mat.NewSymDense(k, nil)
	for i := 0; i < k; i++ {
		T.SetSym(i, i, alpha[i])
		if i+1 < k {
			T.SetSym(i, i+1, beta[i])
		}
	}
	var eig mat.EigenSym
	if !eig.Factorize(T, true) {
		return neg, nil, nil
	}
	theta := eig.Values(nil)
	var vecs mat.Dense
	eig.VectorsTo(&vecs)
	bk := beta[k-1]
	var out []float64
	for i, th := range theta {
		if math.Abs(th) < 1e-300 {
			continue
		}
		if math.Abs(bk*vecs.At(k-1, i)) > 1e-3*math.Abs(th) {
			continue // not converged: no use as a trial value
		}
		out = append(out, sigma+1/th)
	}
	slices.Sort(out)
	merged := out[:0]
	for _, l := range out {
		if m := len(merged); m > 0 && math.Abs(l-merged[m-1]) <= 1e-9*math.Max(math.Abs(l), 1e-300) {
			continue
		}
		merged = append(merged, l)
	}
	return neg, merged, nil
}
