package netfile

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"

	"github.com/ramify-dev/ramify/graphpde"
)

// ReadGeoJSON reads a line network from a GeoJSON document (RFC 7946): a
// FeatureCollection (or one Feature) whose LineString and MultiLineString
// features are edges and whose Point features are nodes.
//
// Edges: every LineString (every part of a MultiLineString) is an edge whose
// length is that of its geometry, and whose properties are the edge keys of
// the network file (id, diffusivity, drift, decay, source, capacity, weight,
// weights, cells, or one model table such as "channel": {...}; values with
// units as strings). A "length" property is an error: the geometry gives it.
// The ends are the nodes named by the "from" and "to" properties, or else
// the Point feature at that coordinate, or else a node created there
// (ids "p1", "p2", …). Ids default to "e1", "e2", … in file order.
//
// Nodes: a Point feature's properties are the node keys (id required:
// the Feature's "id" member, RFC 7946 §3.2, or an "id" property;
// fixed, leak, inject, capacity, split, node elements); its coordinate is
// its position.
//
// Coordinates are longitude and latitude in degrees on WGS 84 (RFC 7946
// §4), and lengths are geodesic (Vincenty's inverse formula on the WGS 84
// ellipsoid, Vincenty, Survey Review 23 (1975) 88–93, from memory), unless
// the document carries the pre-RFC "crs" member naming another system, in
// which case coordinates are planar, in metres, and lengths Euclidean.
// Node positions for drawings are the coordinates (lon/lat projected
// equirectangularly about the mean latitude, in metres).
func ReadGeoJSON(r io.Reader, name string) (*graphpde.Network, error) {
	data, err := io.ReadAll(r)
	if err != nil {
		return nil, &Error{File: name, Msg: "cannot read: " + errMsg(err), Err: err}
	}
	var doc struct {
		Type     string          `json:"type"`
		CRS      json.RawMessage `json:"crs"`
		Features []geoFeature    `json:"features"`
		geoFeature
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	if err := dec.Decode(&doc); err != nil {
		return nil, &Error{File: name, Msg: "invalid GeoJSON: " + err.Error(), Err: err}
	}
	switch doc.Type {
	case "FeatureCollection":
	case "Feature":
		doc.Features = []geoFeature{doc.geoFeature}
	default:
		return nil, &Error{File: name, Msg: fmt.Sprintf("GeoJSON: want a FeatureCollection or a Feature, not %q", doc.Type)}
	}
	planar := len(doc.CRS) > 0 && !bytes.Contains(bytes.ToUpper(doc.CRS), []byte("CRS84")) && !bytes.Contains(doc.CRS, []byte("4326"))
	g := &geoBuild{name: name, planar: planar, at: map[string]int{}, ids: map[string]int{}}
	// Points first, so that line ends can find them.
	for i, f := range doc.Features {
		if f.Geometry.Type != "Point" {
			continue
		}
		var c []float64
		if err := json.Unmarshal(f.Geometry.Coordinates, &c); err != nil || len(c) < 2 {
			return nil, g.fail(i, "a Point's coordinates must be [x, y]")
		}
		props := fromJSON(f.props()).(map[string]any)
		id, _ := props["id"].(string)
		if id == "" {
			return nil, g.fail(i, "a Point feature (a node) needs an id (the Feature's \"id\" member or an \"id\" property)")
		}
		if _, dup := g.ids[id]; dup {
			return nil, g.fail(i, fmt.Sprintf("node id %q used twice", id))
		}
		g.ids[id] = len(g.nodes)
		g.at[g.key(c)] = len(g.nodes)
		g.coords = append(g.coords, [2]float64{c[0], c[1]})
		g.nodes = append(g.nodes, props)
	}
	for i, f := range doc.Features {
		var parts [][][]float64
		switch f.Geometry.Type {
		case "Point":
			continue
		case "LineString":
			var line [][]float64
			if err := json.Unmarshal(f.Geometry.Coordinates, &line); err != nil {
				return nil, g.fail(i, "a LineString's coordinates must be [[x, y], ...]")
			}
			parts = [][][]float64{line}
		case "MultiLineString":
			if err := json.Unmarshal(f.Geometry.Coordinates, &parts); err != nil {
				return nil, g.fail(i, "a MultiLineString's coordinates must be [[[x, y], ...], ...]")
			}
		default:
			return nil, g.fail(i, fmt.Sprintf("geometry %q: want LineString, MultiLineString or Point", f.Geometry.Type))
		}
		for k, line := range parts {
			if err := g.edge(i, k, len(parts), line, fromJSON(f.props()).(map[string]any)); err != nil {
				return nil, err
			}
		}
	}
	if len(g.nodes) == 0 {
		return nil, &Error{File: name, Msg: "the document has no Point or line features"}
	}
	// Positions for drawings.
	lat0 := 0.0
	for _, c := range g.coords {
		lat0 += c[1]
	}
	if len(g.coords) > 0 {
		lat0 /= float64(len(g.coords))
	}
	for v, nd := range g.nodes {
		c := g.coords[v]
		if g.planar {
			nd["xy"] = []any{c[0], c[1]}
		} else {
			const r = 6371008.8 // mean Earth radius (m), for the drawing only
			nd["xy"] = []any{r * c[0] * math.Pi / 180 * math.Cos(lat0*math.Pi/180), r * c[1] * math.Pi / 180}
		}
	}
	root := map[string]any{"node": g.nodes, "edge": g.edges}
	rd := &reader{file: name, loc: locate("")}
	return rd.network(root)
}

type geoFeature struct {
	Geometry struct {
		Type        string          `json:"type"`
		Coordinates json.RawMessage `json:"coordinates"`
	} `json:"geometry"`
	Properties json.RawMessage `json:"properties"`
	// ID is the Feature's own "id" member (RFC 7946 §3.2: a string or a
	// number), the id of the node or edge unless the properties name one.
	ID json.RawMessage `json:"id"`
}

// props decodes the properties with numbers kept exact, and adds the
// Feature's "id" member as the "id" property where the properties have none.
func (f geoFeature) props() any {
	m := map[string]any{}
	if len(f.Properties) > 0 && string(f.Properties) != "null" {
		dec := json.NewDecoder(bytes.NewReader(f.Properties))
		dec.UseNumber()
		dec.Decode(&m)
	}
	if _, has := m["id"]; !has && len(f.ID) > 0 {
		var id any
		dec := json.NewDecoder(bytes.NewReader(f.ID))
		dec.UseNumber()
		if dec.Decode(&id) == nil {
			switch v := id.(type) {
			case string:
				m["id"] = v
			case json.Number:
				m["id"] = v.String()
			}
		}
	}
	return m
}

type geoBuild struct {
	name   string
	planar bool
	at     map[string]int // rounded coordinate → node
	ids    map[string]int // node id → index
	nodes  []map[string]any
	coords [][2]float64
	edges  []map[string]any
	auto   int
}

func (g *geoBuild) fail(feature int, msg string) error {
	return &Error{File: g.name, Object: fmt.Sprintf("feature #%d", feature+1), Msg: msg}
}

// key rounds a coordinate to about a millimetre (1e-8° or 1e-3 m).
func (g *geoBuild) key(c []float64) string {
	q := 1e8
	if g.planar {
		q = 1e3
	}
	return strconv.FormatFloat(math.Round(c[0]*q), 'f', 0, 64) + "," + strconv.FormatFloat(math.Round(c[1]*q), 'f', 0, 64)
}

// end returns the node at coordinate c, creating it when needed.
func (g *geoBuild) end(c []float64) int {
	k := g.key(c)
	if v, ok := g.at[k]; ok {
		return v
	}
	g.auto++
	id := "p" + strconv.Itoa(g.auto)
	for {
		if _, taken := g.ids[id]; !taken {
			break
		}
		g.auto++
		id = "p" + strconv.Itoa(g.auto)
	}
	v := len(g.nodes)
	g.ids[id] = v
	g.at[k] = v
	g.coords = append(g.coords, [2]float64{c[0], c[1]})
	g.nodes = append(g.nodes, map[string]any{"id": id})
	return v
}

func (g *geoBuild) edge(feature, part, parts int, line [][]float64, props map[string]any) error {
	if len(line) < 2 {
		return g.fail(feature, "a line needs at least two positions")
	}
	for _, c := range line {
		if len(c) < 2 || math.IsNaN(c[0]) || math.IsNaN(c[1]) {
			return g.fail(feature, "every position must be [x, y]")
		}
		if !g.planar && (math.Abs(c[0]) > 180 || math.Abs(c[1]) > 90) {
			return g.fail(feature, fmt.Sprintf("position [%g, %g] is not a longitude and latitude; a file in planar coordinates must say so with a \"crs\" member", c[0], c[1]))
		}
	}
	if _, ok := props["length"]; ok {
		return g.fail(feature, "a \"length\" property is not allowed: the length comes from the geometry")
	}
	var length float64
	for i := 1; i < len(line); i++ {
		if g.planar {
			length += math.Hypot(line[i][0]-line[i-1][0], line[i][1]-line[i-1][1])
		} else {
			d, err := vincenty(line[i-1][1], line[i-1][0], line[i][1], line[i][0])
			if err != nil {
				return g.fail(feature, err.Error())
			}
			length += d
		}
	}
	e := map[string]any{}
	for k, v := range props {
		e[k] = v
	}
	id, _ := e["id"].(string)
	if id == "" {
		id = "e" + strconv.Itoa(len(g.edges)+1)
	} else if parts > 1 {
		id += "." + strconv.Itoa(part+1)
	}
	e["id"] = id
	ends := [2]int{g.end(line[0]), g.end(line[len(line)-1])}
	for s, k := range []string{"from", "to"} {
		if named, ok := e[k].(string); ok {
			v, known := g.ids[named]
			if !known {
				return g.fail(feature, fmt.Sprintf("%s: no Point feature with id %q", k, named))
			}
			ends[s] = v
		}
	}
	e["from"], e["to"] = g.nodes[ends[0]]["id"], g.nodes[ends[1]]["id"]
	e["length"] = length
	g.edges = append(g.edges, e)
	return nil
}

// WGS 84 ellipsoid (NIMA TR8350.2, from memory).
const (
	wgs84A = 6378137.0
	wgs84F = 1 / 298.257223563
)

// vincenty returns the geodesic distance in metres between two points given
// by latitude and longitude in degrees on the WGS 84 ellipsoid, by
// Vincenty's inverse method (iterating on the longitude on the auxiliary
// sphere to 1e-12 rad, accurate to about 0.1 mm). It fails for nearly
// antipodal points, where the iteration does not converge.
func vincenty(lat1, lon1, lat2, lon2 float64) (float64, error) {
	const rad = math.Pi / 180
	a, f := wgs84A, wgs84F
	b := a * (1 - f)
	L := (lon2 - lon1) * rad
	U1 := math.Atan((1 - f) * math.Tan(lat1*rad))
	U2 := math.Atan((1 - f) * math.Tan(lat2*rad))
	sinU1, cosU1 := math.Sincos(U1)
	sinU2, cosU2 := math.Sincos(U2)
	lambda := L
	var sinSigma, cosSigma, sigma, cos2Alpha, cos2SigmaM float64
	for iter := 0; ; iter++ {
		if iter == 200 {
			return 0, fmt.Errorf("geodesic length: no convergence between nearly antipodal points (%g, %g) and (%g, %g)", lat1, lon1, lat2, lon2)
		}
		sinL, cosL := math.Sincos(lambda)
		sinSigma = math.Hypot(cosU2*sinL, cosU1*sinU2-sinU1*cosU2*cosL)
		if sinSigma == 0 {
			return 0, nil // the same point
		}
		cosSigma = sinU1*sinU2 + cosU1*cosU2*cosL
		sigma = math.Atan2(sinSigma, cosSigma)
		sinAlpha := cosU1 * cosU2 * sinL / sinSigma
		cos2Alpha = 1 - sinAlpha*sinAlpha
		cos2SigmaM = 0
		if cos2Alpha != 0 {
			cos2SigmaM = cosSigma - 2*sinU1*sinU2/cos2Alpha
		}
		C := f / 16 * cos2Alpha * (4 + f*(4-3*cos2Alpha))
		prev := lambda
		lambda = L + (1-C)*f*sinAlpha*(sigma+C*sinSigma*(cos2SigmaM+C*cosSigma*(-1+2*cos2SigmaM*cos2SigmaM)))
		if math.Abs(lambda-prev) < 1e-12 {
			break
		}
	}
	u2 := cos2Alpha * (a*a - b*b) / (b * b)
	A := 1 + u2/16384*(4096+u2*(-768+u2*(320-175*u2)))
	B := u2 / 1024 * (256 + u2*(-128+u2*(74-47*u2)))
	dSigma := B * sinSigma * (cos2SigmaM + B/4*(cosSigma*(-1+2*cos2SigmaM*cos2SigmaM)-
		B/6*cos2SigmaM*(-3+4*sinSigma*sinSigma)*(-3+4*cos2SigmaM*cos2SigmaM)))
	return b * A * (sigma - dSigma), nil
}
