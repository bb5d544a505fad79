package graphpde_test

import (
	"context"
	"errors"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// TestExitStatisticsCancelled checks that ExitSettings.Context stops the
// exit statistics on both paths: with a cancelled context no transform is
// evaluated and the error wraps context.Canceled, so a caller that gave up
// (Ctrl-C in the command) does not leave the inversions running; with a
// live one the same call succeeds.
func TestExitStatisticsCancelled(t *testing.T) {
	net := &graphpde.Network{}
	a, _ := net.AddNode(graphpde.Node{ID: "a", Law: vertex.Law{Kind: vertex.Fixed}})
	b, _ := net.AddNode(graphpde.Node{ID: "b", Law: vertex.Law{Kind: vertex.Fixed, Value: 1}})
	if _, err := net.AddEdge(graphpde.Edge{ID: "e", From: a, To: b, Length: 1, A: 1}); err != nil {
		t.Fatal(err)
	}
	cancelled, cancel := context.WithCancel(context.Background())
	cancel()
	for _, m := range []graphpde.Method{graphpde.MethodExact, graphpde.MethodGrid} {
		start := vertex.OnEdge(0, 0.3)
		_, err := graphpde.ExitStatistics(net, start, &graphpde.ExitSettings{Method: m, Context: cancelled})
		if !errors.Is(err, context.Canceled) {
			t.Errorf("%v: error %v, want one wrapping context.Canceled", m, err)
		}
		if _, err := graphpde.ExitStatistics(net, start, &graphpde.ExitSettings{Method: m, Context: context.Background()}); err != nil {
			t.Errorf("%v with a live context: %v", m, err)
		}
	}
}
