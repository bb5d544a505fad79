package compare

import (
	"strings"
	"testing"
)

// TestSentencePosition: a disagreement in the walkers' places at a time is
// explained as places along the network, with the place of the largest gap,
// not as exit times.
func TestSentencePosition(t *testing.T) {
	c := Check{Quantity: "position:t=0.5", Kind: KindLaw, Stat: 0.08, Walker: 0.4, PDE: 0.32, P: 1e-9, Note: "largest gap at a2@0.4"}
	got := sentence(c)
	if !strings.HasPrefix(got, "position:t=0.5: the walkers' places differ from the forward solution by up to 0.08") || !strings.Contains(got, "a2@0.4") || strings.Contains(got, "exit times") {
		t.Errorf("sentence %q", got)
	}
}
