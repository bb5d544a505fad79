package gen

import (
	"fmt"
	"math"
	"runtime"
	"time"

	"github.com/ramify-dev/ramify/graphpde"
)

// Thomas solves the tridiagonal system sub[i]·x[i−1] + diag[i]·x[i] +
// sup[i]·x[i+1] = rhs[i] (sub[0], sup[n−1] unused) by the plain Thomas
// algorithm, with scratch of length n; it is the reference cost of the grid
// benchmark. It panics if the lengths differ. Cost O(n), no allocation.
func Thomas(x, sub, diag, sup, rhs, scratch []float64) {
	n := len(rhs)
	if len(x) != n || len(sub) != n || len(diag) != n || len(sup) != n || len(scratch) != n {
		panic("gen: Thomas length mismatch")
	}
	if n == 0 {
		return
	}
	cp := scratch
	cp[0] = sup[0] / diag[0]
	x[0] = rhs[0] / diag[0]
	for i := 1; i < n; i++ {
		m := 1 / (diag[i] - sub[i]*cp[i-1])
		cp[i] = sup[i] * m
		x[i] = (rhs[i] - sub[i]*x[i-1]) * m
	}
	for i := n - 2; i >= 0; i-- {
		x[i] -= cp[i] * x[i+1]
	}
}

// ThomasTime fills a diagonally dominant tridiagonal system of n unknowns
// and returns the wall-clock time of one Thomas solve of it. Setup is
// excluded; with alloc the time includes allocating the solution and the
// scratch vector (16 bytes per unknown of fresh memory, as any solve that
// returns its result must), without it all memory is touched beforehand.
func ThomasTime(n int, alloc bool) time.Duration {
	sub, diag, sup, rhs := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range n {
		sub[i], sup[i] = -1, -1
		diag[i] = 2.01 + 1e-3*float64(i%7)
		rhs[i] = float64(i%13) - 6
	}
	var x, scratch []float64
	if !alloc {
		x, scratch = make([]float64, n), make([]float64, n)
		clear(x)
		clear(scratch)
	}
	t0 := time.Now()
	if alloc {
		x, scratch = make([]float64, n), make([]float64, n)
	}
	Thomas(x, sub, diag, sup, rhs, scratch)
	return time.Since(t0)
}

// TreeFigures are the measurements of MeasureTree. Times are wall-clock;
// where several repetitions are made the minimum is kept (the machine may be
// shared), and the solve and the reference alternate.
type TreeFigures struct {
	Edges, Cells    int
	Unknowns        int           // node plus interior grid unknowns
	SolveCold       time.Duration // the first solve, on fresh memory
	Solve           time.Duration // later solves (heap memory reused where the runtime kept it)
	Thomas          time.Duration // one plain Thomas solve of Unknowns unknowns, memory touched beforehand
	ThomasAlloc     time.Duration // the same, allocating its solution and scratch vectors
	Ratio           float64       // Solve / Thomas (target ≤ 1.5)
	RatioCold       float64       // SolveCold / ThomasAlloc
	NsPerUnknown    float64       // Solve per unknown
	BytesPerUnknown float64       // bytes allocated by one solve per unknown
}

// MeasureTree times the steady solve, with grid elements of the given cells
// on every edge, of RandomTree(edges, 1, cells) against plain Thomas solves
// of the same number of unknowns, with reps ≥ 1 alternating repetitions.
func MeasureTree(edges, cells, reps int) (TreeFigures, error) {
	f := TreeFigures{Edges: edges, Cells: cells}
	net := RandomTree(edges, 1, cells)
	set := &graphpde.Settings{Method: graphpde.MethodGrid}
	var m0, m1 runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&m0)
	t0 := time.Now()
	sol, err := graphpde.Solve(net, set)
	f.SolveCold = time.Since(t0)
	runtime.ReadMemStats(&m1)
	if err != nil {
		return f, err
	}
	f.Unknowns = sol.Stats.Unknowns
	f.BytesPerUnknown = float64(m1.TotalAlloc-m0.TotalAlloc) / float64(f.Unknowns)
	sol = nil
	for r := 0; r < max(reps, 1); r++ {
		runtime.GC()
		t0 = time.Now()
		if _, err := graphpde.Solve(net, set); err != nil {
			return f, err
		}
		keepMin(&f.Solve, time.Since(t0))
		runtime.GC()
		keepMin(&f.Thomas, ThomasTime(f.Unknowns, false))
		runtime.GC()
		keepMin(&f.ThomasAlloc, ThomasTime(f.Unknowns, true))
	}
	f.NsPerUnknown = float64(f.Solve.Nanoseconds()) / float64(f.Unknowns)
	f.Ratio = f.Solve.Seconds() / f.Thomas.Seconds()
	f.RatioCold = f.SolveCold.Seconds() / f.ThomasAlloc.Seconds()
	return f, nil
}

func keepMin(dst *time.Duration, d time.Duration) {
	if *dst == 0 || d < *dst {
		*dst = d
	}
}

// MeshFigures are the measurements of MeasureMesh.
type MeshFigures struct {
	Side      int
	Unknowns  int           // node unknowns
	Solve     time.Duration // the whole steady solve
	Factor    time.Duration // ordering, symbolic and numeric factorisation
	NNZL      int           // entries of the factor L
	NDLeading float64       // 31/8·n·log₂ n with n = Unknowns
	FillRatio float64       // NNZL / NDLeading
}

// MeasureMesh times the steady solve of SquareMesh(side, side) with exact
// elements and compares the fill of the node system's factor with the
// nested-dissection leading term.
func MeasureMesh(side int) (MeshFigures, error) {
	f := MeshFigures{Side: side}
	mesh := SquareMesh(side, side)
	t0 := time.Now()
	ms, err := graphpde.Solve(mesh, &graphpde.Settings{Method: graphpde.MethodExact})
	f.Solve = time.Since(t0)
	if err != nil {
		return f, err
	}
	f.Unknowns = ms.Stats.NodeUnknowns
	f.Factor = ms.Stats.FactorTime
	f.NNZL = ms.Stats.FillNNZ
	n := float64(f.Unknowns)
	f.NDLeading = 31.0 / 8 * n * math.Log2(n)
	f.FillRatio = float64(f.NNZL) / f.NDLeading
	return f, nil
}

// Figures are the results of Measure.
type Figures struct {
	Size string
	Tree TreeFigures
	Mesh MeshFigures
}

// Measure runs the solver benchmarks outside go test: size "small" (random
// tree of 10⁴ edges × 100 cells, 100×100 mesh) or "large" (10⁵ edges × 100
// cells, i.e. 10⁷ grid unknowns and about 300 MB, and a 300×300 mesh).
// It prints nothing.
func Measure(size string) (Figures, error) {
	f := Figures{Size: size}
	var edges, side int
	switch size {
	case "small":
		edges, side = 10_000, 100
	case "large":
		edges, side = 100_000, 300
	default:
		return f, fmt.Errorf("unknown benchmark size %q (want small or large)", size)
	}
	var err error
	if f.Tree, err = MeasureTree(edges, 100, 3); err != nil {
		return f, err
	}
	f.Mesh, err = MeasureMesh(side)
	return f, err
}
