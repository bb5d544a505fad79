package main

import (
	"bufio"
	"context"
	"fmt"
	"io"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/graphpde/netfile"
)

const convertExamples = `  ramify convert cell.swc --to toml > cell.toml
  ramify convert pipes.geojson --to csv
  ramify convert net.dot --to json
`

// runConvert reads a network in any supported format (by the file's
// extension) and writes it to standard output as a network file (toml), a
// CSV edge list (csv) or the JSON form of the network file (json).
func runConvert(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("convert", "convert FILE --to toml|csv|json", convertExamples, stderr)
	to := fs.String("to", "toml", "output format: toml, csv or json")
	file, code, ok := parseFlags(fs, args, stderr, true)
	if !ok {
		return code
	}
	var write func(io.Writer, *graphpde.Network) error
	switch *to {
	case "toml":
		write = netfile.Write
	case "csv":
		write = netfile.WriteCSV
	case "json":
		write = netfile.WriteJSON
	default:
		return badFlag(stderr, "convert", fmt.Errorf("--to %q: want toml, csv or json", *to))
	}
	net, err := load(ctx, file)
	if err != nil {
		return fail(stderr, "convert", err)
	}
	if net.Physical != nil {
		fmt.Fprintf(stderr, "ramify convert: the %s model is written as the raw coefficients it implies (SI units)\n", net.Physical.Model)
	}
	bw := bufio.NewWriter(stdout)
	if err := write(bw, net); err != nil {
		return fail(stderr, "convert", err)
	}
	if err := bw.Flush(); err != nil {
		return fail(stderr, "convert", err)
	}
	return 0
}
