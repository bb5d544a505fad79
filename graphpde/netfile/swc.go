package netfile

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/ramify-dev/ramify/graphpde"
)

// ReadSWC reads a neuron morphology in the SWC format (Cannon, Turner, Pyapali
// and Wheal, J. Neurosci. Methods 84 (1998) 49–54, from memory; the format of
// the NeuroMorpho.Org archive): one sample per line,
//
//	n  type  x  y  z  radius  parent
//
// with coordinates and radii in µm, parent −1 for a root, and "#" comment
// lines. Every sample becomes a node (id "n", position (x, y) in metres) and
// every sample with a parent a cable edge from the parent to it (id "c" + n)
// whose length is the distance between the two samples and whose diameter
// is the sum of their radii (the mean diameter of the frustum). A root of
// type 1 (soma) becomes a soma node element, a sphere of diameter 2·radius.
//
// The membrane is not in the file: header comments of the form
//
//	# ramify: axial_resistivity = "100 ohm*cm"
//
// set axial_resistivity, membrane_resistance, membrane_capacitance and
// resting (the cable model's keys, with units); the defaults are
// 100 Ω·cm, 20 000 Ω·cm², 1 µF/cm² and 0 V (common values for passive
// dendrites; common practice, no source). Errors name the file and line.
func ReadSWC(r io.Reader, name string) (*graphpde.Network, error) {
	return readSWC(r, name, nil)
}

// readSWC is ReadSWC with the options of ReadFileOptions (nil: none).
func readSWC(r io.Reader, name string, opt *Options) (*graphpde.Network, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64*1024), 1<<20)
	params := map[string]any{
		"axial_resistivity":    "100 ohm*cm",
		"membrane_resistance":  "20000 ohm*cm^2",
		"membrane_capacitance": "1 uF/cm^2",
		"resting":              "0 V",
	}
	type sample struct {
		id, typ    int
		x, y, z, r float64
		parent     int
		line       int
	}
	var samples []sample
	index := map[int]int{}
	line := 0
	for sc.Scan() {
		line++
		text := strings.TrimSpace(sc.Text())
		if text == "" {
			continue
		}
		if strings.HasPrefix(text, "#") {
			body := strings.TrimSpace(strings.TrimPrefix(text, "#"))
			if rest, ok := strings.CutPrefix(body, "ramify:"); ok {
				k, v, ok := strings.Cut(rest, "=")
				k = strings.TrimSpace(k)
				if _, known := params[k]; !ok || !known {
					return nil, &Error{File: name, Line: line, Msg: fmt.Sprintf("ramify header: want KEY = \"VALUE UNIT\" with KEY one of axial_resistivity, membrane_resistance, membrane_capacitance, resting; got %q", rest)}
				}
				params[k] = strings.Trim(strings.TrimSpace(v), `"`)
			}
			continue
		}
		f := strings.Fields(text)
		if len(f) != 7 {
			return nil, &Error{File: name, Line: line, Msg: fmt.Sprintf("want 7 fields (n type x y z radius parent), got %d", len(f))}
		}
		var s sample
		var err error
		ints := []*int{&s.id, &s.typ, &s.parent}
		for i, k := range []int{0, 1, 6} {
			var v int64
			if v, err = strconv.ParseInt(f[k], 10, 64); err != nil {
				// Some writers print integers as 1.0.
				fv, ferr := strconv.ParseFloat(f[k], 64)
				if ferr != nil || fv != math.Trunc(fv) || math.Abs(fv) > 1e15 {
					return nil, &Error{File: name, Line: line, Msg: fmt.Sprintf("field %d = %q must be an integer", k+1, f[k])}
				}
				v = int64(fv)
			}
			*ints[i] = int(v)
		}
		floats := []*float64{&s.x, &s.y, &s.z, &s.r}
		for i, k := range []int{2, 3, 4, 5} {
			if *floats[i], err = strconv.ParseFloat(f[k], 64); err != nil || math.IsNaN(*floats[i]) || math.IsInf(*floats[i], 0) {
				return nil, &Error{File: name, Line: line, Msg: fmt.Sprintf("field %d = %q must be a finite number", k+1, f[k])}
			}
		}
		if s.r <= 0 {
			return nil, &Error{File: name, Line: line, Msg: fmt.Sprintf("sample %d: radius %g must be > 0", s.id, s.r)}
		}
		if first, dup := index[s.id]; dup {
			return nil, &Error{File: name, Line: line, Msg: fmt.Sprintf("sample %d defined twice (first at line %d)", s.id, samples[first].line)}
		}
		s.line = line
		index[s.id] = len(samples)
		samples = append(samples, s)
	}
	if err := sc.Err(); err != nil {
		return nil, &Error{File: name, Line: line + 1, Msg: "cannot read: " + err.Error(), Err: err}
	}
	if len(samples) == 0 {
		return nil, &Error{File: name, Msg: "the file has no samples (lines n type x y z radius parent)"}
	}
	var nodes, edges []map[string]any
	var nodeLines, edgeLines []int
	for _, s := range samples {
		nodeLines = append(nodeLines, s.line)
		nd := map[string]any{"id": strconv.Itoa(s.id), "xy": []any{s.x * 1e-6, s.y * 1e-6}}
		if s.parent == -1 && s.typ == 1 {
			soma := map[string]any{"diameter": fmt.Sprintf("%v um", 2*s.r)}
			for _, k := range []string{"membrane_resistance", "membrane_capacitance", "resting"} {
				soma[k] = params[k]
			}
			nd["soma"] = soma
		}
		nodes = append(nodes, nd)
		if s.parent == -1 {
			continue
		}
		pi, ok := index[s.parent]
		if !ok {
			return nil, &Error{File: name, Line: s.line, Msg: fmt.Sprintf("sample %d: parent %d is not in the file", s.id, s.parent)}
		}
		p := samples[pi]
		if pi > index[s.id] {
			return nil, &Error{File: name, Line: s.line, Msg: fmt.Sprintf("sample %d: parent %d comes later in the file (SWC lists parents first)", s.id, s.parent)}
		}
		d := math.Sqrt((s.x-p.x)*(s.x-p.x) + (s.y-p.y)*(s.y-p.y) + (s.z-p.z)*(s.z-p.z))
		if d == 0 {
			return nil, &Error{File: name, Line: s.line, Msg: fmt.Sprintf("sample %d sits where its parent %d does: a compartment of length 0", s.id, s.parent)}
		}
		cable := map[string]any{"diameter": fmt.Sprintf("%v um", s.r+p.r)}
		for _, k := range []string{"axial_resistivity", "membrane_resistance", "membrane_capacitance", "resting"} {
			cable[k] = params[k]
		}
		edgeLines = append(edgeLines, s.line)
		edges = append(edges, map[string]any{
			"id": "c" + strconv.Itoa(s.id), "from": strconv.Itoa(p.id), "to": strconv.Itoa(s.id),
			"length": fmt.Sprintf("%v um", d), "cable": cable,
		})
	}
	root := map[string]any{"node": nodes, "edge": edges}
	rd := &reader{file: name, opt: opt, loc: lineLocator(nodes, edges, nodeLines, edgeLines)}
	return rd.network(root)
}
