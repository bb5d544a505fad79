package main

import (
	"context"
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"text/tabwriter"

	"github.com/ramify-dev/ramify/graphpde"
)

const spectrumExamples = `  ramify spectrum examples/handrail.toml
  ramify spectrum net.toml --count 20 --json
`

type eigenOut struct {
	Value        num  `json:"value"`
	Imag         *num `json:"imag,omitempty"`
	Multiplicity int  `json:"multiplicity"`
	Error        num  `json:"error"`
	TimeConstant num  `json:"time_constant"`
}

type spectrumOut struct {
	Network        string     `json:"network"`
	Eigenvalues    []eigenOut `json:"eigenvalues"`
	RelaxationTime num        `json:"relaxation_time"`
	Method         string     `json:"method"`
	SelfAdjoint    bool       `json:"self_adjoint"`
	Status         string     `json:"status"`
	Factorizations int        `json:"factorizations"`
	Seconds        float64    `json:"seconds"`
}

func runSpectrum(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("spectrum", "spectrum [flags] FILE", spectrumExamples, stderr)
	count := fs.Int("count", 10, "number of smallest eigenvalues (multiplicities counted)")
	method := fs.String("method", "auto", "exact (Wittrick–Williams count; constant coefficients, no drift), grid, or auto")
	cells := fs.Int("cells", 0, "grid cells per edge where the file sets none (grid method; 0: 64)")
	modes := fs.String("modes", "", "write the shapes of the simple real eigenvalues' modes to this CSV file (mode, lambda, edge, x, u; largest |u| = 1)")
	asJSON := fs.Bool("json", false, "print one JSON object on standard output")
	file, code, ok := parseFlags(fs, args, stderr, true)
	if !ok {
		return code
	}
	if *count < 1 {
		return badFlag(stderr, "spectrum", fmt.Errorf("--count %d: must be ≥ 1", *count))
	}
	if *cells < 0 {
		return badFlag(stderr, "spectrum", fmt.Errorf("--cells %d: must be ≥ 0", *cells))
	}
	m, err := graphpde.ParseMethod(*method)
	if err != nil {
		return badFlag(stderr, "spectrum", err)
	}
	if err := checkOutputs([]string{file}, outTarget{flag: "--modes", path: *modes}); err != nil {
		return badFlag(stderr, "spectrum", err)
	}
	net, err := load(ctx, file)
	if err != nil {
		return fail(stderr, "spectrum", err)
	}
	if err := controlRefusal(net, file, "spectrum"); err != nil {
		return fail(stderr, "spectrum", err)
	}
	r, err := interruptibleKeep(ctx, func() (*graphpde.SpectrumResult, error) {
		return graphpde.Spectrum(net, &graphpde.SpectrumSettings{Count: *count, Method: m, Cells: *cells, Context: ctx, Modes: *modes != ""})
	})
	if err != nil {
		return fail(stderr, "spectrum", inFile(net, file, err))
	}
	// Ctrl-C: the eigenvalues bracketed before it are complete and kept
	// (each is counted from below, so none below them is missed).
	interrupted := ctx.Err() != nil
	if interrupted {
		fmt.Fprintf(stderr, "ramify spectrum: interrupted: printing the %s found before\n", plural(len(r.Eigenvalues), "eigenvalue"))
	}
	if *modes != "" {
		if _, err := saveFile(*modes, []string{file}, func(w io.Writer) error { return writeModes(w, net, r) }); err != nil {
			return fail(stderr, "spectrum", err)
		}
	}
	out := spectrumOut{Network: net.Name, RelaxationTime: num(r.RelaxationTime()), Method: r.Method,
		SelfAdjoint: r.SelfAdjoint, Status: r.Status.String(), Factorizations: r.Stats.Factorizations, Seconds: r.Stats.Time.Seconds()}
	if interrupted {
		out.Status = "interrupted"
	}
	for _, e := range r.Eigenvalues {
		o := eigenOut{Value: num(e.Value), Multiplicity: e.Multiplicity, Error: num(e.Err), TimeConstant: num(1 / e.Value)}
		if !r.SelfAdjoint {
			im := num(e.Imag)
			o.Imag = &im
		}
		out.Eigenvalues = append(out.Eigenvalues, o)
	}
	if *asJSON {
		if err := writeJSON(stdout, out); err != nil {
			return fail(stderr, "spectrum", err)
		}
		if interrupted {
			return exitInterrupted
		}
		return 0
	}
	name := net.Name
	if name == "" {
		name = file
	}
	fmt.Fprintf(stdout, "%s: %s, %s; %s\n", name, plural(len(net.Nodes), "node"), plural(len(net.Edges), "edge"), out.Status)
	how := "exact elements, eigenvalues counted (Wittrick–Williams); none missed, multiplicities exact"
	switch {
	case r.Method == "grid" && r.SelfAdjoint:
		how = "finite-volume grid, eigenvalues counted (inertia of K − λM); error: the bracket plus half the change from a grid of half as many cells"
	case r.Method == "grid":
		how = "finite-volume grid, shift-invert Arnoldi (complex eigenvalues possible); error: the Ritz residual plus half the change from a grid of half as many cells"
	}
	fmt.Fprintf(stdout, "method %s: %s; %d factorisations, %.3g s\n\n", r.Method, how, r.Stats.Factorizations, r.Stats.Time.Seconds())
	tw := tabwriter.NewWriter(stdout, 0, 0, 2, ' ', 0)
	if r.SelfAdjoint {
		fmt.Fprintln(tw, "#\tλ (1/time)\tmultiplicity\terror\ttime constant 1/λ")
	} else {
		fmt.Fprintln(tw, "#\tRe λ (1/time)\tIm λ\tmultiplicity\terror\ttime constant 1/Re λ")
	}
	k := 1
	for _, e := range r.Eigenvalues {
		tc := "∞"
		if e.Value > 0 {
			tc = fmt.Sprintf("%.7g", 1/e.Value)
		}
		if r.SelfAdjoint {
			fmt.Fprintf(tw, "%d\t%.10g\t%d\t%.1e\t%s\n", k, e.Value, e.Multiplicity, e.Err, tc)
		} else {
			fmt.Fprintf(tw, "%d\t%.10g\t%.6g\t%d\t%.1e\t%s\n", k, e.Value, e.Imag, e.Multiplicity, e.Err, tc)
		}
		k += e.Multiplicity
	}
	tw.Flush()
	fmt.Fprintln(stdout)
	switch rt := r.RelaxationTime(); {
	case len(r.Eigenvalues) == 0:
		fmt.Fprintln(stdout, "no eigenvalues found")
	case rt > 1e300:
		fmt.Fprintln(stdout, "λ₁ = 0: nothing anchors the network, so its mean value never relaxes; the next time constant is the slowest that does")
	default:
		fmt.Fprintf(stdout, "slowest relaxation time 1/λ₁ = %.7g (disturbances of the steady field decay like e^(−t/%.4g))\n", rt, rt)
	}
	if interrupted {
		fmt.Fprintf(stdout, "interrupted (Ctrl-C): the %s found before\n", plural(len(r.Eigenvalues), "eigenvalue"))
		return exitInterrupted
	}
	return 0
}

// writeModes writes the mode shapes as CSV: one row per sample point.
func writeModes(w io.Writer, net *graphpde.Network, r *graphpde.SpectrumResult) error {
	cw := csv.NewWriter(w)
	if err := cw.Write([]string{"mode", "lambda", "edge", "x", "u"}); err != nil {
		return err
	}
	for _, m := range r.Modes {
		k := 1
		for _, e := range r.Eigenvalues[:m.Index] {
			k += e.Multiplicity
		}
		lam := fmtF(r.Eigenvalues[m.Index].Value)
		for e, vals := range m.Edges {
			L := net.Edges[e].Length
			for i, v := range vals {
				x := L * float64(i) / float64(len(vals)-1)
				if err := cw.Write([]string{strconv.Itoa(k), lam, net.Edges[e].ID, fmtF(x), fmtF(v)}); err != nil {
					return err
				}
			}
		}
	}
	cw.Flush()
	return cw.Error()
}
