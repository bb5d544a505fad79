package main

import "testing"

// TestUnmet: bench says "not met" only after a target that the run missed
// (the evolve and spectrum lines said it whatever they measured).
func TestUnmet(t *testing.T) {
	if unmet(false) != "" || unmet(true) == "" {
		t.Errorf("unmet(false) = %q, unmet(true) = %q", unmet(false), unmet(true))
	}
}
