package nodesys

import (
	"errors"
	"math"
	"math/big"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestRowExcessForest: a path of n unknowns with off-diagonal entries in
// [−2, −0.5] (unsymmetric, like drift), anchored only by a row sum of 1e−13
// at one end (a node tied to its fixed neighbour by an e^{−30} small link)
// and 0 elsewhere, solved for b = e_n. The plain elimination forms each
// pivot a_kk − l·a_ik from nearly equal terms and loses all digits (or
// refuses a pivot as singular); with the row sums (SetRowExcess) every
// component must match a 512-bit Thomas elimination of the same matrix
// (diagonal = row sum + Σ|off-diagonal|, derived) to a few hundred ε.
func TestRowExcessForest(t *testing.T) {
	// gthRel: each pivot and multiplier has a relative error of a few ε
	// and the solve sums n terms of one sign.
	const gthRel = 1e-13
	rnd := rand.New(rand.NewPCG(3, 14))
	for _, n := range []int{2, 5, 40} {
		lo := make([]float64, n) // a(k, k−1)
		up := make([]float64, n) // a(k−1, k)
		for k := 1; k < n; k++ {
			lo[k] = -(0.5 + 1.5*rnd.Float64())
			up[k] = -(0.5 + 1.5*rnd.Float64())
		}
		ex := make([]float64, n)
		ex[0] = 1e-13
		m := NewMatrix[float64](n)
		for k := 0; k < n; k++ {
			diag := ex[k]
			if k > 0 {
				m.Add(k, k-1, lo[k])
				diag -= lo[k]
			}
			if k+1 < n {
				m.Add(k, k+1, up[k+1])
				diag -= up[k+1]
			}
			m.Add(k, k, diag)
		}
		b := make([]float64, n)
		b[n-1] = 1

		// 512-bit reference: Thomas elimination with the exact diagonal.
		const prec = 512
		bf := func(x float64) *big.Float { return new(big.Float).SetPrec(prec).SetFloat64(x) }
		dg := make([]*big.Float, n)
		for k := 0; k < n; k++ {
			dg[k] = bf(ex[k])
			if k > 0 {
				dg[k].Sub(dg[k], bf(lo[k]))
			}
			if k+1 < n {
				dg[k].Sub(dg[k], bf(up[k+1]))
			}
		}
		cp := make([]*big.Float, n)
		rp := make([]*big.Float, n)
		for k := 0; k < n; k++ {
			piv := new(big.Float).Set(dg[k])
			rk := bf(b[k])
			if k > 0 {
				t1 := new(big.Float).Mul(bf(lo[k]), cp[k-1])
				piv.Sub(piv, t1)
				t2 := new(big.Float).Mul(bf(lo[k]), rp[k-1])
				rk.Sub(rk, t2)
			}
			cp[k] = bf(0)
			if k+1 < n {
				cp[k].Quo(bf(up[k+1]), piv)
			}
			rp[k] = new(big.Float).Quo(rk, piv)
		}
		want := make([]float64, n)
		xb := bf(0)
		for k := n - 1; k >= 0; k-- {
			xk := new(big.Float).Set(rp[k])
			if k+1 < n {
				xk.Sub(xk, new(big.Float).Mul(cp[k], xb))
			}
			xb = xk
			want[k], _ = xk.Float64()
		}

		f := NewFactor[float64](nil)
		f.SetRowExcess(ex)
		if err := f.Factorize(m); err != nil {
			t.Fatalf("n %d: %v", n, err)
		}
		x := make([]float64, n)
		f.SolveTo(x, b)
		for k := range x {
			if math.Abs(x[k]-want[k]) > gthRel*math.Abs(want[k]) {
				t.Errorf("n %d: x[%d] = %.16g, want %.16g", n, k, x[k], want[k])
			}
		}
		if r := f.Stats().MinPivotRatio; r != 1 {
			t.Errorf("n %d: MinPivotRatio %g with row sums, want 1", n, r)
		}

		// Without the row sums the same matrix loses its digits.
		g := NewFactor[float64](nil)
		err := g.Factorize(m)
		var se *SingularError
		if err == nil {
			g.SolveTo(x, b)
			worst := 0.0
			for k := range x {
				worst = math.Max(worst, math.Abs(x[k]-want[k])/math.Abs(want[k]))
			}
			t.Logf("n %d without row sums: relative error %.2g, pivot ratio %.2g", n, worst, g.Stats().MinPivotRatio)
		} else if !errors.As(err, &se) {
			t.Errorf("n %d without row sums: %v", n, err)
		}
	}
}

// TestRowExcessIgnored: a matrix that is not an M-matrix in sign (a
// positive off-diagonal entry) or has a negative row sum takes the plain
// path, with the same result as without row sums.
func TestRowExcessIgnored(t *testing.T) {
	m := NewMatrix[float64](3)
	for _, e := range [][3]float64{{0, 0, 4}, {0, 1, 1}, {1, 0, -1}, {1, 1, 4}, {1, 2, -1}, {2, 1, -1}, {2, 2, 4}} {
		m.Add(int(e[0]), int(e[1]), e[2])
	}
	b := []float64{1, 2, 3}
	plain := NewFactor[float64](nil)
	if err := plain.Factorize(m); err != nil {
		t.Fatal(err)
	}
	want := make([]float64, 3)
	plain.SolveTo(want, b)
	for _, ex := range [][]float64{{5, 2, 3}, {-1, 2, 3}} {
		f := NewFactor[float64](nil)
		f.SetRowExcess(ex)
		if err := f.Factorize(m); err != nil {
			t.Fatal(err)
		}
		x := make([]float64, 3)
		f.SolveTo(x, b)
		for k := range x {
			if x[k] != want[k] {
				t.Errorf("row sums %v: x = %v, want %v", ex, x, want)
				break
			}
		}
	}
}

// TestSolveTrans: SolveTransTo solves Aᵀx = b with A's factor, on
// unsymmetric (drift) systems through each kernel path, against gonum's
// dense LU of Aᵀ (mat.Dense.Solve; gonum documents it as LU with partial
// pivoting).
func TestSolveTrans(t *testing.T) {
	// transRel: both are backward-stable solves of a diagonally dominant
	// system (condition below 1e3 here).
	const transRel = 1e-11
	rnd := rand.New(rand.NewPCG(5, 9))
	for _, tc := range []struct {
		name string
		es   []edge
		n    int
	}{
		{"tree", randomTree(60, rnd), 60},
		{"cyclic", randomCyclic(60, 30, rnd), 60},
	} {
		m := driftSystem(tc.n, tc.es, 0.3, rnd)
		f := NewFactor[float64](nil)
		if err := f.Factorize(m); err != nil {
			t.Fatal(err)
		}
		b := make([]float64, tc.n)
		for i := range b {
			b[i] = rnd.Float64() - 0.5
		}
		x := make([]float64, tc.n)
		f.SolveTransTo(x, b)
		var at mat.Dense
		at.CloneFrom(realDense(m).T())
		var want mat.VecDense
		if err := want.SolveVec(&at, mat.NewVecDense(tc.n, append([]float64(nil), b...))); err != nil {
			t.Fatal(err)
		}
		for i := range x {
			if math.Abs(x[i]-want.AtVec(i)) > transRel*(1+math.Abs(want.AtVec(i))) {
				t.Errorf("%s: x[%d] = %.15g, want %.15g", tc.name, i, x[i], want.AtVec(i))
			}
		}
	}
}
