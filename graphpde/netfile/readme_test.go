package netfile

import (
	"os"
	"strings"
	"testing"
)

// TestReadmeExpressionExamples reads every TOML example of the README's
// section on parameters and expressions, so that the examples stay valid
// files.
func TestReadmeExpressionExamples(t *testing.T) {
	b, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	s := string(b)
	i := strings.Index(s, "### Parameters and expressions")
	if i < 0 {
		t.Fatal("README has no section \"Parameters and expressions\"")
	}
	s = s[i+1:]
	if j := strings.Index(s, "\n### "); j >= 0 {
		s = s[:j]
	}
	n := 0
	for {
		i := strings.Index(s, "```toml\n")
		if i < 0 {
			break
		}
		s = s[i+len("```toml\n"):]
		j := strings.Index(s, "```")
		if _, err := Read(strings.NewReader(s[:j]), "README example"); err != nil {
			t.Errorf("example %d: %v", n+1, err)
		}
		s = s[j:]
		n++
	}
	if n < 5 {
		t.Errorf("found %d examples, want at least 5", n)
	}
}
