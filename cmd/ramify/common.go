package main

import (
	"cmp"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strings"

	"github.com/spf13/pflag"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/netfile"
	"github.com/ramify-dev/ramify/vertex"
)

// caution is printed with every human-readable result and carried in JSON
// output: results of this tool can feed decisions about wire heating and
// current loads.
const caution = "ramify is a modelling aid: it is no substitute for local electrical and building codes or licensed engineering review."

// newFlags returns a flag set for command name that reports its own errors
// on stderr and prints usage with the given examples.
func newFlags(name, synopsis, examples string, stderr io.Writer) *pflag.FlagSet {
	fs := pflag.NewFlagSet("ramify "+name, pflag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.SortFlags = false
	fs.Usage = func() {
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

// parseFlags parses args; it returns (file, code, ok). ok is false when the
// command must return code at once (help asked, or a usage error).
func parseFlags(fs *pflag.FlagSet, args []string, stderr io.Writer, wantFile bool) (string, int, bool) {
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, pflag.ErrHelp) {
			return "", 0, false
		}
		return "", 2, false
	}
	if !wantFile {
		if fs.NArg() > 0 {
			fmt.Fprintf(stderr, "%s: unexpected argument %q\n", fs.Name(), fs.Arg(0))
			return "", 2, false
		}
		return "", 0, true
	}
	if fs.NArg() != 1 {
		fmt.Fprintf(stderr, "%s: need exactly one network file (got %d arguments); see --help\n", fs.Name(), fs.NArg())
		return "", 2, false
	}
	return fs.Arg(0), 0, true
}

// load reads a network file (TOML or CSV).
func load(path string) (*graphpde.Network, error) {
	return netfile.ReadFile(path)
}

// fail prints a one-line error and returns the exit status 1.
func fail(stderr io.Writer, cmd string, err error) int {
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
	return json.Marshal(f)
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
