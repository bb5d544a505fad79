package netfile

import (
	"bytes"
	"math"
	"os"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/vertex"
)

// TestJSONAndCSVRoundTrip writes every shipped example as JSON and, where
// the CSV form can hold it, as CSV, reads it back and compares: the same
// nodes and edges with the same values (bit for bit: both writers print the
// shortest decimal that reads back exactly).
func TestJSONAndCSVRoundTrip(t *testing.T) {
	files, _ := os.ReadDir("../../examples")
	n := 0
	for _, f := range files {
		if !strings.HasSuffix(f.Name(), ".toml") {
			continue
		}
		net, err := ReadFile("../../examples/" + f.Name())
		if err != nil {
			t.Fatalf("%s: %v", f.Name(), err)
		}
		var buf bytes.Buffer
		if err := WriteJSON(&buf, net); err != nil {
			t.Fatalf("%s: WriteJSON: %v", f.Name(), err)
		}
		back, err := ReadJSON(&buf, f.Name()+".json")
		if err != nil {
			t.Fatalf("%s: ReadJSON: %v", f.Name(), err)
		}
		if d := diffNetworks(back, net, 0); d != "" {
			t.Errorf("%s: JSON round trip: %s", f.Name(), d)
		}
		buf.Reset()
		if err := WriteCSV(&buf, net); err != nil {
			continue // laws, splits or parameters: the CSV form refuses them
		}
		back, err = ReadCSV(&buf, f.Name()+".csv")
		if err != nil {
			t.Fatalf("%s: ReadCSV: %v", f.Name(), err)
		}
		back.Name, back.Description = net.Name, net.Description // comments in CSV
		if d := diffNetworks(back, net, 0); d != "" {
			t.Errorf("%s: CSV round trip: %s", f.Name(), d)
		}
		n++
	}
	if n < 4 {
		t.Errorf("only %d examples went through the CSV round trip", n)
	}
}

// equivalent3_2 is a Y-shaped dendrite obeying Rall's 3/2-power rule: a
// parent of diameter 2 µm and length 0.5 λ₀ = 500 µm, and two daughters of
// diameter 2^{1/3} µm (1.259921 µm) and length 0.5 λ₁ = 396.850 µm, all
// ends sealed, R_m = 20 000 Ω·cm², R_i = 100 Ω·cm. In SWC the diameter of a
// compartment is the sum of its two samples' radii.
const equivalent3_2 = `# a Y-shaped dendrite
# ramify: axial_resistivity = "100 ohm*cm"
# ramify: membrane_resistance = "20000 ohm*cm^2"
1 3 0 0 0 1.0 -1
2 3 500 0 0 1.0 1
3 3 780.6159 280.6159 0 0.259921049894873 2
4 3 780.6159 -280.6159 0 0.259921049894873 2
`

// TestSWC checks the SWC reader with the equivalent-cylinder check of Rall's
// 3/2-power rule: clamped at 1 V at the root, the tree draws
// G∞(2 µm)·tanh(1) = 2.392619 nS, as one sealed cylinder of electrotonic
// length 1 would (Rall 1962, Ann. N.Y. Acad. Sci. 96:1071, from memory;
// the value evaluates the formula). The daughters' lengths are rounded to
// 0.1 nm, so the tolerance is 1e-6 relative. The SWC network also survives
// a TOML round trip.
func TestSWC(t *testing.T) {
	net, err := ReadSWC(strings.NewReader(equivalent3_2), "y.swc")
	if err != nil {
		t.Fatal(err)
	}
	if len(net.Nodes) != 4 || len(net.Edges) != 3 || net.Physical == nil || net.Physical.Model != "cable" {
		t.Fatalf("read %d nodes, %d edges, physical %+v", len(net.Nodes), len(net.Edges), net.Physical)
	}
	if l := net.Edges[0].Length; math.Abs(l-500e-6) > 1e-18 {
		t.Errorf("trunk length %g m, want 5e-4", l)
	}
	net.Nodes[0].Law = vertex.Law{Kind: vertex.Fixed, Value: 1}
	sol, err := graphpde.Solve(net, nil)
	if err != nil {
		t.Fatal(err)
	}
	if g := sol.Flux[0][0]; math.Abs(g-2.392619e-9) > 1e-6*2.392619e-9 {
		t.Errorf("input conductance %.7g S, want 2.392619e-9", g)
	}
	if d := diffNetworks(roundTrip(t, net), net, 0); d != "" {
		t.Errorf("TOML round trip: %s", d)
	}
	for _, c := range []struct{ src, msg string }{
		{"1 1 0 0 0 5 -1\n2 3 0 0 0 1 1\n", "length 0"},
		{"1 1 0 0 0 5 -1\n2 3 10 0 0 1 7\n", "parent 7 is not in the file"},
		{"1 1 0 0 0 5\n", "want 7 fields"},
		{"1 1 0 0 0 -5 -1\n", "radius -5 must be > 0"},
		{"# ramify: colour = 3\n1 1 0 0 0 5 -1\n", "ramify header"},
	} {
		_, err := ReadSWC(strings.NewReader(c.src), "bad.swc")
		if err == nil || !strings.Contains(err.Error(), c.msg) || !strings.Contains(err.Error(), "bad.swc:") {
			t.Errorf("%q: error %v, want %q with the file and line", c.src, err, c.msg)
		}
	}
}

// TestDOT checks the DOT reader: defaults, edge chains, quoted values with
// units, Graphviz's len and pos, drawing attributes ignored, errors with
// their line, and a TOML round trip.
func TestDOT(t *testing.T) {
	const src = `// a ring main with a tap
graph ringmain {
  label = "ring main"
  node [shape = circle]
  edge [diffusivity = 2, color = blue]
  feed [fixed = 1, pos = "0,0!"]
  feed -- east -- west [len = 3]   /* two edges */
  west -- feed [length = "2500 mm", id = back, decay = 0.5]
  tap [leak = 0.25]
  east -> tap [length = 1, diffusivity = "1e-1"]
  # a comment line
  subgraph cluster0 { east -- tap [length = 2] }
}
`
	net, err := ReadDOT(strings.NewReader(src), "ring.dot")
	if err != nil {
		t.Fatal(err)
	}
	if net.Name != "ring main" || len(net.Nodes) != 4 || len(net.Edges) != 5 {
		t.Fatalf("name %q, %d nodes, %d edges", net.Name, len(net.Nodes), len(net.Edges))
	}
	want := []struct {
		id       string
		L, a, c  float64
		from, to string
	}{
		{"feed-east", 3, 2, 0, "feed", "east"},
		{"east-west", 3, 2, 0, "east", "west"},
		{"back", 2.5, 2, 0.5, "west", "feed"},
		{"east-tap", 1, 0.1, 0, "east", "tap"},
		{"east-tap.2", 2, 2, 0, "east", "tap"},
	}
	for i, w := range want {
		e := net.Edges[i]
		if e.ID != w.id || e.Length != w.L || e.A != w.a || e.C != w.c || net.Nodes[e.From].ID != w.from || net.Nodes[e.To].ID != w.to {
			t.Errorf("edge %d = %s %s→%s L %g a %g c %g, want %+v", i, e.ID, net.Nodes[e.From].ID, net.Nodes[e.To].ID, e.Length, e.A, e.C, w)
		}
	}
	if nd := net.Nodes[0]; nd.Law.Kind != vertex.Fixed || nd.Law.Value != 1 || nd.XY == nil {
		t.Errorf("feed: %+v", nd)
	}
	if got := net.Nodes[3].Law.Leak; got != 0.25 {
		t.Errorf("tap leak %g", got)
	}
	if d := diffNetworks(roundTrip(t, net), net, 0); d != "" {
		t.Errorf("TOML round trip: %s", d)
	}
	for _, c := range []struct {
		src, msg string
		line     int
	}{
		{"graph { a -- b [length = 1, diffusivity = 1, colour = 2] }", `unknown attribute "colour"`, 1},
		{"graph {\n a -- b [length = 1]\n}", `missing key "diffusivity"`, 2},
		{"graph {\n a -- b [length = -1, diffusivity = 1]\n}", "length = -1", 2},
		{"digraph { a -> b", `missing "}"`, 1},
		{"tree { }", "starts with graph or digraph", 1},
		{"graph {\n\n a:n -- b }", "ports", 3},
		// An attribute list left open at the end of the file: the error
		// names the last line with text, not the empty line after it.
		{"graph {\n  a -- b [len=2, \n}\n", "the file ends here", 3},
	} {
		_, err := ReadDOT(strings.NewReader(c.src), "bad.dot")
		fe, ok := err.(*Error)
		if !ok || !strings.Contains(err.Error(), c.msg) || fe.Line != c.line {
			t.Errorf("%q: error %v, want %q at line %d", c.src, err, c.msg, c.line)
		}
	}
}

// TestVincenty checks the geodesic length against the classical test line
// of Vincenty's inverse method, Flinders Peak to Buninyong (Victoria):
// 54 972.271 m on the GRS 80 / WGS 84 ellipsoid (Geoscience Australia's
// worked example of Vincenty's formulae, from memory; GRS 80 and WGS 84
// differ by 0.1 mm in the semi-minor axis, below the printed millimetre).
func TestVincenty(t *testing.T) {
	dms := func(d, m, s float64) float64 { return math.Copysign(math.Abs(d)+m/60+s/3600, d) }
	got, err := vincenty(dms(-37, 57, 3.72030), dms(144, 25, 29.52440), dms(-37, 39, 10.15610), dms(143, 55, 35.38390))
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(got-54972.271) > 1e-3 {
		t.Errorf("Flinders Peak–Buninyong: %.4f m, want 54972.271", got)
	}
	// A quarter meridian, 10 001 965.729 m on WGS 84 (from memory).
	if q, _ := vincenty(0, 0, 90, 0); math.Abs(q-10001965.729) > 1e-3 {
		t.Errorf("quarter meridian %.4f m, want 10001965.729", q)
	}
}

// TestGeoJSON checks the GeoJSON reader: lengths from the geometry
// (geodesic on lon/lat, Euclidean with a projected crs), ends shared by
// coordinate, Point features as nodes, a model in the properties, and a
// TOML round trip.
func TestGeoJSON(t *testing.T) {
	const planar = `{"type": "FeatureCollection",
 "crs": {"type": "name", "properties": {"name": "urn:ogc:def:crs:EPSG::32633"}},
 "features": [
  {"type": "Feature", "geometry": {"type": "Point", "coordinates": [0, 0]}, "properties": {"id": "inlet", "fixed": "5 mg/L"}},
  {"type": "Feature", "geometry": {"type": "LineString", "coordinates": [[0, 0], [30, 40], [30, 100]]},
   "properties": {"id": "main", "channel": {"area": "0.1 m^2", "velocity": "1 m/d", "dispersivity": "1 m"}}},
  {"type": "Feature", "geometry": {"type": "LineString", "coordinates": [[30, 100], [90, 100]]},
   "properties": {"channel": {"area": "0.1 m^2", "velocity": "1 m/d", "dispersivity": "1 m"}}}
 ]}`
	net, err := ReadGeoJSON(strings.NewReader(planar), "pipes.geojson")
	if err != nil {
		t.Fatal(err)
	}
	if len(net.Nodes) != 3 || len(net.Edges) != 2 || net.Edges[0].Length != 110 || net.Edges[1].Length != 60 {
		t.Fatalf("%d nodes, %d edges, lengths %g, %g; want 3, 2, 110, 60", len(net.Nodes), len(net.Edges), net.Edges[0].Length, net.Edges[1].Length)
	}
	if net.Edges[0].To != net.Edges[1].From || net.Nodes[net.Edges[1].To].ID != "p2" || net.Edges[1].ID != "e2" {
		t.Errorf("ends not shared by coordinate: %+v", net.Edges)
	}
	if d := diffNetworks(roundTrip(t, net), net, 0); d != "" {
		t.Errorf("TOML round trip: %s", d)
	}
	// The same through ReadJSON (a .json file holding GeoJSON).
	if back, err := ReadJSON(strings.NewReader(planar), "pipes.json"); err != nil || diffNetworks(back, net, 0) != "" {
		t.Errorf("ReadJSON of GeoJSON: %v", err)
	}
	// Lon/lat: the edge is the Flinders Peak–Buninyong geodesic.
	const lonlat = `{"type": "Feature", "geometry": {"type": "LineString", "coordinates": [[144.42486788888889, -37.95103341666667], [143.92649552777778, -37.65282113888889]]},
	 "properties": {"id": "line", "diffusivity": 1}}`
	net, err = ReadGeoJSON(strings.NewReader(lonlat), "line.geojson")
	if err != nil {
		t.Fatal(err)
	}
	if l := net.Edges[0].Length; math.Abs(l-54972.271) > 2e-3 {
		t.Errorf("geodesic length %.4f m, want 54972.271", l)
	}
	for _, c := range []struct{ src, msg string }{
		{`{"type": "Feature", "geometry": {"type": "LineString", "coordinates": [[0, 0], [500, 0]]}, "properties": {"diffusivity": 1}}`, "not a longitude and latitude"},
		{`{"type": "Feature", "geometry": {"type": "LineString", "coordinates": [[0, 0], [1, 0]]}, "properties": {"diffusivity": 1, "length": 3}}`, `"length" property is not allowed`},
		{`{"type": "Feature", "geometry": {"type": "Polygon", "coordinates": []}}`, "want LineString"},
		{`{"type": "Topology"}`, "want a FeatureCollection"},
	} {
		if _, err := ReadGeoJSON(strings.NewReader(c.src), "bad.geojson"); err == nil || !strings.Contains(err.Error(), c.msg) {
			t.Errorf("%s: error %v, want %q", c.src, err, c.msg)
		}
	}
}

// TestGeoJSONFeatureID: RFC 7946 §3.2 puts a Feature's identifier in its own
// "id" member (a string or a number), not among the properties; the reader
// takes it as the node or edge id (it refused such a Point: "needs an id
// property"). An "id" property still wins, and a Point with neither is an
// error.
func TestGeoJSONFeatureID(t *testing.T) {
	const doc = `{"type": "FeatureCollection",
 "crs": {"type": "name", "properties": {"name": "urn:ogc:def:crs:EPSG::32633"}},
 "features": [
  {"type": "Feature", "id": "well", "geometry": {"type": "Point", "coordinates": [0, 0]}, "properties": {"fixed": 1}},
  {"type": "Feature", "id": 7, "geometry": {"type": "Point", "coordinates": [300, 400]}, "properties": {"fixed": 0}},
  {"type": "Feature", "id": "ignored", "geometry": {"type": "LineString", "coordinates": [[0, 0], [300, 400]]}, "properties": {"id": "f2", "diffusivity": 1}},
  {"type": "Feature", "id": "f1", "geometry": {"type": "LineString", "coordinates": [[0, 0], [300, 0], [300, 400]]}, "properties": {"diffusivity": 2}}
 ]}`
	net, err := ReadGeoJSON(strings.NewReader(doc), "pipes.geojson")
	if err != nil {
		t.Fatal(err)
	}
	if len(net.Nodes) != 2 || net.Nodes[0].ID != "well" || net.Nodes[1].ID != "7" {
		t.Fatalf("nodes %+v, want well and 7", net.Nodes)
	}
	if len(net.Edges) != 2 || net.Edges[0].ID != "f2" || net.Edges[1].ID != "f1" || net.Edges[1].Length != 700 {
		t.Errorf("edges %+v, want f2 and f1 (length 700)", net.Edges)
	}
	const noID = `{"type": "Feature", "geometry": {"type": "Point", "coordinates": [0, 0]}, "properties": {"fixed": 1}}`
	if _, err := ReadGeoJSON(strings.NewReader(noID), "bad.geojson"); err == nil || !strings.Contains(err.Error(), "needs an id") {
		t.Errorf("Point without an id: error %v, want one naming the missing id", err)
	}
}
