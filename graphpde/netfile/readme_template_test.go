package netfile

import (
	"os"
	"strings"
	"testing"
)

// TestReadmeTemplate reads the annotated template of the README's section
// "The network file" as written: it must be a valid network file.
func TestReadmeTemplate(t *testing.T) {
	b, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	s := string(b)
	i := strings.Index(s, "## The network file")
	if i < 0 {
		t.Fatal("README has no section \"The network file\"")
	}
	s = s[i:]
	j := strings.Index(s, "```toml\n")
	k := strings.Index(s[j+8:], "```")
	if j < 0 || k < 0 {
		t.Fatal("no TOML template in the section")
	}
	net, err := Read(strings.NewReader(s[j+8:j+8+k]), "README template")
	if err != nil {
		t.Fatalf("the README template does not read: %v", err)
	}
	if len(net.Edges) != 2 || net.Edges[1].Length != 0.25 {
		t.Errorf("template: %d edges, second length %g", len(net.Edges), net.Edges[1].Length)
	}
}
