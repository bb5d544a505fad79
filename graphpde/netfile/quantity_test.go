package netfile

import (
	"errors"
	"math"
	"strings"
	"testing"
)

// TestReadQuantities checks that "NUMBER UNIT" strings are converted to SI
// (factors exact by definition, so round-off only) and that a length given
// in a unit of another dimension is an error naming the line and the key.
func TestReadQuantities(t *testing.T) {
	src := twoNodes + `[[edge]]
id = "e"
from = "a"
to = "b"
length = "25 mm"
diffusivity = "2 mm^2/s"
`
	net, err := Read(strings.NewReader(src), "q.toml")
	if err != nil {
		t.Fatal(err)
	}
	e := net.Edges[0]
	if math.Abs(e.Length-0.025) > roundoff || math.Abs(e.A-2e-6) > roundoff*1e-6 {
		t.Errorf("length %g, diffusivity %g; want 0.025, 2e-6", e.Length, e.A)
	}
	fixed := strings.Replace(twoNodes, "fixed = 1", `fixed = "20 degC"`, 1) + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n"
	net, err = Read(strings.NewReader(fixed), "q.toml")
	if err != nil {
		t.Fatal(err)
	}
	if got := net.Nodes[1].Law.Value; math.Abs(got-293.15) > 1e-12 {
		t.Errorf("fixed = 20 degC read as %g K, want 293.15", got)
	}
	bad := strings.Replace(src, `"25 mm"`, `"25 ohm"`, 1)
	_, err = Read(strings.NewReader(bad), "q.toml")
	var fe *Error
	if !errors.As(err, &fe) || fe.Line != 11 || !strings.Contains(err.Error(), "length") || !strings.Contains(err.Error(), "want m") {
		t.Errorf("length in ohm: error %v, want line 11 naming length and the wanted dimension", err)
	}
	unknown := strings.Replace(src, `"25 mm"`, `"25 furlong"`, 1)
	if _, err := Read(strings.NewReader(unknown), "q.toml"); err == nil || !strings.Contains(err.Error(), `unknown unit "furlong"`) {
		t.Errorf("unknown unit: %v", err)
	}
}

// TestCSVQuantities checks "NUMBER UNIT" fields in a CSV edge list: converted
// to SI, and a length in another dimension refused with its line.
func TestCSVQuantities(t *testing.T) {
	src := "kind,id,from,to,length,diffusivity,fixed\nnode,a,,,,,20 degC\nedge,e,a,b,25 mm,2 mm^2/s,\n"
	net, err := ReadCSV(strings.NewReader(src), "q.csv")
	if err != nil {
		t.Fatal(err)
	}
	if e := net.Edges[0]; math.Abs(e.Length-0.025) > roundoff || math.Abs(e.A-2e-6) > 1e-21 || math.Abs(net.Nodes[0].Law.Value-293.15) > 1e-12 {
		t.Errorf("length %g, diffusivity %g, fixed %g", e.Length, e.A, net.Nodes[0].Law.Value)
	}
	bad := strings.Replace(src, "25 mm", "25 ohm", 1)
	if _, err := ReadCSV(strings.NewReader(bad), "q.csv"); err == nil || !strings.Contains(err.Error(), "q.csv:3") || !strings.Contains(err.Error(), "want m") {
		t.Errorf("length in ohm: %v", err)
	}
}
