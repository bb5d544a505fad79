package netfile

import (
	"bytes"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
)

// fuzzFormat checks what every reader of another format must do with any
// input: never panic, fail with a one-line *Error, or give a network that
// writes as a network file and reads back.
func fuzzFormat(f *testing.F, read func(*bytes.Reader) (*graphpde.Network, error)) {
	f.Fuzz(func(t *testing.T, data []byte) {
		net, err := read(bytes.NewReader(data))
		checkOutcome(t, err, func() ([]byte, error) {
			var buf bytes.Buffer
			if err := Write(&buf, net); err != nil {
				return nil, err
			}
			if _, err := Read(bytes.NewReader(buf.Bytes()), "back.toml"); err != nil {
				t.Fatalf("written file does not read back: %v\n%s", err, buf.String())
			}
			return buf.Bytes(), nil
		})
	})
}

// FuzzReadSWC: see fuzzFormat.
func FuzzReadSWC(f *testing.F) {
	f.Add([]byte(equivalent3_2))
	f.Add([]byte("1 1 0 0 0 5 -1\n2 3 10 0 0 1 1\n3 3 10 10 0 1.0 2\n"))
	fuzzFormat(f, func(r *bytes.Reader) (*graphpde.Network, error) { return ReadSWC(r, "fuzz.swc") })
}

// FuzzReadDOT: see fuzzFormat.
func FuzzReadDOT(f *testing.F) {
	f.Add([]byte("graph g { edge [diffusivity = 2]; a [fixed = 1, pos = \"0,0\"]; a -- b -- c [len = 3]; b -> c [length = \"2 mm\", id = x] }"))
	f.Add([]byte("digraph { subgraph s { a -> b [len=1, diffusivity=\"1 + u\"] } /* c */ }"))
	fuzzFormat(f, func(r *bytes.Reader) (*graphpde.Network, error) { return ReadDOT(r, "fuzz.dot") })
}

// FuzzReadGeoJSON: see fuzzFormat.
func FuzzReadGeoJSON(f *testing.F) {
	f.Add([]byte(`{"type": "FeatureCollection", "features": [{"type": "Feature", "geometry": {"type": "Point", "coordinates": [0, 0]}, "properties": {"id": "a", "fixed": 1}}, {"type": "Feature", "geometry": {"type": "LineString", "coordinates": [[0, 0], [0.001, 0.001]]}, "properties": {"diffusivity": 1}}]}`))
	f.Add([]byte(`{"type": "Feature", "geometry": {"type": "MultiLineString", "coordinates": [[[1, 2], [3, 4]], [[3, 4], [5, 5]]]}, "properties": {"id": "m", "diffusivity": "2 m^2/s"}}`))
	fuzzFormat(f, func(r *bytes.Reader) (*graphpde.Network, error) { return ReadGeoJSON(r, "fuzz.geojson") })
}
