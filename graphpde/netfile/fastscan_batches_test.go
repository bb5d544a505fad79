package netfile

import (
	"fmt"
	"strings"
	"testing"
)

// bigFile is a tree of n edges (several batches of tables) whose at-th
// edge table ends with the text odd.
func bigFile(n, at int, odd string) string {
	var b strings.Builder
	b.WriteString("[network]\nname = \"big\"\n\n[[node]]\nid = \"n0\"\nfixed = 1\n\n")
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&b, "[[node]]\nid = \"n%d\"\nleak = 0.%d\n\n", i, i%7+1)
	}
	for i := 1; i <= n; i++ {
		fmt.Fprintf(&b, "[[edge]]\nid = \"e%d\"\nfrom = \"n%d\"\nto = \"n%d\"\nlength = 1.%d\ndiffusivity = 2\n", i, (i-1)/2, i, i%10)
		if i == at {
			b.WriteString(odd)
		}
		b.WriteString("\n")
	}
	return b.String()
}

// TestFastTablesOddFormsLate: an odd form or a fault in a late batch of a
// large file (after the first tables were read directly, with LF and CRLF
// line ends) gives the network, or the error with its line, of the
// library's decoding, table by table and of the whole file.
func TestFastTablesOddFormsLate(t *testing.T) {
	odds := map[string]string{
		"none":         "",
		"dup":          "length = 3\n",
		"badesc":       "source = \"1\\q\"\n",
		"unknown":      "bogus = 1\n",
		"multiarr":     "weights = [\n1,\n2]\n",
		"inlinesplit":  "drift = 0x10\n",
		"comment hdr":  "# [[node]]\n",
		"str hdr":      "source = \"\"\"\n[[node]]\nid = 'zz'\n\"\"\"\n",
		"unterminated": "source = \"1\n",
		"bom-mid":      "\ufeff\n",
		"tabs":         "\tdecay\t=\t0.5\t# x\n",
		"underscore":   "decay = 1_0.5\n",
		"lit":          "source = '3*2'\n",
		"infs":         "drift = +inf\n",
		"table":        "[defaults]\ncells = 4\n",
		"net again":    "[network]\nname = \"y\"\n",
	}
	for name, odd := range odds {
		for _, crlf := range []bool{false, true} {
			t.Run(fmt.Sprintf("%s-crlf%v", name, crlf), func(t *testing.T) {
				src := bigFile(1000, 990, odd)
				if crlf {
					src = strings.ReplaceAll(src, "\n", "\r\n")
				}
				readBothWays(t, []byte(src))
				sameErrorAsWhole(t, src)
			})
		}
	}
}
