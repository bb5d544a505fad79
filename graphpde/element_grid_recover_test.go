package graphpde

import (
	"math"
	"testing"
)

// TestRecoverConstSolvesCells: condensing a constant grid edge and recovering
// its interior from end values must give the solution of the cell balances
//
//	−L·u_{i−1} + diag·u_i − R·u_{i+1} = h·f,   u_0 = U0, u_n = UL,
//
// whose residuals are checked against roundoff = 64·eps times the size of the
// terms (a backward-stable tridiagonal elimination of an M-matrix, a few
// rounding errors per row), and the end derivatives reconstructed from the
// recovered u_1, u_{n−1} must match the condensed end map to roundoff
// relative to the terms of both (the reconstruction cancels across a
// boundary layer). The pair kernel must equal the single one bit for
// bit (same operations per lane). A non-finite end value must be reported.
func TestRecoverConstSolvesCells(t *testing.T) {
	const roundoff = 64 * 0x1p-52
	cases := []struct {
		name           string
		n              int
		L, a, b, c, f  float64
		U0, UL         float64
		pa, pb, pc, pf float64 // partner edge (length 0.8·L) for the pair kernel
		pU0, pUL       float64
	}{
		{"diffusion", 40, 1.3, 0.7, 0, 0.4, 1.1, 0.3, -2, 1.5, 0, 0.2, -1, 1, 1},
		{"drift layer", 25, 0.6, 2.0, -40, 0, -0.3, 1, 0, 0.5, 30, 0.1, 0.4, 0, 2},
		{"strong decay", 100, 2.0, 0.5, 0.3, 50, 3, -1, 4, 1.0, -2, 10, 2, 1, -1},
		{"one interior", 2, 1, 1, 0, 0, 1, 0, 1, 2, 0, 1, 0, 0, 1},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			k := newConstCell(c.n, c.L, c.a, c.b, c.c, c.f)
			kp := newConstCell(c.n, 0.8*c.L, c.pa, c.pb, c.pc, c.pf)
			u := make([]float64, c.n-1)
			scr := make([]float64, 2*(c.n-1))
			d, g := condenseConst(u, &k)
			if !recoverConst(u, scr, k.sweep(), c.U0, c.UL) {
				t.Fatalf("finite data reported non-finite")
			}
			at := func(i int) float64 {
				switch i {
				case 0:
					return c.U0
				case c.n:
					return c.UL
				}
				return u[i-1]
			}
			for i := 1; i < c.n; i++ {
				lt, dt, rt := k.lf*at(i-1), k.diag*at(i), k.r*at(i+1)
				res := -lt + dt - rt - k.mf
				if scale := math.Abs(lt) + math.Abs(dt) + math.Abs(rt) + math.Abs(k.mf); math.Abs(res) > roundoff*scale {
					t.Errorf("cell balance %d: residual %.3g > %.3g", i, res, roundoff*scale)
				}
			}
			d0, dL := k.ends.endDerivs(c.U0, c.UL, u[0], u[c.n-2])
			w0 := d[0][0]*c.U0 + d[0][1]*c.UL + g[0]
			wL := d[1][0]*c.U0 + d[1][1]*c.UL + g[1]
			// Scales: the terms of the map and of the reconstruction
			// (which cancels in (u_1 − U0) across a boundary layer).
			e := &k.ends
			s0 := math.Abs(d[0][0]*c.U0) + math.Abs(d[0][1]*c.UL) + math.Abs(g[0]) +
				(math.Abs(e.r0*u[0])+math.Abs(e.r0*c.U0)+math.Abs(e.mf0)+math.Abs(e.mc0*c.U0))/e.a0
			sL := math.Abs(d[1][0]*c.U0) + math.Abs(d[1][1]*c.UL) + math.Abs(g[1]) +
				(math.Abs(e.lL*u[c.n-2])+math.Abs(e.lL*c.UL)+math.Abs(e.mfL)+math.Abs(e.mcL*c.UL))/e.aL
			if math.Abs(d0-w0) > roundoff*s0 || math.Abs(dL-wL) > roundoff*sL {
				t.Errorf("end derivatives %g %g from the interior, %g %g from the map", d0, dL, w0, wL)
			}

			// Pair kernel against two single ones.
			ua, ub := make([]float64, c.n-1), make([]float64, c.n-1)
			up := make([]float64, c.n-1)
			condenseConstPair(ua, ub, &k, &kp)
			copy(up, ub)
			condenseConst(u, &k)
			oka, okb := recoverConstPair(ua, ub, scr, k.sweep(), kp.sweep(), c.U0, c.UL, c.pU0, c.pUL)
			recoverConst(u, scr, k.sweep(), c.U0, c.UL)
			recoverConst(up, scr, kp.sweep(), c.pU0, c.pUL)
			if !oka || !okb {
				t.Errorf("pair reported non-finite values")
			}
			for i := range u {
				if ua[i] != u[i] || ub[i] != up[i] {
					t.Fatalf("pair differs from single at %d", i)
				}
			}

			condenseConst(u, &k)
			if recoverConst(u, scr, k.sweep(), math.NaN(), c.UL) {
				t.Errorf("NaN end value not reported")
			}
			condenseConstPair(ua, ub, &k, &kp)
			if oka, okb := recoverConstPair(ua, ub, scr, k.sweep(), kp.sweep(), c.U0, c.UL, c.pU0, math.Inf(1)); !oka || okb {
				t.Errorf("pair finiteness %v %v, want true false", oka, okb)
			}
		})
	}
}
