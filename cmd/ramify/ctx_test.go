package main

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"runtime"
	"strings"
	"sync/atomic"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/gen"
	"github.com/ramify-dev/ramify/graphpde/netfile"
)

// countdown is a context that reports itself cancelled from its n-th look
// on. Its Done channel is nil, so interruptible runs the work in the
// caller's goroutine: the error then shows whether the work itself looked
// at the context (a solver that ignored it would finish and succeed).
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

// TestCommandContextReachesWork checks that the command's context reaches
// the reader, the linear solve and Newton: each, stopped after a few looks,
// ends with the interruption (exit status 130 through fail), not with a
// result. The networks are large enough that each looks more than the
// countdown allows (thousands of edges; the stop comes mid-way).
func TestCommandContextReachesWork(t *testing.T) {
	var b strings.Builder
	b.WriteString("[defaults]\ndiffusivity = 1\n\n[[node]]\nid = \"n0\"\nfixed = 0\n")
	const n = 5000
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&b, "\n[[node]]\nid = \"n%d\"\ninject = 1\n", i)
	}
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&b, "\n[[edge]]\nid = \"e%d\"\nfrom = \"n%d\"\nto = \"n%d\"\nlength = 1\n", i, i-1, i)
	}
	path := writeFile(t, "chain.toml", b.String())
	if _, err := load(newCountdown(3), path); !errors.Is(err, errInterruptedAny) {
		t.Errorf("load stopped after 3 looks: %v, want the interruption", err)
	}
	if net, err := load(newCountdown(1<<40), path); err != nil || len(net.Edges) != n {
		t.Errorf("load with a live context: %v", err)
	}

	tree := gen.RandomTree(9000, 3, 4)
	if _, _, err := solveField(newCountdown(2), tree, graphpde.MethodAuto, 0); !errors.Is(err, errInterruptedAny) {
		t.Errorf("linear solve stopped after 2 looks: %v, want the interruption", err)
	}
	mesh := gen.SquareMesh(40, 40)
	k := &graphpde.Coef{Fn: func(_, u, _ float64) (float64, float64) { return 1 + u*u, 2 * u }, UsesU: true}
	for e := range mesh.Edges {
		mesh.Edges[e].Law = &graphpde.EdgeLaw{A: k}
		mesh.Edges[e].Cells = 2
	}
	if _, _, err := solveField(newCountdown(4), mesh, graphpde.MethodAuto, 0); !errors.Is(err, errInterruptedAny) {
		t.Errorf("Newton stopped after 4 looks: %v, want the interruption", err)
	}
	if sol, _, err := solveField(context.Background(), mesh, graphpde.MethodAuto, 0); err != nil || sol == nil {
		t.Errorf("Newton with a live context: %v", err)
	}
}

// TestNodeErrorsNameTheLine checks that errors of the node system that name
// a node also give the file and the line of that node's id key: an
// unanchored component through the command (one line on standard error,
// exit status 1), and a singular pivot through placed (a singular node
// system needs a pathological file that the reader's own range checks
// refuse first, so the error is made by hand).
func TestNodeErrorsNameTheLine(t *testing.T) {
	path := writeFile(t, "loose.toml", "[[node]]\nid = \"a\"\n\n[[node]]\nid = \"b\"\n\n[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n")
	code, _, errs := runCLI(t, context.Background(), "solve", path)
	if code != 1 || !strings.HasPrefix(errs, "ramify solve: "+path+":2: the component of nodes a, b") || strings.Count(errs, "\n") != 1 {
		t.Errorf("unanchored: exit %d, stderr %q; want 1 and one line starting with the file and line 2", code, errs)
	}
	net, err := load(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	sing := &graphpde.SingularNodeError{Node: "b", Pivot: 0, Scale: 1}
	got := placed(net, fmt.Errorf("wrapped: %w", sing))
	if want := path + ":5: wrapped: the node system is singular at node b"; !strings.HasPrefix(got.Error(), want) {
		t.Errorf("singular: %q, want the prefix %q", got, want)
	}
	if !errors.As(got, &sing) {
		t.Errorf("placed hides the *SingularNodeError: %v", got)
	}
	other := errors.New("something else")
	if placed(net, other) != other || placed(gen.Chain(3), sing) != sing {
		t.Error("placed changed an error it has no line for")
	}
}

// TestNodeErrorsNameTheLineLate: in a file of many batches of tables, an
// unanchored component defined at its end, and a singular pivot at a node
// of its first batch, are reported with the line of that node's id key,
// which the reader recorded while it read (the file's text is gone by
// the time the node system fails).
func TestNodeErrorsNameTheLineLate(t *testing.T) {
	var buf bytes.Buffer
	if err := netfile.Write(&buf, gen.Chain(3000)); err != nil {
		t.Fatal(err)
	}
	head := buf.String()
	n := strings.Count(head, "\n")
	path := writeFile(t, "late.toml", head+"\n[[node]]\nid = \"loose1\"\n\n[[node]]\nid = \"loose2\"\n\n[[edge]]\nid = \"el\"\nfrom = \"loose1\"\nto = \"loose2\"\nlength = 1\ndiffusivity = 1\n")
	code, _, errs := runCLI(t, context.Background(), "solve", path)
	if want := fmt.Sprintf("ramify solve: %s:%d: the component of nodes loose1, loose2", path, n+3); code != 1 || !strings.HasPrefix(errs, want) {
		t.Errorf("unanchored: exit %d, stderr %q; want 1 and the prefix %q", code, errs, want)
	}
	net, err := load(context.Background(), path)
	if err != nil {
		t.Fatal(err)
	}
	runtime.GC()
	// The second node's id key, by a plain text search.
	id := net.Nodes[1].ID
	line := 1 + strings.Count(head[:strings.Index(head, fmt.Sprintf("id = %q", id))], "\n")
	got := placed(net, &graphpde.SingularNodeError{Node: id, Pivot: 0, Scale: 1})
	if want := fmt.Sprintf("%s:%d: ", path, line); !strings.HasPrefix(got.Error(), want) {
		t.Errorf("singular: %q, want the prefix %q", got, want)
	}
}
