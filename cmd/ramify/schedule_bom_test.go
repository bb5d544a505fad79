package main

import (
	"context"
	"strings"
	"testing"
)

// TestScheduleSpreadsheetForm: a schedule saved by a spreadsheet (a UTF-8
// byte-order mark, CRLF line ends) drives the nodes exactly as the plain
// table does (it was refused: "the header must be t followed by node
// ids"), and a malformed row is reported as FILE:LINE: like every other
// input error (it was "FILE: record on line 2: …").
func TestScheduleSpreadsheetForm(t *testing.T) {
	net := writeFile(t, "rc.toml", "[[node]]\nid = \"drv\"\nfixed = 0.0\n[[node]]\nid = \"end\"\nleak = 0.2\n[[edge]]\nid = \"a\"\nfrom = \"drv\"\nto = \"end\"\nlength = 1.0\ndiffusivity = 1.0\n")
	plain := writeFile(t, "plain.csv", "t,drv\n0,0\n1,1\n")
	sheet := writeFile(t, "sheet.csv", "\uFEFFt,drv\r\n0,0\r\n1,1\r\n")
	args := func(s string) []string {
		return []string{"evolve", net, "--until", "2", "--every", "0.5", "--probe", "end", "--schedule", s, "--method", "exact", "--json"}
	}
	code, want, errs := runCLI(t, context.Background(), args(plain)...)
	if code != 0 {
		t.Fatalf("plain schedule: exit %d: %s", code, errs)
	}
	code, got, errs := runCLI(t, context.Background(), args(sheet)...)
	if code != 0 {
		t.Fatalf("spreadsheet schedule: exit %d: %s", code, errs)
	}
	// the same numbers (the run's time and the file name aside)
	strip := func(s string) string {
		var keep []string
		for _, l := range strings.Split(s, "\n") {
			if !strings.Contains(l, "seconds") && !strings.Contains(l, ".csv") {
				keep = append(keep, l)
			}
		}
		return strings.Join(keep, "\n")
	}
	if strip(got) != strip(want) {
		t.Errorf("spreadsheet schedule gives\n%s\nplain gives\n%s", got, want)
	}
	bad := writeFile(t, "bad.csv", "t,drv\n0,0,\n")
	code, _, errs = runCLI(t, context.Background(), args(bad)...)
	if code != 1 || !strings.Contains(errs, "bad.csv:2: ") {
		t.Errorf("exit %d, stderr %q: want bad.csv:2:", code, errs)
	}
}
