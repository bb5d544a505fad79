package netfile

import (
	"strings"
	"testing"

	"github.com/BurntSushi/toml"
)

// TestLocate checks the line the scanner finds for keys after the TOML forms
// that could mislead a line-based scan: strings holding '=', '#', '[' or
// quotes, multi-line strings and arrays, comments, inline tables, quoted and
// dotted keys, array headers and subtables of their last element.
func TestLocate(t *testing.T) {
	src := `# header comment with = and [[edge]]
title = "a = b # not a comment [x]"   # trailing comment
poem = """
line one = 1
[[node]]
"""
lit = '''
id = "fake"
'''
esc = "quote \" = [[edge]] \\"
arr = [
  1, # one
  [2, 3],
  { k = "v" },
]

[[node]]
id = "a"
split = { e1 = 1, "e.2" = 2 }

[[node]]   # second
  id = "b"
  xy = [0,
        1]
  leak = 0.5

[node.split]
e3 = 1

[ network ]
"name" = "n"
sub.deep.key = 1

[[edge]]
id = 'x'
`
	// The scanner assumes the library accepted the file.
	var m map[string]any
	if _, err := toml.Decode(src, &m); err != nil {
		t.Fatalf("test file is not valid TOML: %v", err)
	}
	l := locate(src)
	for _, tc := range []struct {
		path []string
		line int
	}{
		{[]string{"title"}, 2},
		{[]string{"poem"}, 3},
		{[]string{"lit"}, 7},
		{[]string{"esc"}, 10},
		{[]string{"arr"}, 11},
		{[]string{"arr", "#1"}, 13},
		{[]string{"arr", "#2", "k"}, 14},
		{[]string{"node", "#0"}, 17},
		{[]string{"node", "#0", "id"}, 18},
		{[]string{"node", "#0", "split", "e.2"}, 19},
		{[]string{"node", "#1"}, 21},
		{[]string{"node", "#1", "id"}, 22},
		{[]string{"node", "#1", "xy"}, 23},
		{[]string{"node", "#1", "leak"}, 25},
		{[]string{"node", "#1", "split"}, 27},
		{[]string{"node", "#1", "split", "e3"}, 28},
		{[]string{"network", "name"}, 31},
		{[]string{"network", "sub"}, 32},
		{[]string{"network", "sub", "deep", "key"}, 32},
		{[]string{"edge", "#0", "id"}, 35},
		// Missing keys fall back to the enclosing table's header.
		{[]string{"edge", "#0", "length"}, 34},
		{[]string{"node", "#0", "fixed"}, 17},
		{[]string{"nothing"}, 0},
	} {
		if got := l.lineOf(tc.path...); got != tc.line {
			t.Errorf("%s: line %d, want %d", strings.Join(tc.path, "."), got, tc.line)
		}
	}
}

// TestLocateGarbage checks that the scanner stops on input it does not
// understand (it is only run on files the library accepted, but must not
// hang or panic on anything).
func TestLocateGarbage(t *testing.T) {
	for _, src := range []string{
		"", "[", "[[", "a", "a =", `a = "`, `a = """`, "a = '''", "a = [", "a = {", "a = { b",
		"= = =", "]]]", `"\`, "a = [1,,]", "{}", "a.=1", "[a.]\nb=1",
	} {
		locate(src)
	}
}
