package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestCtrlC sends a real SIGINT to a built ramify during a walk whose
// walkers would live for about 1e300 time units (a leak of 1e−300 and no
// fixed node they can reach; the time cap set as high): the program must print what
// finished, marked partial, and exit 130. Before the walkers read the stop
// flag inside a walk, such a run ignored Ctrl-C for good. The 10 s bound is
// a hang detector, not a speed requirement (generous for a loaded machine);
// the measured delay is logged (a few milliseconds on an idle one).
func TestCtrlC(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary")
	}
	dir := t.TempDir()
	bin := filepath.Join(dir, "ramify")
	build := exec.Command("go", "build", "-o", bin, ".")
	if out, err := build.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	net := writeFile(t, "endless.toml", `[[node]]
id = "pool"
leak = 1e-300

[[node]]
id = "sink"
fixed = 1

[[edge]]
id = "loop"
from = "pool"
to = "pool"
length = 1
diffusivity = 1

[[edge]]
id = "far"
from = "sink"
to = "sink"
length = 1
diffusivity = 1
`)
	for _, c := range []struct {
		name string
		args []string
	}{
		{"walk", []string{"walk", net, "--from", "pool", "--particles", "1e6", "--time-cap", "1e300"}},
		{"walk json", []string{"walk", net, "--from", "pool", "--particles", "1e6", "--time-cap", "1e300", "--json"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			var out, errb bytes.Buffer
			cmd := exec.Command(bin, c.args...)
			cmd.Stdout, cmd.Stderr = &out, &errb
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			time.Sleep(time.Second)
			if err := cmd.Process.Signal(syscall.SIGINT); err != nil {
				t.Fatal(err)
			}
			t0 := time.Now()
			done := make(chan error, 1)
			go func() { done <- cmd.Wait() }()
			var err error
			select {
			case err = <-done:
				t.Logf("exited %v after SIGINT", time.Since(t0))
			case <-time.After(10 * time.Second):
				cmd.Process.Kill()
				t.Fatal("still running 10 s after SIGINT")
			}
			var ee *exec.ExitError
			if !errors.As(err, &ee) || ee.ExitCode() != exitInterrupted {
				t.Fatalf("exit %v, want %d; stderr %s", err, exitInterrupted, errb.String())
			}
			if !strings.Contains(strings.ToLower(out.String()), "partial") || !strings.Contains(errb.String(), "interrupted") {
				t.Errorf("no partial result:\nstdout %s\nstderr %s", out.String(), errb.String())
			}
			if c.args[len(c.args)-1] == "--json" && !json.Valid(out.Bytes()) {
				t.Errorf("the partial result is not valid JSON:\n%s", out.String())
			}
		})
	}
	_ = os.Remove(bin)
}
