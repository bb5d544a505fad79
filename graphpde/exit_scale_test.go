package graphpde

import (
	"math"
	"math/rand/v2"
	"runtime"
	"strconv"
	"testing"
	"time"

	"github.com/ramify-dev/ramify/vertex"
)

// BenchmarkExitScale times the exit statistics (4 survival times, 5
// quantiles, the moments) on random trees of 2.5·10⁴, 5·10⁴ and 10⁵ edges
// against one steady solve of the same tree in the same run, with the
// transform values spread over every core and on one core, and reports the
// growth exponent of the exit time between the smallest and the largest
// tree. Goal: ≤ 30 × one steady solve on 10⁵ edges, exponent ≤ 1.1. Run
// once: -bench ExitScale -benchtime 1x.
func BenchmarkExitScale(b *testing.B) {
	sizes := []int{25000, 50000, 100000}
	var first, last float64
	for _, n := range sizes {
		net := randomTree(b, n, rand.New(rand.NewPCG(1, uint64(n))))
		start := Point{Node: n / 2, Edge: -1}
		if net.Nodes[start.Node].Law.Kind == vertex.Fixed {
			start = Point{Node: -1, Edge: n / 2, X: 0.1}
		}
		set := &ExitSettings{Times: []float64{0.1, 0.5, 1, 2}}
		b.Run("edges="+strconv.Itoa(n), func(b *testing.B) {
			for b.Loop() {
				t0 := time.Now()
				if _, err := Solve(net, nil); err != nil {
					b.Fatal(err)
				}
				solve := time.Since(t0).Seconds()
				t0 = time.Now()
				x, err := ExitStatistics(net, start, set)
				if err != nil {
					b.Fatal(err)
				}
				exit := time.Since(t0).Seconds()
				procs := runtime.GOMAXPROCS(1)
				t0 = time.Now()
				if _, err := ExitStatistics(net, start, set); err != nil {
					b.Fatal(err)
				}
				one := time.Since(t0).Seconds()
				runtime.GOMAXPROCS(procs)
				b.ReportMetric(exit/solve, "exit/solve")
				b.ReportMetric(one/exit, "1core/all")
				b.ReportMetric(float64(x.Transforms), "transforms")
				b.ReportMetric(exit, "exit-s")
				if n == sizes[0] {
					first = exit
				}
				if n == sizes[len(sizes)-1] {
					last = exit
					b.ReportMetric(math.Log(last/first)/math.Log(float64(sizes[len(sizes)-1])/float64(sizes[0])), "exponent")
				}
			}
		})
	}
}

// TestTransformParallel checks that transform values spread over several
// goroutines (atMany, on a system above parallelTransformUnknowns) are
// those of one transformer evaluating them in turn, bit for bit, and that
// the evaluation count adds the helpers' evaluations.
func TestTransformParallel(t *testing.T) {
	n := 3 * parallelTransformUnknowns
	net := randomTree(t, n, rand.New(rand.NewPCG(4, 2)))
	start := Point{Node: -1, Edge: n / 2, X: 0.1}
	sys, err := newExitSystem(net, start)
	if err != nil {
		t.Fatal(err)
	}
	if sys.nUnk < parallelTransformUnknowns {
		t.Fatalf("%d unknowns: too few for the parallel path", sys.nUnk)
	}
	ss := make([]complex128, 17)
	for j := range ss {
		ss[j] = complex(0.5+float64(j), 3*float64(j)-20)
	}
	serial := newTransformer(sys)
	tr := newTransformer(sys)
	got, errs := make([]complex128, len(ss)), make([]error, len(ss))
	prev := runtime.GOMAXPROCS(2)
	defer runtime.GOMAXPROCS(prev)
	tr.atMany(ss, got, errs)
	for j, s := range ss {
		want, err := serial.at(s)
		if err != nil || errs[j] != nil {
			t.Fatalf("s = %v: %v, %v", s, err, errs[j])
		}
		if got[j] != want {
			t.Errorf("s = %v: parallel %v, serial %v", s, got[j], want)
		}
	}
	if tr.n != len(ss) {
		t.Errorf("%d evaluations counted, want %d", tr.n, len(ss))
	}
}
