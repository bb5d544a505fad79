package graphpde

import (
	"math"
	"testing"
	"time"

	"github.com/ramify-dev/ramify/vertex"
)

// The grid systems of evolve (fvSystem, fwdSystem) assemble K straight into
// the slots of a node pattern (gridPattern). These tests compare that with
// the assembly they replaced — triplets summed and sorted into compressed
// rows, kept here as the reference — on a network with every kind of row.

// oldCompress is the former odeRows.compress: compressed rows from triplets,
// duplicates summed in triplet order, the diagonal always present, columns
// increasing.
func oldCompress(n int, kI, kJ []int, kV []float64) (rp, ci []int, cv []float64) {
	cnt := make([]int, n+1)
	for _, i := range kI {
		cnt[i+1]++
	}
	for i := 0; i < n; i++ {
		cnt[i+1] += cnt[i]
	}
	tj := make([]int, len(kI))
	tv := make([]float64, len(kI))
	pos := append([]int(nil), cnt[:n]...)
	for k, i := range kI {
		tj[pos[i]] = kJ[k]
		tv[pos[i]] = kV[k]
		pos[i]++
	}
	rp = make([]int, n+1)
	for i := 0; i < n; i++ {
		start := len(ci)
		ci = append(ci, i)
		cv = append(cv, 0)
		for p := cnt[i]; p < cnt[i+1]; p++ {
			q := start
			for ; q < len(ci) && ci[q] != tj[p]; q++ {
			}
			if q == len(ci) {
				ci = append(ci, tj[p])
				cv = append(cv, 0)
			}
			cv[q] += tv[p]
		}
		for x := start + 1; x < len(ci); x++ {
			for y := x; y > start && ci[y] < ci[y-1]; y-- {
				ci[y], ci[y-1] = ci[y-1], ci[y]
				cv[y], cv[y-1] = cv[y-1], cv[y]
			}
		}
		rp[i+1] = len(ci)
	}
	return rp, ci, cv
}

// triplets collects K's entries in assembly order.
type triplets struct {
	kI, kJ []int
	kV     []float64
}

func (t *triplets) add(i, j int, v float64) {
	t.kI, t.kJ, t.kV = append(t.kI, i), append(t.kJ, j), append(t.kV, v)
}

// oldFVK is K of fvSystem as the former assembly built it.
func oldFVK(s *fvSystem) (rp, ci []int, cv []float64) {
	var t triplets
	net := s.net
	for v := range net.Nodes {
		if i := s.unk[v]; i >= 0 {
			t.add(i, i, net.Nodes[v].Law.Leak)
		}
	}
	for e := range net.Edges {
		ed := &net.Edges[e]
		n := s.cells[e]
		h := ed.Length / float64(n)
		a0, _, _, _, _ := fvCoefs(ed, 0, 0)
		aL, _, _, _, _ := fvCoefs(ed, ed.Length, 0)
		s0, sL := weightScale(ed, 0, a0), weightScale(ed, 1, aL)
		var lPrev, pPrev float64
		for i := 0; i <= n; i++ {
			row, _ := s.vertexUnknown(e, i)
			sc := s0
			if i == n {
				sc = sL
			}
			var r, l, p float64
			if i < n {
				r, l, p = cellFlux(ed, h, i)
			}
			if row >= 0 {
				_, _, c, _, _ := fvCoefs(ed, float64(i)*h, 0)
				m := vertexShare(i, n, h, pPrev, p)
				if i > 0 {
					if nb, _ := s.vertexUnknown(e, i-1); nb >= 0 {
						t.add(row, nb, -sc*lPrev)
					}
					t.add(row, row, sc*lPrev)
				}
				if i < n {
					if nb, _ := s.vertexUnknown(e, i+1); nb >= 0 {
						t.add(row, nb, -sc*r)
					}
					t.add(row, row, sc*r)
				}
				t.add(row, row, sc*m*c)
			}
			lPrev, pPrev = l, p
		}
	}
	return oldCompress(s.n, t.kI, t.kJ, t.kV)
}

// oldFwdK is K of fwdSystem as the former assembly built it.
func oldFwdK(s *fwdSystem) (rp, ci []int, cv []float64) {
	var t triplets
	net := s.net
	for v := range net.Nodes {
		if i := s.unk[v]; i >= 0 {
			t.add(i, i, net.Nodes[v].Law.Leak)
		}
	}
	for e := range net.Edges {
		ed := &net.Edges[e]
		n := s.cells[e]
		h := ed.Length / float64(n)
		for i := 0; i <= n; i++ {
			row, f := s.vertex(e, i)
			if row < 0 {
				continue
			}
			_, _, c, _, _ := fvCoefs(ed, float64(i)*h, 0)
			m := h
			if i == 0 || i == n {
				m = h / 2
			}
			t.add(row, row, m*c*f)
		}
		for j := 0; j < n; j++ {
			a, b, _, _, _ := fvCoefs(ed, (float64(j)+0.5)*h, 0)
			p := b * h / a
			cl, cr := a/h*sgB(-p), a/h*sgB(p)
			rl, fl := s.vertex(e, j)
			rr, fr := s.vertex(e, j+1)
			if rl >= 0 {
				t.add(rl, rl, cl*fl)
				if rr >= 0 {
					t.add(rl, rr, -cr*fr)
				}
			}
			if rr >= 0 {
				if rl >= 0 {
					t.add(rr, rl, -cl*fl)
				}
				t.add(rr, rr, cr*fr)
			}
		}
	}
	return oldCompress(s.n, t.kI, t.kJ, t.kV)
}

// patternTestNet has fixed and balance nodes (leak, capacity, injection),
// drift, given end weights, a diffusivity that varies along an edge,
// parallel edges, a self-loop, one-cell and many-cell edges.
func patternTestNet(t testing.TB) *Network {
	b := newNetBuilder(t)
	g := b.fixed("g", 1)
	p := b.node("p", vertex.Law{Kind: vertex.Balance, Leak: 0.3, Capacity: 0.2, Inject: 0.5})
	q := b.balance("q")
	r := b.node("r", vertex.Law{Kind: vertex.Balance, Capacity: 1})
	h := b.fixed("h", -0.5)
	b.edge(Edge{ID: "gp", From: g, To: p, Length: 1, A: 1, B: 3, C: 0.1, F: 0.2, Rho: 1})
	b.edge(Edge{ID: "pq1", From: p, To: q, Length: 0.5, A: 2, Rho: 0.5, Weight: [2]float64{1, 3}, Cells: 7})
	b.edge(Edge{ID: "pq2", From: q, To: p, Length: 0.7, A: 1, B: -2, Rho: 2, Cells: 1})
	b.edge(Edge{ID: "loop", From: q, To: q, Length: 1.3, A: 0.5, C: 1, Rho: 1, Cells: 5})
	b.edge(Edge{ID: "qr", From: q, To: r, Length: 2, A: 1, Rho: 1, Profile: &Profile{A: func(x float64) float64 { return 1 + x*x }}})
	b.edge(Edge{ID: "rh", From: r, To: h, Length: 1, A: 1, B: 0.5, Rho: 1, Cells: 3})
	b.edge(Edge{ID: "gh", From: g, To: h, Length: 1, A: 1, Rho: 1, Cells: 4})
	return b.net
}

// TestGridPatternAssembly: the slot assembly gives bit for bit the rows,
// columns and values of the former triplet assembly, for the field and the
// forward (tracer) grids, so evolve's results are unchanged.
func TestGridPatternAssembly(t *testing.T) {
	net := patternTestNet(t)
	fv, err := newFV(net, 6, 0)
	if err != nil {
		t.Fatal(err)
	}
	rel := Point{Node: 1, Edge: -1}
	fw, err := newForward(net, 6, 0, &rel)
	if err != nil {
		t.Fatal(err)
	}
	check := func(name string, rs *odeRows, rp, ci []int, cv []float64) {
		t.Helper()
		if len(rs.rp) != len(rp) || len(rs.ci) != len(ci) {
			t.Fatalf("%s: %d rows and %d entries, former %d and %d", name, len(rs.rp)-1, len(rs.ci), len(rp)-1, len(ci))
		}
		for i := range rp {
			if rs.rp[i] != rp[i] {
				t.Fatalf("%s: row pointer %d is %d, former %d", name, i, rs.rp[i], rp[i])
			}
		}
		for k := range ci {
			if rs.ci[k] != ci[k] || math.Float64bits(rs.cv[k]) != math.Float64bits(cv[k]) {
				t.Errorf("%s: entry %d is (col %d, %v), former (col %d, %v)", name, k, rs.ci[k], rs.cv[k], ci[k], cv[k])
			}
		}
	}
	rp, ci, cv := oldFVK(fv)
	check("field grid", fv.rows(), rp, ci, cv)
	rp, ci, cv = oldFwdK(fw)
	check("forward grid", fw.rows(), rp, ci, cv)
}

// binaryTree is a binary tree of the given number of edges (edge i joins
// node (i−1)/2 to node i; node 0, the root, is held at 0), lengths 1 to
// 1.6, drift and decay, with the given cells per edge: a grid network for
// benchmarks.
func binaryTree(t testing.TB, edges, cells int) *Network {
	b := newNetBuilder(t)
	b.fixed("n0", 0)
	for i := 1; i <= edges; i++ {
		b.node("n"+itoa(i), vertex.Law{Kind: vertex.Balance, Inject: 0.01})
	}
	for i := 1; i <= edges; i++ {
		b.edge(Edge{ID: "e" + itoa(i), From: (i - 1) / 2, To: i, Length: 1 + 0.1*float64(i%7), A: 1, B: 0.3, C: 0.01, Rho: 1, Cells: cells})
	}
	return b.net
}

func itoa(i int) string {
	if i == 0 {
		return "0"
	}
	var buf [20]byte
	k := len(buf)
	for ; i > 0; i /= 10 {
		k--
		buf[k] = byte('0' + i%10)
	}
	return string(buf[k:])
}

// BenchmarkGridAssembly times the assembly of the field grid's K on a tree
// of 10⁴ edges × 100 cells (10⁶ unknowns): the former triplets sorted into
// compressed rows (old, kept in oldFVK) against the slots of gridPattern
// (new, newFV whole: numbering, pattern and values), and one fixed TR-BDF2
// step of the same network for scale, all in one run. Run with
// -benchtime 1x.
func BenchmarkGridAssembly(b *testing.B) {
	net := binaryTree(b, 10000, 100)
	for b.Loop() {
		t0 := time.Now()
		fv, err := newFV(net, 100, 0)
		if err != nil {
			b.Fatal(err)
		}
		tNew := time.Since(t0)
		t0 = time.Now()
		oldFVK(fv)
		tOld := time.Since(t0)
		r1, err := Evolve(net, &EvolveSettings{Until: 1e-3, Step: 1e-3})
		if err != nil {
			b.Fatal(err)
		}
		r6, err := Evolve(net, &EvolveSettings{Until: 6e-3, Step: 1e-3})
		if err != nil {
			b.Fatal(err)
		}
		step := (r6.Stats.Time - r1.Stats.Time).Seconds() / 5
		b.ReportMetric(tOld.Seconds(), "old-assembly-s")
		b.ReportMetric(tNew.Seconds(), "new-setup-s")
		b.ReportMetric(tNew.Seconds()/tOld.Seconds(), "new/old")
		b.ReportMetric(step, "step-s")
		b.ReportMetric(r1.Stats.Time.Seconds(), "first-step-s")
	}
}
