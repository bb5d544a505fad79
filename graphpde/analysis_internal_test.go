package graphpde

import (
	"fmt"
	"testing"

	"github.com/ramify-dev/ramify/vertex"
)

// TestNewtonKeepsAnalysis: Newton's method factors one node-system
// pattern at every step, so only its first factorisation orders and
// analyses the pattern; the later ones reuse that (nodesys Stats.Reused).
// Checked on a 12×12 mesh of edges whose conductance grows with u, which
// takes several steps.
func TestNewtonKeepsAnalysis(t *testing.T) {
	const k = 12
	net := &Network{}
	for j := range k {
		for i := range k {
			law := vertex.Law{}
			switch i {
			case 0:
				law = vertex.Law{Kind: vertex.Fixed, Value: 0}
			case k - 1:
				law = vertex.Law{Kind: vertex.Fixed, Value: 5}
			}
			if _, err := net.AddNode(Node{ID: fmt.Sprintf("n%d_%d", i, j), Law: law}); err != nil {
				t.Fatal(err)
			}
		}
	}
	cond := coefU(func(_, u float64) (float64, float64) { return 1 + 0.5*u, 0.5 })
	for j := range k {
		for i := range k {
			v := j*k + i
			if i+1 < k {
				if _, err := net.AddEdge(Edge{ID: fmt.Sprintf("h%d", v), From: v, To: v + 1, Length: 1, A: 1, F: 1, Cells: 4, Law: &EdgeLaw{A: cond}}); err != nil {
					t.Fatal(err)
				}
			}
			if j+1 < k {
				if _, err := net.AddEdge(Edge{ID: fmt.Sprintf("v%d", v), From: v, To: v + k, Length: 1, A: 1, Cells: 4, Law: &EdgeLaw{A: cond}}); err != nil {
					t.Fatal(err)
				}
			}
		}
	}
	set := NonlinearSettings{MaxIter: 50, Tol: 1e-10}
	s, err := newNLSystem(net, &set)
	if err != nil {
		t.Fatal(err)
	}
	s.start(nil)
	res, err := s.newton(&set)
	if err != nil || res.Status != Converged {
		t.Fatalf("Newton: %v, status %v", err, res.Status)
	}
	if res.Iterations < 3 {
		t.Fatalf("%d Newton steps: the test needs several", res.Iterations)
	}
	if !s.fac.Stats().Reused {
		t.Errorf("the last of %d Newton factorisations ordered the pattern again", res.Iterations)
	}
}
