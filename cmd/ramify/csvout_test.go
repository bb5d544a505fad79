package main

import (
	"bytes"
	"encoding/csv"
	"math"
	"strconv"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/gen"
)

// TestCSVRowsSameAsEncodingCSV: csvRows writes the bytes encoding/csv's
// Writer writes, for fields that need quotes and fields that do not, and
// for numbers of every kind (the streamed outputs must not change).
func TestCSVRowsSameAsEncodingCSV(t *testing.T) {
	fields := []string{"", "a", "edge-1.b_2", "a,b", `say "x"`, " lead", "\tlead", `\.`, `\.x`, "two\nlines", "cr\r", "\u00a0nbsp", "é"}
	nums := []float64{0, math.Copysign(0, -1), 1, -2.5, 1.0 / 3, 1e-300, 6.02e23, math.NaN(), math.Inf(1), math.Inf(-1), math.MaxFloat64, math.SmallestNonzeroFloat64}
	var want, got bytes.Buffer
	cw := csv.NewWriter(&want)
	rw := newCSVRows(&got)
	for i, f := range fields {
		for j, v := range nums {
			d := 10 + (i+j)%3
			if err := cw.Write([]string{f, strconv.FormatFloat(v, 'g', d, 64), f}); err != nil {
				t.Fatal(err)
			}
			rw.str(f)
			rw.num(v, d)
			rw.str(f)
			rw.end()
		}
	}
	cw.Flush()
	if err := rw.flush(); err != nil {
		t.Fatal(err)
	}
	if got.String() != want.String() {
		t.Fatalf("csvRows wrote\n%q\nencoding/csv\n%q", got.String(), want.String())
	}
}

// TestFieldAndSnapshotsSameAsBefore: the streamed --field and --snapshots
// writers give, byte for byte, what the encoding/csv writers they replace
// gave (kept here as the reference), on a mesh with grid and exact edges
// and on snapshots of it.
func TestFieldAndSnapshotsSameAsBefore(t *testing.T) {
	net := gen.SquareMesh(6, 5)
	for i := range net.Edges {
		if i%2 == 0 {
			net.Edges[i].Cells = 3 + i%4
		}
	}
	sol, err := graphpde.Solve(net, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, step := range []float64{0, 0.3} {
		var want bytes.Buffer
		cw := csv.NewWriter(&want)
		cw.Write([]string{"edge", "x", "u"})
		var pts []graphpde.FieldPoint
		for e := range sol.Net.Edges {
			if step > 0 {
				pts = sampleEvery(pts[:0], sol, e, step)
			} else {
				pts = sol.Sample(pts[:0], e)
			}
			for _, p := range pts {
				cw.Write([]string{sol.Net.Edges[e].ID, strconv.FormatFloat(p.X, 'g', 10, 64), strconv.FormatFloat(p.U, 'g', 12, 64)})
			}
		}
		cw.Flush()
		var got bytes.Buffer
		rows := 0
		if err := writeFieldRows(&got, sol, step, &rows); err != nil {
			t.Fatal(err)
		}
		if got.String() != want.String() {
			t.Fatalf("step %g: field differs from the encoding/csv writer's", step)
		}
		if lines := bytes.Count(want.Bytes(), []byte("\n")) - 1; rows != lines {
			t.Errorf("step %g: counted %d rows, wrote %d", step, rows, lines)
		}
	}

	r := &graphpde.EvolveResult{}
	for k, tm := range []float64{0, 0.125, 1.0 / 3} {
		sn := graphpde.Snapshot{T: tm}
		for e := range net.Edges {
			vals := make([]float64, 2+e%5)
			for i := range vals {
				vals[i] = math.Sin(float64(k+e+i)) / 7
			}
			sn.Edges = append(sn.Edges, vals)
		}
		r.Snapshots = append(r.Snapshots, sn)
	}
	var want bytes.Buffer
	cw := csv.NewWriter(&want)
	cw.Write([]string{"t", "edge", "x", "u"})
	for _, sn := range r.Snapshots {
		for e, vals := range sn.Edges {
			L := net.Edges[e].Length
			n := len(vals) - 1
			for i, v := range vals {
				cw.Write([]string{fmtF(sn.T), net.Edges[e].ID, fmtF(L * float64(i) / float64(n)), fmtF(v)})
			}
		}
	}
	cw.Flush()
	var got bytes.Buffer
	if err := writeSnapshots(&got, net, r); err != nil {
		t.Fatal(err)
	}
	if got.String() != want.String() {
		t.Fatalf("snapshots differ from the encoding/csv writer's:\n%s\n---\n%s", got.String(), want.String())
	}
}
