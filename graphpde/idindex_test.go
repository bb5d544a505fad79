package graphpde

import (
	"strconv"
	"testing"
)

// TestIDIndex checks the id index against a Go map (the reference): every
// id added, with and without Reserve (growing step by step from empty),
// is found at its index, ids never added are not, and duplicates are
// refused; a copy whose Nodes stop short of nodes added later to a
// network sharing its index does not find them.
func TestIDIndex(t *testing.T) {
	for _, reserve := range []bool{false, true} {
		net := &Network{}
		const n = 20000
		if reserve {
			net.Reserve(n, n)
		}
		want := map[string]int{}
		for i := range n {
			id := "v" + strconv.Itoa(i*7919%100003)
			v, err := net.AddNode(Node{ID: id})
			if err != nil {
				t.Fatal(err)
			}
			want[id] = v
			if i > 0 {
				e, err := net.AddEdge(Edge{ID: "e" + id, From: v - 1, To: v, Length: 1, A: 1})
				if err != nil {
					t.Fatal(err)
				}
				want["e"+id] = e
			}
		}
		for id, i := range want {
			get := net.NodeIndex
			if id[0] == 'e' {
				get = net.EdgeIndex
			}
			if got, ok := get(id); !ok || got != i {
				t.Fatalf("reserve=%v: %q at %d, %v; want %d", reserve, id, got, ok, i)
			}
		}
		for _, id := range []string{"", "v", "v100003", "x1", "ev0", "e"} {
			if i, ok := net.NodeIndex(id); ok {
				t.Fatalf("reserve=%v: node %q found at %d", reserve, id, i)
			}
		}
		if _, err := net.AddNode(Node{ID: "v0"}); err == nil {
			t.Fatalf("reserve=%v: duplicate node id accepted", reserve)
		}
		if len(net.nodeIndex.slots)*3 < net.nodeIndex.n*4 {
			t.Fatalf("reserve=%v: %d ids in %d slots (load above 3/4)", reserve, net.nodeIndex.n, len(net.nodeIndex.slots))
		}
		short := *net
		if _, err := net.AddNode(Node{ID: "late"}); err != nil {
			t.Fatal(err)
		}
		if i, ok := short.NodeIndex("late"); ok {
			t.Fatalf("reserve=%v: a copy taken before finds a later node at %d", reserve, i)
		}
	}
}
