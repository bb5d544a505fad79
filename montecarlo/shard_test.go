package montecarlo_test

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex"
)

// TestShardMerge checks that the parts of a sharded run, merged in any
// order, give the whole run's result bit for bit (the blocks are folded in
// the same order with the same sums), for shard counts that divide the
// blocks evenly, unevenly and leave some parts empty (6 parts of 4 blocks); with a time cap that
// censors some walkers, so that the quantiles see +Inf; and with samples
// kept by the parts.
func TestShardMerge(t *testing.T) {
	net := mixedNet()
	base := montecarlo.Settings{Particles: 3*montecarlo.BlockSize + 17, Seed: 42, Workers: 2, Step: 0.01, TimeCap: 1}
	whole := run(t, net, vertex.AtNode(1), base)
	if whole.Censored == 0 {
		t.Fatal("the test wants some censored walkers; lower the time cap")
	}
	whole.Stats = montecarlo.Stats{Steps: whole.Stats.Steps, Exact: whole.Stats.Exact} // the timings and table counts are the run's own
	for _, count := range []int{1, 3, 6} {
		for _, keep := range []bool{false, count == 3} {
			var parts []*montecarlo.Part
			var steps int64
			for i := count; i >= 1; i-- { // reversed: Merge must not care
				set := base
				set.Shard = montecarlo.Shard{Index: i, Count: count}
				set.KeepSamples = keep
				res, err := montecarlo.Run(context.Background(), net, vertex.AtNode(1), &set)
				if err != nil && res == nil {
					t.Fatal(err)
				}
				if res.Part == nil {
					t.Fatal("a sharded run without its Part")
				}
				steps += res.Stats.Steps
				parts = append(parts, res.Part)
			}
			got, err := montecarlo.Merge(parts)
			if err != nil {
				t.Fatal(err)
			}
			// %v prints every float in its shortest exact form (and NaN,
			// which DeepEqual would never call equal, as NaN).
			if fmt.Sprintf("%v", whole) != fmt.Sprintf("%v", got) {
				t.Errorf("%d parts (samples kept: %v): merged result differs from the whole run:\n%+v\n%+v", count, keep, got, whole)
			}
			if steps != whole.Stats.Steps {
				t.Errorf("%d parts: %d steps, whole run %d", count, steps, whole.Stats.Steps)
			}
		}
	}
}

// TestMergeRefuses checks the mismatches Merge must refuse: a missing part,
// a part given twice, parts of another seed or particle count.
func TestMergeRefuses(t *testing.T) {
	net := mixedNet()
	part := func(i, n int, seed uint64, particles int64) *montecarlo.Part {
		set := montecarlo.Settings{Particles: particles, Seed: seed, Step: 0.01, TimeCap: 5, Shard: montecarlo.Shard{Index: i, Count: n}}
		res, err := montecarlo.Run(context.Background(), net, vertex.AtNode(1), &set)
		if err != nil {
			t.Fatal(err)
		}
		return res.Part
	}
	const np = 3 * montecarlo.BlockSize
	p1, p2, p3 := part(1, 3, 7, np), part(2, 3, 7, np), part(3, 3, 7, np)
	for _, c := range []struct {
		name  string
		parts []*montecarlo.Part
		want  string
	}{
		{"missing", []*montecarlo.Part{p1, p3}, "part 2 of 3 missing"},
		{"twice", []*montecarlo.Part{p1, p2, p2, p3}, "part 2/3 is given twice"},
		{"seed", []*montecarlo.Part{p1, part(2, 3, 8, np), p3}, "seeds 7 and 8"},
		{"particles", []*montecarlo.Part{p1, part(2, 3, 7, np+1), p3}, "walkers"},
		{"count", []*montecarlo.Part{p1, part(2, 4, 7, np), p3}, "split into 3 and 4 parts"},
	} {
		_, err := montecarlo.Merge(c.parts)
		var me *montecarlo.MismatchError
		if !errors.As(err, &me) || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want a MismatchError containing %q", c.name, err, c.want)
		}
	}
	if _, err := montecarlo.Merge([]*montecarlo.Part{p1, p2, p3}); err != nil {
		t.Errorf("the complete set: %v", err)
	}
	var se *montecarlo.SettingsError
	if _, err := montecarlo.Run(context.Background(), net, vertex.AtNode(1), &montecarlo.Settings{Particles: 10, Shard: montecarlo.Shard{Index: 4, Count: 3}}); !errors.As(err, &se) {
		t.Errorf("shard 4 of 3: error %v, want a SettingsError", err)
	}
}

// TestLazyTables checks that visit-law tables are built only for nodes that
// walkers reach: two leaky nodes (each needing one visit table) on either
// side of a fixed node; walkers from the first are absorbed at the fixed
// node before they can reach the second, so the run needs one table.
func TestLazyTables(t *testing.T) {
	n := &tNet{}
	a := n.node(vertex.Law{Kind: vertex.Balance, Leak: 0.4})
	f := n.node(fixed(1))
	b := n.node(vertex.Law{Kind: vertex.Balance, Leak: 0.7})
	g := n.node(fixed(0))
	n.edge(tEdge{from: a, to: f, L: 1, a: 1})
	n.edge(tEdge{from: f, to: b, L: 1, a: 1})
	n.edge(tEdge{from: b, to: g, L: 1.3, a: 1})
	res := run(t, n, vertex.AtNode(a), montecarlo.Settings{Particles: 2000, Seed: 1})
	if res.Stats.Tables != 1 {
		t.Errorf("%d visit-law tables looked up, want 1 (node %d is never reached)", res.Stats.Tables, b)
	}
	if res.Visits[b].Mean != 0 {
		t.Errorf("node %d visited", b)
	}
}
