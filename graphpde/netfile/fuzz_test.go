package netfile

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/ramify-dev/ramify/graphpde"
)

// seedFiles adds every file in testdata/netfile with the given extension to
// the fuzz corpus.
func seedFiles(f *testing.F, ext string) {
	paths, err := filepath.Glob(filepath.Join(testdata, "*"+ext))
	if err != nil || len(paths) == 0 {
		f.Fatalf("no %s seed files in %s (%v)", ext, testdata, err)
	}
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
}

// checkOutcome checks what a reader must do with any input: return an *Error
// with a one-line message, or a network that writes and reads back the same.
func checkOutcome(t *testing.T, err error, write func() ([]byte, error)) {
	if err != nil {
		var fe *Error
		if !errors.As(err, &fe) {
			t.Fatalf("error %T is not *Error: %v", err, err)
		}
		if strings.Contains(err.Error(), "\n") {
			t.Fatalf("message spans lines: %q", err.Error())
		}
		return
	}
	if _, err := write(); err != nil {
		t.Fatalf("a network that was read cannot be written back: %v", err)
	}
}

// FuzzRead checks that Read never panics, that its errors are one-line
// *Error values, that whatever it accepts writes and reads back equal, and
// that the direct reading of simple tables changes nothing, nor reading
// the text back in pieces instead of holding it whole.
func FuzzRead(f *testing.F) {
	seedFiles(f, ".toml")
	f.Add([]byte("[[node]]\nid = \"a\"\nsplit = { e = 1 }\n[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"a\"\nlength = 1\ndiffusivity = 1\n"))
	f.Add([]byte("node = [{id = \"a\"}]\n[defaults]\nweights = [1, 2]\n"))
	f.Add([]byte(exprFile))
	f.Fuzz(func(t *testing.T, data []byte) {
		net, err := Read(bytes.NewReader(data), "fuzz.toml")
		sameAsWhole(t, data, net, err)
		readBothWays(t, data)
		readBackSame(t, data)
		checkOutcome(t, err, func() ([]byte, error) {
			var buf bytes.Buffer
			if err := Write(&buf, net); err != nil {
				return nil, err
			}
			back, err := Read(&buf, "back.toml")
			if err != nil {
				t.Fatalf("written file does not read back: %v\n%s", err, buf.String())
			}
			if d := diffNetworks(back, net, roundoff); d != "" {
				t.Fatalf("round trip differs: %s", d)
			}
			return buf.Bytes(), nil
		})
	})
}

// FuzzReadCSV checks that ReadCSV never panics, that its errors are
// one-line *Error values, and that splitting simple lines directly changes
// nothing (the network, or the error with its line).
func FuzzReadCSV(f *testing.F) {
	seedFiles(f, ".csv")
	f.Add([]byte(csvHead + "node,a,,,,,,,,,,1,,,\nedge,e,a,b,1,1,,,,,,,,,\n"))
	for _, c := range csvCases {
		f.Add([]byte(c))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		net, err := ReadCSV(bytes.NewReader(data), "fuzz.csv")
		readCSVBothWays(t, data)
		checkOutcome(t, err, func() ([]byte, error) {
			var buf bytes.Buffer
			return buf.Bytes(), Write(&buf, net)
		})
	})
}

// sameAsWhole checks that reading data table by table (the [[node]] and
// [[edge]] tables decoded one at a time) accepts what decoding the whole
// file at once accepts, and gives an equal network. Both fail on the same
// files, though not always with the same message: a file with several
// errors can be stopped at a different one first (table by table meets the
// other tables' errors before a syntax error in a later [[edge]]).
func sameAsWhole(t *testing.T, data []byte, net *graphpde.Network, err error) {
	t.Helper()
	decodeWhole = true
	wnet, werr := Read(bytes.NewReader(data), "fuzz.toml")
	decodeWhole = false
	switch {
	case (err == nil) != (werr == nil):
		t.Fatalf("table by table: %v; whole: %v", err, werr)
	case err != nil:
	default:
		if d := diffNetworks(net, wnet, 0); d != "" {
			t.Fatalf("networks differ: %s", d)
		}
	}
}
