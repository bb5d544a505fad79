package main

import (
	"cmp"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/spf13/pflag"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/netfile"
	"github.com/ramify-dev/ramify/montecarlo"
	"github.com/ramify-dev/ramify/vertex"
)

// caution is printed under results of models of heat or electric current
// (graphpde.Physical.Hazard: wires, RC lines) and carried once in their JSON
// output: such results can feed decisions about wire heating and current
// loads.
const caution = "ramify is a modelling aid: it is no substitute for local electrical and building codes or licensed engineering review."

// newFlags returns a flag set for command name that reports its own errors
// on stderr and prints usage with the given examples.
func newFlags(name, synopsis, examples string, stderr io.Writer) *pflag.FlagSet {
	fs := pflag.NewFlagSet("ramify "+name, pflag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.SortFlags = false
	fs.Usage = func() {
		tidyHelp(fs)
		fmt.Fprintf(stderr, "usage: ramify %s\n\n", synopsis)
		fmt.Fprintln(stderr, "flags:")
		fmt.Fprint(stderr, fs.FlagUsages())
		if examples != "" {
			fmt.Fprintln(stderr, "\nexamples:")
			fmt.Fprint(stderr, examples)
		}
	}
	return fs
}

// tidyHelp keeps the flag list readable: a value name instead of a Go type
// name (float64Slice, stringArray) and no second default for list flags
// whose usage states the default, nor "(default [])" or "(default NaN)".
func tidyHelp(fs *pflag.FlagSet) {
	fs.VisitAll(func(f *pflag.Flag) {
		switch f.Value.Type() {
		case "stringArray", "stringSlice", "intSlice": // pflag hides their "[]"
		default:
			if f.DefValue == "[]" || f.DefValue == "NaN" {
				f.DefValue = ""
			}
		}
		if strings.Contains(f.Usage, "`") {
			return
		}
		switch t := f.Value.Type(); {
		case strings.Contains(f.Usage, "POINT"):
			f.Usage = strings.Replace(f.Usage, "POINT", "`POINT`", 1)
		case strings.HasSuffix(t, "Slice") || strings.HasSuffix(t, "Array"):
			f.Usage = "`values` " + f.Usage
		}
	})
}

// parseFlags parses args; it returns (file, code, ok). ok is false when the
// command must return code at once (help asked, or a usage error).
func parseFlags(fs *pflag.FlagSet, args []string, stderr io.Writer, wantFile bool) (string, int, bool) {
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, pflag.ErrHelp) {
			return "", 0, false
		}
		return "", usageFail(stderr, fs.Name(), err), false
	}
	if !wantFile {
		if fs.NArg() > 0 {
			return "", usageFail(stderr, fs.Name(), fmt.Errorf("unexpected argument %q (this command reads no file)", fs.Arg(0))), false
		}
		return "", 0, true
	}
	if fs.NArg() != 1 {
		return "", usageFail(stderr, fs.Name(), fmt.Errorf("need exactly one network file (got %d arguments)", fs.NArg())), false
	}
	return fs.Arg(0), 0, true
}

// exitUsage is the exit status of a command-line error (a bad flag or
// argument), as distinct from 1 for a failed computation or bad input file.
const exitUsage = 2

// usageFail prints a one-line command-line error with a pointer to the
// command's help and returns exitUsage. name is the flag set's name,
// "ramify CMD".
func usageFail(stderr io.Writer, name string, err error) int {
	msg := strings.ReplaceAll(err.Error(), "\n", "; ")
	fmt.Fprintf(stderr, "%s: %s (see '%s --help')\n", name, msg, name)
	return exitUsage
}

// countValue is an int64 flag that also takes an exact integer written as
// a float (1e6, 2.5e5): the natural way to type a particle count.
type countValue int64

func newCount(fs *pflag.FlagSet, name string, value int64, usage string) *int64 {
	p := new(int64)
	*p = value
	fs.Var((*countValue)(p), name, usage)
	return p
}

func (c *countValue) String() string { return strconv.FormatInt(int64(*c), 10) }
func (c *countValue) Type() string   { return "count" }

func (c *countValue) Set(s string) error {
	if n, err := strconv.ParseInt(s, 10, 64); err == nil {
		*c = countValue(n)
		return nil
	}
	f, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return fmt.Errorf("%q is not a whole number", s)
	}
	// 2^63 is exactly representable; every float below it is in range.
	if f != math.Trunc(f) {
		return fmt.Errorf("%q is not a whole number", s)
	}
	if math.Abs(f) >= 1<<63 {
		return fmt.Errorf("%q is out of range (at most %d)", s, int64(math.MaxInt64))
	}
	*c = countValue(int64(f))
	return nil
}

// checkedWriter remembers the first write error of w (a full disk, a closed
// pipe), so that a command whose output was lost does not exit 0.
type checkedWriter struct {
	w   io.Writer
	err error
}

func (c *checkedWriter) Write(p []byte) (int, error) {
	if c.err != nil {
		return 0, c.err
	}
	n, err := c.w.Write(p)
	if err != nil {
		c.err = err
	}
	return n, err
}

// load reads a network file (TOML or CSV); a Ctrl-C while it reads stops
// the command at once (errInterrupted).
func load(ctx context.Context, path string) (*graphpde.Network, error) {
	lines := &netfile.Lines{}
	net, err := interruptible(ctx, func() (*graphpde.Network, error) {
		return netfile.ReadFileOptions(path, &netfile.Options{Context: ctx, Lines: lines})
	})
	if err == nil && len(net.Edges) == 0 {
		return nil, fmt.Errorf("%s: the network has no edges: there is nothing to solve", path)
	}
	if err == nil {
		sources.Store(net, source{file: path, lines: lines})
	}
	return net, err
}

// sources maps every network that load read to its file and the lines of
// its nodes and edges, for errors that name a node (placed).
var sources sync.Map // *graphpde.Network → source

type source struct {
	file  string
	lines *netfile.Lines
}

// placedError is a solver's error about one node with the file and line
// where that node is defined.
type placedError struct {
	file string
	line int
	err  error
}

func (e *placedError) Error() string {
	return fmt.Sprintf("%s:%d: %v", e.file, e.line, e.err)
}

func (e *placedError) Unwrap() error { return e.err }

// placed adds to an error of a singular or unanchored node system of net
// the file and line where the node it names is defined, when load read net
// from a file that records it; other errors pass unchanged.
func placed(net *graphpde.Network, err error) error {
	if err == nil {
		return nil
	}
	var id string
	edge := false
	var sing *graphpde.SingularNodeError
	var loose *graphpde.UnanchoredError
	var model *graphpde.ModelError
	var posErr *montecarlo.PositionError
	switch {
	case errors.As(err, &sing):
		id = sing.Node
	case errors.As(err, &loose) && len(loose.Nodes) > 0:
		id = loose.Nodes[0]
	case errors.As(err, &posErr):
		id = posErr.Node
	case errors.As(err, &model) && (model.Object == "node" || model.Object == "edge"):
		// a refusal by a solver that names a node or edge of the file
		// (evolve --method exact, positions at fixed times, …)
		id, edge = model.ID, model.Object == "edge"
	default:
		return err
	}
	v, ok := sources.Load(net)
	if !ok {
		return err
	}
	src := v.(source)
	ln := src.lines.Node(id)
	if edge {
		ln = src.lines.Edge(id)
	}
	if ln > 0 {
		return &placedError{file: src.file, line: ln, err: err}
	}
	return err
}

// errInterrupted is returned by interruptible when the context is cancelled
// before the work is done.
var errInterrupted = fmt.Errorf("%w before anything finished", errInterruptedAny)

// errInterruptedAny is wrapped by every error that reports a Ctrl-C: fail
// gives them the exit status exitInterrupted.
var errInterruptedAny = errors.New("interrupted")

// interruptible runs f and returns its results, or errInterrupted as soon
// as ctx is cancelled. A cancelled f goes on in the background until it
// returns (the process exits first), so f must not write anything the
// command reads afterwards. Work that can keep partial results (the
// walkers) takes the context itself instead.
func interruptible[T any](ctx context.Context, f func() (T, error)) (T, error) {
	if ctx.Done() == nil {
		v, err := f()
		return v, stoppedErr(ctx, err)
	}
	if ctx.Err() != nil {
		var zero T
		return zero, errInterrupted
	}
	ch := goAsync(f)
	select {
	case o := <-ch:
		return o.v, stoppedErr(ctx, o.err)
	case <-ctx.Done():
		select {
		case o := <-ch:
			return o.v, stoppedErr(ctx, o.err)
		default:
		}
		var zero T
		return zero, errInterrupted
	}
}

// outcome is what a function run by goAsync returned.
type outcome[T any] struct {
	v   T
	err error
}

// goAsync runs f in a new goroutine and returns the channel its outcome
// arrives on (buffered, so the goroutine ends even when nobody reads it).
func goAsync[T any](f func() (T, error)) <-chan outcome[T] {
	ch := make(chan outcome[T], 1)
	go func() {
		v, err := f()
		ch <- outcome[T]{v, err}
	}()
	return ch
}

// inFile is placed, or else err prefixed with the file name.
func inFile(net *graphpde.Network, file string, err error) error {
	if p := placed(net, err); p != err {
		return p
	}
	return fmt.Errorf("%s: %w", file, err)
}

// stoppedErr turns the error of work that ctx stopped (a solver's or a
// reader's error wrapping ctx.Err()) into errInterrupted.
func stoppedErr(ctx context.Context, err error) error {
	if err != nil && ctx.Err() != nil && errors.Is(err, ctx.Err()) {
		return errInterrupted
	}
	return err
}

// stopGrace is how long a command whose work keeps partial results (evolve,
// spectrum) may take after Ctrl-C to hand them over: work that is not at a
// point where it looks at the context (setting up a large grid, a
// factorisation) is abandoned after it, as by interruptible.
const stopGrace = 500 * time.Millisecond

// interruptibleKeep runs f, which stops by itself soon after ctx is
// cancelled and returns what it reached; when it does not return within
// stopGrace of the cancellation, the result is errInterrupted (nothing had
// finished that can be printed).
func interruptibleKeep[T any](ctx context.Context, f func() (T, error)) (T, error) {
	return interruptibleWithin(ctx, stopGrace, f)
}

// interruptibleWithin is interruptibleKeep with a grace period of its own.
func interruptibleWithin[T any](ctx context.Context, grace time.Duration, f func() (T, error)) (T, error) {
	if ctx.Done() == nil {
		return f()
	}
	ch := goAsync(f)
	select {
	case o := <-ch:
		return o.v, o.err
	case <-ctx.Done():
	}
	select {
	case o := <-ch:
		return o.v, o.err
	case <-time.After(grace):
		var zero T
		return zero, errInterrupted
	}
}

// badFlag is usageFail for command cmd: a flag value that parsed but is not
// admissible (exit status 2, with the pointer to --help).
func badFlag(stderr io.Writer, cmd string, err error) int {
	return usageFail(stderr, "ramify "+cmd, err)
}

// fail prints a one-line error and returns the exit status 1 (or
// exitInterrupted for errInterrupted).
func fail(stderr io.Writer, cmd string, err error) int {
	if errors.Is(err, errInterruptedAny) {
		fmt.Fprintf(stderr, "ramify %s: %v\n", cmd, err)
		return exitInterrupted
	}
	msg := strings.ReplaceAll(err.Error(), "\n", "; ")
	fmt.Fprintf(stderr, "ramify %s: %s\n", cmd, msg)
	return 1
}

// writeJSON prints v as one indented JSON object.
func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", " ")
	return enc.Encode(v)
}

// num is a float64 that encodes NaN and ±Inf as JSON null, so that output is
// always valid JSON.
type num float64

func (x num) MarshalJSON() ([]byte, error) {
	f := float64(x)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return appendJSONFloat(make([]byte, 0, 24), f), nil
}

// appendJSONFloat appends f as encoding/json writes a float64 (the shortest
// digits that read back exactly; exponent form below 1e−6 and from 1e21,
// with the exponent's leading zero dropped), without json.Marshal's
// reflection and allocations: the numbers of a large result are written
// hundreds of thousands of times. TestJSONFloat compares the two.
func appendJSONFloat(b []byte, f float64) []byte {
	format := byte('f')
	if abs := math.Abs(f); abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		format = 'e'
	}
	b = strconv.AppendFloat(b, f, format, -1, 64)
	if format == 'e' {
		// e-09 → e-9
		if n := len(b); n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b
}

// isTerminal reports whether w is a character device (a terminal).
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

// parsePoints parses point specifications against net.
func parsePoints(net *graphpde.Network, specs []string) ([]graphpde.Point, error) {
	pts := make([]graphpde.Point, len(specs))
	for i, s := range specs {
		p, err := net.ParsePoint(s)
		if err != nil {
			return nil, err
		}
		pts[i] = p
	}
	return pts, nil
}

// shownRows chooses the rows of a long table: all of idx in their order when
// there are at most tableRows, otherwise the tableRows with the largest key,
// largest first. It returns the chosen rows and the sum of the keys of the
// rows left out.
func shownRows(idx []int, key func(i int) float64) (rows []int, restSum float64) {
	if len(idx) <= tableRows {
		return idx, 0
	}
	rows = slices.Clone(idx)
	slices.SortStableFunc(rows, func(a, b int) int { return cmp.Compare(key(b), key(a)) })
	for _, i := range rows[tableRows:] {
		restSum += key(i)
	}
	return rows[:tableRows], restSum
}

// fixedNodes returns the indices of the fixed nodes of net.
func fixedNodes(net *graphpde.Network) []int {
	var idx []int
	for v, nd := range net.Nodes {
		if nd.Law.Kind == vertex.Fixed {
			idx = append(idx, v)
		}
	}
	return idx
}

// allEdges returns 0, 1, …, len(net.Edges)−1.
func allEdges(net *graphpde.Network) []int {
	idx := make([]int, len(net.Edges))
	for i := range idx {
		idx[i] = i
	}
	return idx
}
