package graphpde

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"

	"gonum.org/v1/gonum/mat"

	"github.com/ramify-dev/ramify/graphpde/internal/nodesys"
	"github.com/ramify-dev/ramify/vertex"
)

// Spectrum on the finite-volume grid (fvSystem): the generalised problem
// K v = λ M v. A self-adjoint network gives a symmetric K, and the
// eigenvalues are counted like the exact ones: N(λ) is the number of
// negative pivots of K − λM (Sylvester; on a chain this is the Sturm count).
// Otherwise shift-invert Arnoldi with the node-system factorisation of
// K − σM finds the eigenvalues nearest σ, complex ones included. Either way
// the grid's own error is estimated by repeating on a grid of half the cell
// width: the eigenvalues converge like h², so (λ_h − λ_{h/2})/3 estimates
// the error of λ_{h/2}, which is what is reported, with the bar
// |λ_h − λ_{h/2}|/2 (a margin of 1.5 for the terms beyond h²).

// gridSelfAdjoint reports whether the grid operator is symmetric: no drift
// anywhere and, on edges between two balance nodes, α/a the same at both
// ends.
func gridSelfAdjoint(net *Network) bool {
	for e := range net.Edges {
		ed := &net.Edges[e]
		if ed.B != 0 || (ed.Profile != nil && ed.Profile.B != nil) || (ed.Law != nil && varies(ed.Law.B)) {
			return false
		}
		if net.Nodes[ed.From].Law.Kind == vertex.Fixed || net.Nodes[ed.To].Law.Kind == vertex.Fixed {
			continue
		}
		a0, _, _, _, _ := fvCoefs(ed, 0, 0)
		aL, _, _, _, _ := fvCoefs(ed, ed.Length, 0)
		if weightScale(ed, 0, a0) != weightScale(ed, 1, aL) {
			return false
		}
	}
	return true
}

// gridCounter counts the eigenvalues of a symmetric grid problem below λ.
type gridCounter struct {
	sys   *fvSystem
	mat   *nodesys.Matrix[float64]
	fac   *nodesys.Factor[float64]
	e, x  []float64
	facts int
}

func newGridCounter(sys *fvSystem) *gridCounter {
	sym := true
	g := &gridCounter{sys: sys, mat: nodesys.NewMatrix[float64](sys.n),
		fac: nodesys.NewFactor[float64](&nodesys.Settings{Symmetric: &sym, PivotTol: 0x1p-60}),
		e:   make([]float64, sys.n), x: make([]float64, sys.n)}
	for i := range g.e {
		g.e[i] = 1 + 0.5*math.Sin(1.7*float64(i)+0.3)
	}
	return g
}

func (g *gridCounter) factorizations() int { return g.facts }

func (g *gridCounter) countAt(lam float64) (int, float64, error) {
	sys := g.sys
	g.mat.ZeroValues()
	for i := 0; i < sys.n; i++ {
		g.mat.Add(i, i, -lam*sys.M[i])
	}
	for k, i := range sys.kI {
		g.mat.Add(i, sys.kJ[k], sys.kV[k])
	}
	g.facts++
	return inertiaSecant(g.fac, g.mat, g.e, g.x, "grid")
}

// spectrumGrid solves the eigenproblem on the grid, twice (cells and
// 2·cells) for the error estimate.
func spectrumGrid(net *Network, s *SpectrumSettings) (*SpectrumResult, error) {
	cells := s.Cells
	if cells <= 0 {
		cells = DefaultCells
	}
	self := gridSelfAdjoint(net)
	var runs [2]*SpectrumResult
	// The second grid halves every cell, also on edges whose cell count
	// the file sets (those ignore the default count).
	fineNet := *net
	fineNet.Edges = append([]Edge(nil), net.Edges...)
	for e := range fineNet.Edges {
		fineNet.Edges[e].Cells *= 2
	}
	for k, nc := range []int{cells, 2 * cells} {
		grid := net
		if k == 1 {
			grid = &fineNet
		}
		sys, err := newFV(grid, nc, DefaultMaxGridUnknowns)
		if err != nil {
			return nil, err
		}
		r := &SpectrumResult{Method: "grid", SelfAdjoint: self, Status: Converged}
		if self {
			gc := newGridCounter(sys)
			if err := byCount(gc, eigenScale(net), s, r, nil); err != nil {
				return nil, err
			}
			if s.Modes && k == 1 {
				gridModes(sys, gc, eigenScale(net), r)
			}
		} else if err := arnoldi(sys, eigenScale(net), s, r); err != nil {
			return nil, err
		}
		r.Stats.Unknowns = sys.n
		runs[k] = r
		if r.Status != Converged {
			break
		}
	}
	fine, coarse := runs[1], runs[0]
	if fine == nil {
		coarse.Status = IterationLimit
		return coarse, nil
	}
	fine.Stats.Factorizations += coarse.Stats.Factorizations
	// Match the eigenvalues of the two grids in order (multiplicities
	// counted) and add the Richardson estimate to each error bar.
	type cv struct{ re, im float64 }
	var cflat []cv
	for _, e := range coarse.Eigenvalues {
		for range e.Multiplicity {
			cflat = append(cflat, cv{e.Value, e.Imag})
		}
	}
	k := 0
	for i := range fine.Eigenvalues {
		e := &fine.Eigenvalues[i]
		if k < len(cflat) {
			d := cmplx.Abs(complex(e.Value-cflat[k].re, e.Imag-cflat[k].im))
			e.Err += d / 2
		} else {
			e.Err = math.Inf(1)
		}
		k += e.Multiplicity
	}
	return fine, nil
}

// arnoldi finds the s.Count eigenvalues of K v = λ M v nearest a shift σ
// just below the spectrum, by shift-invert Arnoldi on (K − σM)⁻¹M with full
// reorthogonalisation (Saad, Numerical Methods for Large Eigenvalue
// Problems, 2nd ed. 2011, §6.2 and §7.1.1). The Krylov space grows
// (doubling) until the wanted Ritz values have residual estimates below
// 1e-10 of their size; eigenvalues of the small Hessenberg matrix come from
// gonum's dense eigensolver.
func arnoldi(sys *fvSystem, scale float64, s *SpectrumSettings, res *SpectrumResult) error {
	n := sys.n
	if n == 0 {
		return nil
	}
	sigma := -0.5 * scale
	m := nodesys.NewMatrix[float64](n)
	for i := 0; i < n; i++ {
		m.Add(i, i, -sigma*sys.M[i])
	}
	for k, i := range sys.kI {
		m.Add(i, sys.kJ[k], sys.kV[k])
	}
	fac := nodesys.NewFactor[float64](nil)
	if err := fac.Factorize(m); err != nil {
		return fmt.Errorf("shift-invert factorisation: %w", err)
	}
	res.Stats.Factorizations++
	want := s.Count
	dim := min(n, max(2*want+20, 40))
	tmp := make([]float64, n)
	for {
		if s.Context.Err() != nil {
			res.Status = IterationLimit
			return nil
		}
		V := make([][]float64, dim+1)
		H := mat.NewDense(dim+1, dim, nil)
		v0 := make([]float64, n)
		nrm := 0.0
		for i := range v0 {
			v0[i] = 1 + 0.5*math.Sin(1.3*float64(i)+0.7)
			nrm += v0[i] * v0[i]
		}
		nrm = math.Sqrt(nrm)
		for i := range v0 {
			v0[i] /= nrm
		}
		V[0] = v0
		steps := dim
		for j := 0; j < dim; j++ {
			for i := range tmp {
				tmp[i] = sys.M[i] * V[j][i]
			}
			w := make([]float64, n)
			fac.SolveTo(w, tmp)
			for pass := 0; pass < 2; pass++ {
				for i := 0; i <= j; i++ {
					h := dot(V[i], w)
					H.Set(i, j, H.At(i, j)+h)
					for r := range w {
						w[r] -= h * V[i][r]
					}
				}
			}
			hn := math.Sqrt(dot(w, w))
			H.Set(j+1, j, hn)
			if hn < 1e-14*math.Abs(H.At(j, j))+1e-300 {
				steps = j + 1 // invariant subspace
				break
			}
			for r := range w {
				w[r] /= hn
			}
			V[j+1] = w
		}
		Hs := mat.DenseCopyOf(H.Slice(0, steps, 0, steps))
		var eig mat.Eigen
		if !eig.Factorize(Hs, mat.EigenRight) {
			return errors.New("Arnoldi: the Hessenberg eigenproblem failed")
		}
		theta := eig.Values(nil)
		var vecs mat.CDense
		eig.VectorsTo(&vecs)
		beta := H.At(steps, steps-1)
		type ritz struct {
			lam complex128
			err float64
		}
		var rs []ritz
		for k, th := range theta {
			if cmplx.Abs(th) < 1e-300 {
				continue // an infinite eigenvalue (a row without storage)
			}
			// residual of the Ritz pair in θ: |β·y_last|; in λ = σ + 1/θ
			// the error is about that divided by |θ|².
			yl := cmplx.Abs(vecs.At(steps-1, k))
			ynorm := 0.0
			for r := 0; r < steps; r++ {
				ynorm += cmplx.Abs(vecs.At(r, k)) * cmplx.Abs(vecs.At(r, k))
			}
			e := math.Abs(beta) * yl / math.Sqrt(ynorm) / (cmplx.Abs(th) * cmplx.Abs(th))
			if steps < dim {
				e = 0
			}
			rs = append(rs, ritz{complex(sigma, 0) + 1/th, e})
		}
		slices.SortFunc(rs, func(a, b ritz) int {
			if c := cmp.Compare(real(a.lam), real(b.lam)); c != 0 {
				return c
			}
			return cmp.Compare(imag(a.lam), imag(b.lam))
		})
		ok := len(rs) >= min(want, n)
		for k := 0; k < min(want, len(rs)); k++ {
			if rs[k].err > 1e-10*math.Max(cmplx.Abs(rs[k].lam), scale) {
				ok = false
			}
		}
		if ok || dim >= n || dim >= 4096 {
			if !ok {
				res.Status = IterationLimit
			}
			res.Eigenvalues = res.Eigenvalues[:0]
			for k := 0; k < min(want, len(rs)); k++ {
				r := rs[k]
				lam := r.lam
				if math.Abs(imag(lam)) <= 1e-10*math.Max(cmplx.Abs(lam), scale) {
					lam = complex(real(lam), 0)
				}
				if j := len(res.Eigenvalues) - 1; j >= 0 {
					p := &res.Eigenvalues[j]
					if cmplx.Abs(complex(p.Value, p.Imag)-lam) <= 1e-8*math.Max(cmplx.Abs(lam), scale) {
						p.Multiplicity++
						continue
					}
				}
				res.Eigenvalues = append(res.Eigenvalues, Eigenvalue{Value: real(lam), Imag: imag(lam), Multiplicity: 1, Err: r.err})
			}
			return nil
		}
		dim = min(n, 2*dim)
	}
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i, v := range a {
		s += v * b[i]
	}
	return s
}
