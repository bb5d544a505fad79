package montecarlo

import (
	"context"
	"reflect"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// chainOfStars returns a chain of n edges of length 1 whose decay rates
// alternate 0.2, 0.6 (so every inner node's arms decay at different rates
// and need a visit-law table), with a leak on every node and the ends fixed
// at 0 and 1: the inner nodes' laws come in two shapes, (0.2, 0.6) and
// (0.6, 0.2), one table each when shared.
func chainOfStars(n int) *graphpde.Network {
	net := &graphpde.Network{}
	for k := 0; k <= n; k++ {
		law := vertex.Law{Kind: vertex.Balance, Leak: 0.3}
		if k == 0 || k == n {
			law = vertex.Law{Kind: vertex.Fixed, Value: float64(k / n)}
		}
		net.AddNode(graphpde.Node{ID: "n" + string(rune('A'+k)), Law: law})
	}
	for k := range n {
		c := 0.2
		if k%2 == 1 {
			c = 0.6
		}
		net.AddEdge(graphpde.Edge{ID: "e" + string(rune('A'+k)), From: k, To: k + 1, Length: 1, A: 1, C: c, F: 0.5})
	}
	return net
}

// TestSharedTables: nodes whose laws coincide share one table; the run
// with shared tables is the run with one table per node, bit for bit (a
// table depends only on its quantised parameters, so the shared one is the
// same table), and it does not depend on the number of workers.
func TestSharedTables(t *testing.T) {
	net := chainOfStars(12)
	run := func(share bool, workers int) *Result {
		t.Helper()
		shareTables = share
		defer func() { shareTables = true }()
		res, err := Run(context.Background(), net, vertex.AtNode(5), &Settings{Particles: 3*BlockSize + 5, Seed: 9, Workers: workers})
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	shared, own := run(true, 1), run(false, 1)
	if shared.Stats.Tables != 2 || own.Stats.Tables != 11 {
		t.Errorf("tables built: shared %d (want 2), one per node %d (want 11)", shared.Stats.Tables, own.Stats.Tables)
	}
	clear := func(r *Result) {
		r.Stats.Elapsed, r.Stats.Prepare, r.Stats.TableTime, r.Stats.Tables = 0, 0, 0, 0
	}
	clear(shared)
	clear(own)
	if !reflect.DeepEqual(shared, own) {
		t.Errorf("shared tables change the run:\n%+v\n%+v", shared, own)
	}
	for _, w := range []int{2, 3} {
		r := run(true, w)
		clear(r)
		if !reflect.DeepEqual(shared, r) {
			t.Errorf("workers=%d: the run differs from workers=1", w)
		}
	}
}
