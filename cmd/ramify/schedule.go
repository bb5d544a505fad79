package main

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// A schedule file drives nodes in time: a CSV table whose header is `t`
// followed by node ids, and whose rows give, at increasing times, the value
// of each listed node — its fixed value for a fixed node, its injection for a
// balance node. Between rows the value is interpolated linearly (or held
// until the next row with steps); before the first row and after the last it
// is held at the nearest row's value.

// applySchedule reads the schedule at path and attaches it to the nodes of
// net (graphpde.NodeTime), replacing their constant fixed value or
// injection. Errors name the file and line.
func applySchedule(net *graphpde.Network, path string, steps bool) error {
	f, err := os.Open(path)
	if err != nil {
		return fmt.Errorf("--schedule: %w", err)
	}
	defer f.Close()
	// A byte-order mark (spreadsheets write one) is not part of the header.
	br := bufio.NewReader(f)
	if b, err := br.Peek(3); err == nil && string(b) == "\uFEFF" {
		br.Discard(3)
	}
	r := csv.NewReader(br)
	r.FieldsPerRecord = 0
	r.TrimLeadingSpace = true
	bad := func(line int, format string, args ...any) error {
		return fmt.Errorf("%s:%d: %s", path, line, fmt.Sprintf(format, args...))
	}
	csvErr := func(err error) error {
		var pe *csv.ParseError
		if errors.As(err, &pe) {
			return bad(pe.Line, "%v", pe.Err)
		}
		return fmt.Errorf("%s: %w", path, err)
	}
	head, err := r.Read()
	if err != nil {
		if errors.Is(err, io.EOF) {
			return fmt.Errorf("%s: empty schedule (want a header t,NODE,...)", path)
		}
		return csvErr(err)
	}
	if len(head) < 2 || strings.TrimSpace(head[0]) != "t" {
		return bad(1, "the header must be t followed by node ids, e.g. t,drive")
	}
	nodes := make([]int, len(head)-1)
	for k, id := range head[1:] {
		id = strings.TrimSpace(id)
		v, ok := net.NodeIndex(id)
		if !ok {
			return bad(1, "no node %q", id)
		}
		for _, p := range nodes[:k] {
			if p == v {
				return bad(1, "node %q listed twice", id)
			}
		}
		nodes[k] = v
	}
	var ts []float64
	vals := make([][]float64, len(nodes))
	for {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return csvErr(err)
		}
		line, _ := r.FieldPos(0)
		num := func(s, what string) (float64, error) {
			v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return 0, bad(line, "%s %q is not a finite number", what, s)
			}
			return v, nil
		}
		t, err := num(rec[0], "time")
		if err != nil {
			return err
		}
		if len(ts) > 0 && !(t > ts[len(ts)-1]) {
			return bad(line, "time %g does not increase (previous %g)", t, ts[len(ts)-1])
		}
		ts = append(ts, t)
		for k := range nodes {
			v, err := num(rec[k+1], "value of "+net.Nodes[nodes[k]].ID)
			if err != nil {
				return err
			}
			vals[k] = append(vals[k], v)
		}
	}
	if len(ts) == 0 {
		return fmt.Errorf("%s: no rows after the header", path)
	}
	for k, v := range nodes {
		tab, err := graphpde.NewTimeTable(ts, vals[k], steps)
		if err != nil {
			return fmt.Errorf("%s: %w", path, err)
		}
		fn := tab.At
		nd := &net.Nodes[v]
		tm := &graphpde.NodeTime{UsesT: true, Src: "schedule " + path, Table: tab}
		if nd.Law.Kind == vertex.Fixed {
			tm.Fixed = fn
			nd.Law.Value = fn(0)
		} else {
			tm.Inject = fn
			nd.Law.Inject = fn(0)
		}
		nd.Time = tm
	}
	return nil
}
