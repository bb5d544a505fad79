package graphpde

import (
	"math"
	"math/rand/v2"
	"runtime"
	"strconv"
	"testing"
	"time"
)

// wholeTree returns a random tree of n edges whose only fixed node is a
// leaf, so that the exit problem of any start involves every edge (fixed
// nodes cut a network into independent systems: the random trees of
// randomTree, absorbing at every leaf, fall into small ones, and a fixed
// root with several subtrees would leave only the start's subtree): node
// k hangs from a uniformly chosen earlier node, the last node (a leaf) is
// fixed; lengths and diffusivities vary, every edge decays a little.
// `ramify bench` builds its trees the same way (gen.RandomTree with the
// fixed node moved from the root to the last leaf).
func wholeTree(n int, rnd *rand.Rand) *Network {
	net := &Network{}
	if _, err := net.AddNode(Node{ID: "r0", Law: free}); err != nil {
		panic(err)
	}
	for k := 1; k <= n; k++ {
		law := free
		if k == n {
			law = fixedAt(0)
		}
		if _, err := net.AddNode(Node{ID: "r" + strconv.Itoa(k), Law: law}); err != nil {
			panic(err)
		}
		if _, err := net.AddEdge(Edge{ID: "t" + strconv.Itoa(k), From: rnd.IntN(k), To: k,
			Length: 0.5 + 1.5*rnd.Float64(), A: 0.5 + 1.5*rnd.Float64(), C: 0.2 * rnd.Float64(), F: 1}); err != nil {
			panic(err)
		}
	}
	return net
}

// BenchmarkExitScale times the exit statistics (4 survival times, 5
// quantiles, the moments) on random trees (wholeTree) of 2.5·10⁴, 5·10⁴ and 10⁵ edges
// against one steady solve of the same tree in the same run, with the
// transform values spread over every core and on one core, and reports the
// growth exponent of the exit time between the smallest and the largest
// tree. Goal: ≤ 30 × one steady solve on 10⁵ edges, exponent ≤ 1.1. Run
// once: -bench ExitScale -benchtime 1x.
func BenchmarkExitScale(b *testing.B) {
	sizes := []int{25000, 50000, 100000}
	var first, last float64
	for _, n := range sizes {
		net := wholeTree(n, rand.New(rand.NewPCG(1, uint64(n))))
		start := Point{Node: n / 2, Edge: -1}
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
// those of one transformer evaluating them in turn, bit for bit, on the
// tree pass and on the general path, and that the evaluation count adds
// the helpers' evaluations.
func TestTransformParallel(t *testing.T) {
	n := 3 * parallelTransformUnknowns
	net := wholeTree(n, rand.New(rand.NewPCG(4, 2)))
	start := Point{Node: -1, Edge: n / 2, X: 0.1}
	sys, err := newExitSystem(net, start)
	if err != nil {
		t.Fatal(err)
	}
	if sys.tree == nil || len(sys.tree.par) < parallelTransformUnknowns {
		t.Fatalf("%d unknowns: too few for the parallel path", sys.nUnk)
	}
	ss := make([]complex128, 17)
	for j := range ss {
		ss[j] = complex(0.5+float64(j), 3*float64(j)-20)
	}
	for _, general := range []bool{false, true} {
		serial := newTransformer(sys)
		tr := newTransformer(sys)
		if general {
			serial.useGeneral()
			tr.useGeneral()
		}
		got, errs := make([]complex128, len(ss)), make([]error, len(ss))
		prev := runtime.GOMAXPROCS(2)
		tr.atMany(ss, got, errs)
		runtime.GOMAXPROCS(prev)
		for j, s := range ss {
			want, err := serial.at(s)
			if err != nil || errs[j] != nil {
				t.Fatalf("general %v s = %v: %v, %v", general, s, err, errs[j])
			}
			if got[j] != want {
				t.Errorf("general %v s = %v: parallel %v, serial %v", general, s, got[j], want)
			}
		}
		if tr.n != len(ss) {
			t.Errorf("general %v: %d evaluations counted, want %d", general, tr.n, len(ss))
		}
		if len(tr.helpers) == 0 || tr.helpers[0].general != general {
			t.Errorf("general %v: helpers %d on the wrong path", general, len(tr.helpers))
		}
	}
}

// BenchmarkExitTransform times one value of the Laplace transform of the
// lifetime on a random tree of 10⁵ edges (wholeTree), by the tree pass and by the
// general complex factorisation and solve, against one steady solve of the
// same tree in the same run: the cost of one of the transform values that
// ExitStatistics spends (Transforms), so that exit / solve ≈ Transforms ×
// tree/solve ÷ cores. Run with -benchtime 20x.
func BenchmarkExitTransform(b *testing.B) {
	n := 100000
	net := wholeTree(n, rand.New(rand.NewPCG(1, uint64(n))))
	start := Point{Node: -1, Edge: n / 2, X: 0.1}
	sys, err := newExitSystem(net, start)
	if err != nil {
		b.Fatal(err)
	}
	fast, slow := newTransformer(sys), newTransformer(sys)
	slow.useGeneral()
	s := complex(-0.3, 2.5)
	var tTree, tGeneral, tSolve time.Duration
	for b.Loop() {
		t0 := time.Now()
		if _, err := Solve(net, nil); err != nil {
			b.Fatal(err)
		}
		tSolve += time.Since(t0)
		t0 = time.Now()
		if _, err := fast.at(s); err != nil {
			b.Fatal(err)
		}
		tTree += time.Since(t0)
		t0 = time.Now()
		if _, err := slow.at(s); err != nil {
			b.Fatal(err)
		}
		tGeneral += time.Since(t0)
	}
	b.ReportMetric(float64(len(sys.tree.par)), "unknowns")
	b.ReportMetric(tTree.Seconds()/tSolve.Seconds(), "tree/solve")
	b.ReportMetric(tGeneral.Seconds()/tSolve.Seconds(), "general/solve")
	b.ReportMetric(tTree.Seconds()/float64(b.N)/float64(len(sys.tree.els))*1e9, "ns/element")
}
