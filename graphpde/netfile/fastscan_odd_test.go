package netfile

import (
	"strings"
	"testing"
)

// TestFastTablesOddForms: odd but valid TOML (comments after values,
// underscores, signed infinities, hex integers, literal strings with
// backslashes, quoted and dotted keys, tables out of order, CRLF, a BOM,
// tabs, trailing commas, non-ASCII and empty strings) and invalid TOML
// (duplicate keys, unterminated strings, bad escapes, control characters)
// read directly give the network, or the error with its file and line,
// that the TOML library gives, table by table and for the whole file at
// once.
func TestFastTablesOddForms(t *testing.T) {
	base := "[[node]]\nid = \"a\"\nfixed = 1\n\n[[node]]\nid = \"b\"\n\n"
	edge := func(body string) string {
		return base + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\n" + body
	}
	cases := map[string]string{
		"comment after":    edge("length = 1.0 # metres\ndiffusivity = 2 #x\n"),
		"underscore":       edge("length = 1_000\ndiffusivity = 1_0.5\n"),
		"underscore frac":  edge("length = 1.000_5\ndiffusivity = 1e1_0\n"),
		"plus inf":         edge("length = +inf\ndiffusivity = 1\n"),
		"nan":              edge("length = nan\ndiffusivity = 1\n"),
		"hex":              edge("length = 0x10\ndiffusivity = 0o7\ncells = 0b101\n"),
		"plus":             edge("length = +1.5\ndiffusivity = +2\n"),
		"exp":              edge("length = 1E2\ndiffusivity = 5e-1\nsource = -0.0\n"),
		"literal bs":       edge("length = 1\ndiffusivity = 'x\\y'\n"),
		"literal ok":       edge("length = '2 m'\ndiffusivity = 1\n"),
		"quoted key":       edge("\"length\" = 1\n'diffusivity' = 1\n"),
		"dotted key":       edge("length = 1\ndiffusivity = 1\nwire.conductivity = 1\n"),
		"out of order":     "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n[[node]]\nid = \"a\"\nfixed = 1\n[[node]]\nid = \"b\"\n[network]\nname = \"x\"\n",
		"crlf":             strings.ReplaceAll(edge("length = 1\r\ndiffusivity = 1 # c\r\n"), "\n", "\r\n"),
		"crlf2":            strings.ReplaceAll(edge("length = 1\ndiffusivity = 1 # c\n"), "\n", "\r\n"),
		"crlf bad":         strings.ReplaceAll(edge("length = 1\ndiffusivity = 1\nbogus = 1\n"), "\n", "\r\n"),
		"bom":              "\ufeff" + edge("length = 1\ndiffusivity = 1\n"),
		"tabs":             edge("\tlength\t=\t1\t\ndiffusivity =\t1\t#\tc\n"),
		"trailing comma":   edge("length = 1\ndiffusivity = 1\nweights = [1, 2,]\n"),
		"trailing comma2":  edge("length = 1\ndiffusivity = 1\nweights = [ 1 , 2 , ]\n"),
		"unicode":          strings.ReplaceAll(edge("length = 1\ndiffusivity = 1\n"), "\"e\"", "\"é\""),
		"unicode name":     "[network]\nname = \"Brücke ∂\"\n" + edge("length = 1\ndiffusivity = 1\n"),
		"empty string":     edge("length = 1\ndiffusivity = 1\n") + "[[node]]\nid = \"\"\n",
		"empty id edge":    base + "[[edge]]\nid = \"\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n",
		"dup key":          edge("length = 1\nlength = 2\ndiffusivity = 1\n"),
		"unterminated":     edge("length = 1\ndiffusivity = \"1\n"),
		"unterminated2":    edge("length = 1\ndiffusivity = '1\n"),
		"bad escape":       edge("length = 1\ndiffusivity = \"1\\q\"\n"),
		"escape u":         edge("length = 1\ndiffusivity = \"\\u0031\"\n"),
		"escape ok":        edge("length = 1\ndiffusivity = \"1\\t\"\n"),
		"empty val":        edge("length = \ndiffusivity = 1\n"),
		"no newline":       edge("length = 1\ndiffusivity = 1"),
		"two on line":      edge("length = 1 diffusivity = 1\n"),
		"leading zero":     edge("length = 01\ndiffusivity = 1\n"),
		"dot start":        edge("length = .5\ndiffusivity = 1\n"),
		"dot end":          edge("length = 5.\ndiffusivity = 1\n"),
		"double under":     edge("length = 1__0\ndiffusivity = 1\n"),
		"trail under":      edge("length = 10_\ndiffusivity = 1\n"),
		"big int":          edge("length = 99999999999999999999\ndiffusivity = 1\n"),
		"big int2":         edge("length = 9223372036854775807\ndiffusivity = 1\n"),
		"big int3":         edge("length = 9007199254740993\ndiffusivity = 1\n"),
		"cells float":      edge("length = 1\ndiffusivity = 1\ncells = 3.0\n"),
		"cells neg":        edge("length = 1\ndiffusivity = 1\ncells = -3\n"),
		"cells str":        edge("length = 1\ndiffusivity = 1\ncells = \"3\"\n"),
		"bool":             edge("length = true\ndiffusivity = 1\n"),
		"date":             edge("length = 1979-05-27\ndiffusivity = 1\n"),
		"nested arr":       edge("length = 1\ndiffusivity = 1\nweights = [[1], 2]\n"),
		"multiline arr":    edge("length = 1\ndiffusivity = 1\nweights = [\n 1, # a\n 2\n]\n"),
		"inline tbl":       base + "[[edge]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n[[node]]\nid = \"c\"\nsplit = { e = 1 }\n",
		"header space":     base + "[[ edge ]]\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n",
		"header comment":   base + "[[edge]] # the edge\nid = \"e\"\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n",
		"key no space":     edge("length=1\ndiffusivity=1\n"),
		"bare key digits":  edge("length = 1\ndiffusivity = 1\n1 = 2\n"),
		"ctrl char":        edge("length = 1\ndiffusivity = \"1\x01\"\n"),
		"del char":         edge("length = 1\ndiffusivity = \"1\x7f\"\n"),
		"lone cr":          edge("length = 1\rdiffusivity = 1\n"),
		"multiline str":    edge("length = 1\ndiffusivity = \"\"\"1\"\"\"\n"),
		"neg zero":         edge("length = 1\ndiffusivity = 1\ndrift = -0\n"),
		"exp big":          edge("length = 1e400\ndiffusivity = 1\n"),
		"exp tiny":         edge("length = 1e-400\ndiffusivity = 1\n"),
		"long frac":        edge("length = 0.1000000000000000055511151231257827\ndiffusivity = 1\n"),
		"many digits":      edge("length = 123456789012345678901234567890.5\ndiffusivity = 1\n"),
		"exp plus":         edge("length = 1e+2\ndiffusivity = 1E-0\n"),
		"frac under exp":   edge("length = 1_1.2_2e1_0\ndiffusivity = 1\n"),
		"table redefined":  edge("length = 1\ndiffusivity = 1\n") + "[network]\nname=\"a\"\n[network]\nname=\"b\"\n",
		"str with hash":    edge("length = 1\ndiffusivity = \"1 # no\"\n"),
		"str with quote":   edge("length = 1\ndiffusivity = \"1\\\"\"\n"),
		"lit with hash":    edge("length = 1\ndiffusivity = '2*3' # c\n"),
		"weights one":      edge("length = 1\ndiffusivity = 1\nweights = [1]\n"),
		"weights mix":      edge("length = 1\ndiffusivity = 1\nweights = [1, \"2\"]\n"),
		"empty arr":        edge("length = 1\ndiffusivity = 1\nweights = []\n"),
		"arr comma only":   edge("length = 1\ndiffusivity = 1\nweights = [,]\n"),
		"arr double comma": edge("length = 1\ndiffusivity = 1\nweights = [1,,2]\n"),
		"id number":        base + "[[edge]]\nid = 5\nfrom = \"a\"\nto = \"b\"\nlength = 1\ndiffusivity = 1\n",
		"ws before key":    edge("   length = 1\n  diffusivity = 1\n"),
		"blank crlf":       edge("length = 1\r\n\r\ndiffusivity = 1\r\n"),
		"comment crlf":     edge("# c\r\nlength = 1\r\ndiffusivity = 1\r\n"),
		"cr in comment":    edge("length = 1 # a\rb\ndiffusivity = 1\n"),
		"nul":              edge("length = 1\ndiffusivity = 1\x00\n"),
		"inf minus":        edge("length = 1\ndiffusivity = 1\ndrift = -inf\n"),
		"tab in string":    edge("length = 1\ndiffusivity = \"2\t*3\"\n"),
	}
	for name, src := range cases {
		t.Run(name, func(t *testing.T) {
			readBothWays(t, []byte(src))
			sameErrorAsWhole(t, src)
		})
	}
}

// sameErrorAsWhole compares reading src table by table with decoding it
// whole (decodeWhole): the same network, or the same error, message and
// line (each file here has a single fault, so both meet the same one).
func sameErrorAsWhole(t *testing.T, src string) {
	t.Helper()
	a, aerr := Read(strings.NewReader(src), "f.toml")
	decodeWhole = true
	b, berr := Read(strings.NewReader(src), "f.toml")
	decodeWhole = false
	switch {
	case (aerr == nil) != (berr == nil):
		t.Fatalf("table by table: %v; whole: %v\n%s", aerr, berr, src)
	case aerr != nil:
		if aerr.Error() != berr.Error() {
			t.Fatalf("errors differ\ntable by table: %v\nwhole:          %v\n%s", aerr, berr, src)
		}
	default:
		if d := diffNetworks(a, b, 0); d != "" {
			t.Fatalf("networks differ: %s\n%s", d, src)
		}
	}
}
