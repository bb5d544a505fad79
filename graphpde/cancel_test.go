package graphpde_test

import (
	"context"
	"errors"
	"math"
	"sync/atomic"
	"testing"
	"time"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/gen"
)

// countdown is a context that reports itself cancelled from its n-th look
// on (Err called n times), so that a test can stop a solver in the middle of
// any loop that looks at it, deterministically and without timing.
type countdown struct {
	context.Context
	left atomic.Int64
}

func newCountdown(n int64) *countdown {
	c := &countdown{Context: context.Background()}
	c.left.Store(n)
	return c
}

func (c *countdown) Err() error {
	if c.left.Add(-1) < 0 {
		return context.Canceled
	}
	return nil
}

// looks counts the looks at a context during a call: a countdown that never
// runs out.
func looks(f func(ctx context.Context)) int64 {
	const never = 1 << 62
	c := newCountdown(never)
	f(c)
	return never - c.left.Load()
}

// TestSolveCancelled checks that Settings.Context stops the steady solve at
// every place where it looks: an already cancelled context and a context
// that runs out after each possible number of looks both give a
// *CanceledError wrapping context.Canceled and no solution, and between
// them the looks cover set-up, assembly and recovery (a random tree of grid
// edges: its forest factorisation does not look) and the factorisation (a
// mesh, whose node system takes the general kernel). A context that never
// runs out gives the same values as no context, bit for bit: the looks
// change nothing else.
func TestSolveCancelled(t *testing.T) {
	nets := map[string]*graphpde.Network{
		"tree": gen.RandomTree(9000, 7, 4),
		"mesh": gen.SquareMesh(50, 50),
	}
	stages := map[string]bool{}
	for name, net := range nets {
		ref, err := graphpde.Solve(net, nil)
		if err != nil {
			t.Fatal(err)
		}
		n := looks(func(ctx context.Context) {
			sol, err := graphpde.Solve(net, &graphpde.Settings{Context: ctx})
			if err != nil {
				t.Fatalf("%s with a live context: %v", name, err)
			}
			for i := range ref.U {
				if sol.U[i] != ref.U[i] {
					t.Fatalf("%s: node %d: %v with a context, %v without", name, i, sol.U[i], ref.U[i])
				}
			}
		})
		t.Logf("%s: %d looks", name, n)
		if n < 3 {
			t.Errorf("%s: the solve looked at its context %d times, want several", name, n)
		}
		for k := int64(0); k < n; k++ {
			sol, err := graphpde.Solve(net, &graphpde.Settings{Context: newCountdown(k)})
			var ce *graphpde.CanceledError
			if !errors.As(err, &ce) || !errors.Is(err, context.Canceled) || sol != nil {
				t.Fatalf("%s stopped at look %d of %d: solution %v, error %v; want a *CanceledError wrapping context.Canceled", name, k, n, sol != nil, err)
			}
			stages[name+" "+ce.Stage] = true
		}
	}
	for _, want := range []string{"tree set-up", "tree assembly", "tree recovery", "mesh factorisation"} {
		if !stages[want] {
			t.Errorf("no solve stopped in the %s (stopped in %v)", want, stages)
		}
	}
}

// TestSolveNonlinearCancelled checks the same for Newton: a context that
// runs out at any look stops SolveNonlinear with a *CanceledError, Status
// NotSolved and no Solution. The looks come from the evaluations of the
// residual and the Jacobian (at least two per iteration) and from the
// factorisations of the node system (a mesh with a law on every edge);
// about 40 places spread over the whole run are tried.
func TestSolveNonlinearCancelled(t *testing.T) {
	net := gen.SquareMesh(50, 50)
	k := &graphpde.Coef{Fn: func(_, u, _ float64) (float64, float64) { return 1 + 0.5*u*u, u }, UsesU: true}
	for e := range net.Edges {
		net.Edges[e].Cells = 2
		net.Edges[e].Law = &graphpde.EdgeLaw{A: k}
	}
	var ref *graphpde.NonlinearResult
	n := looks(func(ctx context.Context) {
		var err error
		ref, err = graphpde.SolveNonlinear(net, &graphpde.NonlinearSettings{Context: ctx})
		if err != nil || ref.Status != graphpde.Converged {
			t.Fatalf("with a live context: %v, %v", ref, err)
		}
	})
	if n < 2*int64(ref.Iterations) {
		t.Errorf("%d Newton iterations looked at the context %d times, want at least two looks each", ref.Iterations, n)
	}
	stopped := 0
	for k := int64(0); k < n; k += max(1, n/40) {
		res, err := graphpde.SolveNonlinear(net, &graphpde.NonlinearSettings{Context: newCountdown(k)})
		var ce *graphpde.CanceledError
		if !errors.As(err, &ce) || !errors.Is(err, context.Canceled) {
			t.Fatalf("stopped at look %d of %d: error %v, want a *CanceledError", k, n, err)
		}
		if res != nil && (res.Status != graphpde.NotSolved || res.Solution != nil) {
			t.Fatalf("stopped at look %d: status %v, solution %v; want NotSolved and none", k, res.Status, res.Solution != nil)
		}
		stopped++
	}
	if stopped < 10 {
		t.Errorf("only %d stops tried", stopped)
	}
}

// BenchmarkTreeContext measures what the looks at Settings.Context cost: a
// random tree solved with no context and with a live cancellable one,
// alternating, nine repetitions each, minimum kept, in the same run.
// Reported: ctx-ratio = with / without (target ≤ 1.02). Two trees: grid
// elements of 100 cells (10⁶ unknowns), where the looks are lost among
// the cells, and exact elements on 10⁵ edges, where an edge is cheapest.
// Run with -benchtime=1x.
func BenchmarkTreeContext(b *testing.B) {
	for _, c := range []struct {
		name         string
		edges, cells int
		m            graphpde.Method
	}{{"grid", 10_000, 100, graphpde.MethodGrid}, {"exact", 100_000, 0, graphpde.MethodExact}} {
		b.Run(c.name, func(b *testing.B) {
			net := gen.RandomTree(c.edges, 1, c.cells)
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			timed := func(set *graphpde.Settings) float64 {
				t0 := time.Now()
				if _, err := graphpde.Solve(net, set); err != nil {
					b.Fatal(err)
				}
				return float64(time.Since(t0))
			}
			var without, with float64
			for b.Loop() {
				without, with = math.Inf(1), math.Inf(1)
				for range 9 {
					without = math.Min(without, timed(&graphpde.Settings{Method: c.m}))
					with = math.Min(with, timed(&graphpde.Settings{Method: c.m, Context: ctx}))
				}
			}
			b.ReportMetric(without/1e6, "ms-without")
			b.ReportMetric(with/1e6, "ms-with")
			b.ReportMetric(with/without, "ctx-ratio")
		})
	}
}
