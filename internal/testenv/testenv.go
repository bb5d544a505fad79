// Package testenv holds the switches of the project's test runs.
//
// The default run (go test ./...) stays under about a minute on two cores:
// long statistical harnesses (hundreds of thousands of walkers per case,
// tens of cases) run only when the environment variable RAMIFY_LONG is set
// to 1, as the CI script .ci/run does:
//
//	RAMIFY_LONG=1 go test ./...
package testenv

import (
	"os"
	"testing"
)

// Long reports whether the long harnesses are switched on (RAMIFY_LONG=1).
func Long() bool { return os.Getenv("RAMIFY_LONG") == "1" }

// SkipUnlessLong skips t unless RAMIFY_LONG=1, saying what it would run.
func SkipUnlessLong(t testing.TB, what string) {
	t.Helper()
	if !Long() {
		t.Skip(what + " (a long harness: set RAMIFY_LONG=1 to run it)")
	}
}
