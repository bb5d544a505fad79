package netfile

import (
	"bytes"
	"testing"
	"time"

	"github.com/ramify-dev/ramify/examples"
	"github.com/ramify-dev/ramify/graphpde"
)

// BenchmarkPolicyIteration: policy iteration on the controlled examples
// against one linear solve of the same network (the linear network of the
// optimal policy, on the same grid), both measured in the same run. It
// reports the evaluations (target ≤ 10), the time of one evaluation
// (assembly, factorisation and solve of the node system) over the linear
// solve (target ≤ 1.3), and the whole iteration (evaluations, improvement
// steps, exact re-solve) over the linear solve.
//
//	go test -run '^$' -bench PolicyIteration -benchtime 3x ./graphpde/netfile/
func BenchmarkPolicyIteration(b *testing.B) {
	for _, tc := range []struct {
		file  string
		cells int
	}{{"courier.toml", 256}, {"courier.toml", 4096}} {
		src, err := examples.Files.ReadFile(tc.file)
		if err != nil {
			b.Fatal(err)
		}
		net, err := Read(bytes.NewReader(src), tc.file)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(tc.file+"/cells="+itoa(tc.cells), func(b *testing.B) {
			var evals, perEval, whole float64
			for range b.N {
				res, err := graphpde.SolveControl(net, &graphpde.ControlSettings{Cells: tc.cells})
				if err != nil || res.Status != graphpde.Converged {
					b.Fatal(err, res)
				}
				pn, _, err := net.Apply(res.Policy)
				if err != nil {
					b.Fatal(err)
				}
				t0 := time.Now()
				if _, err := graphpde.Solve(pn, &graphpde.Settings{Method: graphpde.MethodGrid, Cells: tc.cells}); err != nil {
					b.Fatal(err)
				}
				lin := time.Since(t0).Seconds()
				evals += float64(res.Iterations)
				perEval += res.SolveTime.Seconds() / float64(res.Iterations) / lin
				whole += res.Elapsed.Seconds() / lin
			}
			n := float64(b.N)
			b.ReportMetric(evals/n, "evaluations")
			b.ReportMetric(perEval/n, "eval/linear")
			b.ReportMetric(whole/n, "whole/linear")
		})
	}
}

func itoa(n int) string {
	s := ""
	for n > 0 || s == "" {
		s = string(rune('0'+n%10)) + s
		n /= 10
	}
	return s
}
