package main

import (
	"context"
	"crypto/sha256"
	"encoding/base64"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/spf13/pflag"

	"github.com/ramify-dev/ramify/graphpde"
	"github.com/ramify-dev/ramify/montecarlo"
)

// A sharded walk (walk --shard I/N --json) prints, beside its own estimates,
// a "shard" object: the run's identity (network file hash, start, walker
// flags), what the output needs of the network, and the sums of each of its
// blocks of walkers with their lifetimes. ramify merge folds the blocks of
// all parts in block order, exactly as the unsharded run does, so that the
// merged numbers are the unsharded run's, bit for bit.

// shardRun identifies a run: parts merge only when these agree.
type shardRun struct {
	Network      string  `json:"network_sha256"`
	Start        string  `json:"start"`
	Particles    int64   `json:"particles"`
	Seed         uint64  `json:"seed"`
	TimeCapFlag  float64 `json:"time_cap_flag"`
	Step         float64 `json:"step"`
	StarFraction float64 `json:"star_fraction"`
}

type shardOut struct {
	Index      int        `json:"index"`
	Count      int        `json:"count"`
	Run        shardRun   `json:"run"`
	File       string     `json:"file"`
	Blocks     int        `json:"blocks"`
	TimeCap    floats     `json:"time_cap"`
	Quantiles  []float64  `json:"quantiles"`
	Exact      bool       `json:"exact"`
	Nodes      []string   `json:"nodes"`
	Edges      []string   `json:"edges"`
	Fixed      []int      `json:"fixed"`
	Payoff     floats     `json:"payoff,omitempty"` // lo, hi; absent when unbounded
	SplitExact []bool     `json:"split_exact"`
	Arms       []int      `json:"arms"`
	DepOff     []int      `json:"dep_off"`
	Seconds    float64    `json:"seconds"`
	Sums       []blockOut `json:"sums"`
}

// blockOut is one block's sums. Floats travel as base64 of their IEEE 754
// bits (little-endian), so that they come back exactly, infinities included.
type blockOut struct {
	K          int     `json:"k"`
	N          int64   `json:"n"`
	Exited     int64   `json:"exited"`
	Killed     int64   `json:"killed"`
	Censored   int64   `json:"censored"`
	Steps      int64   `json:"steps"`
	Scalars    floats  `json:"scalars"` // max weight, Σ value, Σ value², Σ τ, Σ τ²
	Hits       []int64 `json:"hits"`
	Occupation vec     `json:"occupation"` // Σ and Σ² per edge, one after the other
	Visits     vec     `json:"visits"`     // Σ and Σ² per node
	Departures []int64 `json:"departures"`
	Times      floats  `json:"times,omitempty"`
}

// floats is a []float64 that JSON carries as base64 of its bits.
type floats []float64

func (f floats) MarshalJSON() ([]byte, error) {
	b := make([]byte, 8*len(f))
	for i, x := range f {
		binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(x))
	}
	return json.Marshal(base64.StdEncoding.EncodeToString(b))
}

func (f *floats) UnmarshalJSON(data []byte) error {
	var s string
	if err := json.Unmarshal(data, &s); err != nil {
		return err
	}
	b, err := base64.StdEncoding.DecodeString(s)
	if err != nil || len(b)%8 != 0 {
		return fmt.Errorf("not base64 of float64s")
	}
	*f = make(floats, len(b)/8)
	for i := range *f {
		(*f)[i] = math.Float64frombits(binary.LittleEndian.Uint64(b[8*i:]))
	}
	return nil
}

// vec is a []float64 that JSON carries exactly, and compactly when most
// entries are zero (a block of walkers on a large network touches few of
// its edges): dense as floats, sparse as {"n": length, "at": indices, "v":
// the non-zero values as floats}. A negative zero counts as non-zero, so
// that every bit comes back.
type vec []float64

type sparseVec struct {
	N  int    `json:"n"`
	At []int  `json:"at"`
	V  floats `json:"v"`
}

func (x vec) MarshalJSON() ([]byte, error) {
	var at []int
	for i, v := range x {
		if math.Float64bits(v) != 0 {
			at = append(at, i)
		}
	}
	// A sparse entry costs about 8 bytes of index and 11 of value; a dense
	// one 11.
	if 19*len(at) >= 11*len(x) {
		return floats(x).MarshalJSON()
	}
	sv := sparseVec{N: len(x), At: at, V: make(floats, len(at))}
	for j, i := range at {
		sv.V[j] = x[i]
	}
	return json.Marshal(sv)
}

func (x *vec) UnmarshalJSON(data []byte) error {
	if len(data) > 0 && data[0] == '"' {
		return (*floats)(x).UnmarshalJSON(data)
	}
	var sv sparseVec
	if err := json.Unmarshal(data, &sv); err != nil {
		return err
	}
	if sv.N < 0 || len(sv.At) != len(sv.V) {
		return fmt.Errorf("a sparse vector with %d indices and %d values", len(sv.At), len(sv.V))
	}
	*x = make(vec, sv.N)
	for j, i := range sv.At {
		if i < 0 || i >= sv.N {
			return fmt.Errorf("index %d outside a vector of %d", i, sv.N)
		}
		(*x)[i] = sv.V[j]
	}
	return nil
}

// parseShard parses I/N.
func parseShard(s string) (montecarlo.Shard, error) {
	i, n, ok := strings.Cut(s, "/")
	a, err1 := strconv.Atoi(i)
	b, err2 := strconv.Atoi(n)
	if !ok || err1 != nil || err2 != nil || b < 1 || a < 1 || a > b {
		return montecarlo.Shard{}, fmt.Errorf("--shard %q: want I/N with 1 ≤ I ≤ N (part I of N), like 3/16", s)
	}
	return montecarlo.Shard{Index: a, Count: b}, nil
}

// fileHash returns the SHA-256 of a file's bytes in hex.
func fileHash(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// shardJSON returns the shard object of a sharded walk's result.
func shardJSON(file string, net *graphpde.Network, wf *walkFlags, r *montecarlo.Result) (*shardOut, error) {
	h, err := fileHash(file)
	if err != nil {
		return nil, err
	}
	p := r.Part
	v := viewOf(net)
	out := &shardOut{
		Index: p.Index, Count: p.Count,
		Run: shardRun{Network: h, Start: *wf.from, Particles: p.Particles, Seed: p.Seed,
			TimeCapFlag: *wf.timeCap, Step: *wf.step, StarFraction: *wf.star},
		File: file, Blocks: p.Blocks, TimeCap: floats{p.TimeCap}, Quantiles: p.Quantiles, Exact: p.Exact,
		Nodes: v.nodes, Edges: v.edges, Fixed: v.fixed, SplitExact: p.SplitExact, Arms: p.Arms, DepOff: p.DepOff,
		Seconds: r.Stats.Elapsed.Seconds(),
		Sums:    make([]blockOut, len(p.Sums)),
	}
	if v.payOK {
		out.Payoff = floats{v.payLo, v.payHi}
	}
	for j, b := range p.Sums {
		o := blockOut{K: b.K, N: b.N, Exited: b.Exited, Killed: b.Killed, Censored: b.Censored, Steps: b.Steps,
			Scalars: floats{b.MaxWeight, b.ValueSum, b.ValueSq, b.TimeSum, b.TimeSq},
			Hits:    b.Hits, Departures: b.Departures, Times: b.Times}
		o.Occupation = append(append(vec{}, b.OccSum...), b.OccSq...)
		o.Visits = append(append(vec{}, b.VisSum...), b.VisSq...)
		out.Sums[j] = o
	}
	return out, nil
}

// part returns the library's part of a shard object read from file.
func (s *shardOut) part(file string) (*montecarlo.Part, error) {
	bad := func(what string) error {
		return fmt.Errorf("%s: the shard object is damaged (%s)", file, what)
	}
	nn, ne := len(s.Nodes), len(s.Edges)
	if len(s.TimeCap) != 1 || len(s.SplitExact) != nn || len(s.Arms) != nn || len(s.DepOff) != nn {
		return nil, bad("node layout")
	}
	fixed := make([]bool, nn)
	for _, v := range s.Fixed {
		if v < 0 || v >= nn {
			return nil, bad("fixed node index")
		}
		fixed[v] = true
	}
	p := &montecarlo.Part{Shard: montecarlo.Shard{Index: s.Index, Count: s.Count}, Blocks: s.Blocks,
		Particles: s.Run.Particles, Seed: s.Run.Seed, TimeCap: s.TimeCap[0], Quantiles: s.Quantiles, Exact: s.Exact,
		Fixed: fixed, SplitExact: s.SplitExact, Arms: s.Arms, DepOff: s.DepOff}
	for _, b := range s.Sums {
		if len(b.Scalars) != 5 || len(b.Occupation) != 2*ne || len(b.Visits) != 2*nn {
			return nil, bad(fmt.Sprintf("block %d", b.K))
		}
		p.Sums = append(p.Sums, montecarlo.Block{K: b.K, N: b.N, Exited: b.Exited, Killed: b.Killed, Censored: b.Censored,
			Steps: b.Steps, MaxWeight: b.Scalars[0], ValueSum: b.Scalars[1], ValueSq: b.Scalars[2], TimeSum: b.Scalars[3],
			TimeSq: b.Scalars[4], Hits: b.Hits, OccSum: b.Occupation[:ne], OccSq: b.Occupation[ne:],
			VisSum: b.Visits[:nn], VisSq: b.Visits[nn:], Departures: b.Departures, Times: b.Times})
	}
	return p, nil
}

const mergeExamples = `  ramify merge part1.json part2.json part3.json --json
  ramify merge parts/*.json
`

func runMerge(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	fs := newFlags("merge", "merge [flags] PART.json…", mergeExamples, stderr)
	asJSON := fs.Bool("json", false, "print one JSON object on standard output, as walk --json does")
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, pflag.ErrHelp) {
			return 0
		}
		return usageFail(stderr, fs.Name(), err)
	}
	if fs.NArg() == 0 {
		return usageFail(stderr, fs.Name(), fmt.Errorf("need the part files of a sharded walk (walk --shard I/N --json)"))
	}
	var parts []*montecarlo.Part
	var first *walkOut
	var firstFile string
	seen := map[int]string{} // part index → its file
	seconds := 0.0
	for _, file := range fs.Args() {
		if ctx.Err() != nil {
			return fail(stderr, "merge", errInterrupted)
		}
		w, err := readPart(file)
		if err != nil {
			return fail(stderr, "merge", err)
		}
		if first == nil {
			first, firstFile = w, file
		} else if why := runDiff(first.Shard, w.Shard); why != "" {
			return fail(stderr, "merge", fmt.Errorf("%s and %s are parts of different runs: %s", firstFile, file, why))
		}
		p, err := w.Shard.part(file)
		if err != nil {
			return fail(stderr, "merge", err)
		}
		if other, ok := seen[p.Index]; ok {
			return fail(stderr, "merge", fmt.Errorf("%s and %s are both part %d/%d", other, file, p.Index, p.Count))
		}
		seen[p.Index] = file
		seconds += w.Shard.Seconds
		parts = append(parts, p)
	}
	res, err := montecarlo.Merge(parts)
	if err != nil {
		return fail(stderr, "merge", err)
	}
	s := first.Shard
	v := &walkView{nodes: s.Nodes, edges: s.Edges, fixed: s.Fixed}
	if len(s.Payoff) == 2 {
		v.payLo, v.payHi, v.payOK = s.Payoff[0], s.Payoff[1], true
	}
	if *asJSON {
		out := walkJSON(v, s.Run.Start, res, first.Notes)
		out.Seconds = seconds
		if err := writeJSON(stdout, out); err != nil {
			return fail(stderr, "merge", err)
		}
		return 0
	}
	res.Stats.Elapsed = time.Duration(seconds * float64(time.Second))
	printWalk(stdout, v, s.Run.Start, res, first.Notes)
	return 0
}

// readPart reads one part file and checks that it is a part.
func readPart(file string) (*walkOut, error) {
	f, err := os.Open(file)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	var w walkOut
	dec := json.NewDecoder(f)
	if err := dec.Decode(&w); err != nil {
		var se *json.SyntaxError
		if errors.As(err, &se) {
			return nil, fmt.Errorf("%s: not JSON at byte %d: %v", file, se.Offset, err)
		}
		return nil, fmt.Errorf("%s: not the JSON of a walk part: %v", file, err)
	}
	if w.Shard == nil {
		return nil, fmt.Errorf("%s: not a part of a sharded walk (no \"shard\" object; parts come from walk --shard I/N --json)", file)
	}
	if w.Partial {
		return nil, fmt.Errorf("%s: part %d/%d was interrupted (%d of its walkers finished): run it again", file, w.Shard.Index, w.Shard.Count, w.Finished)
	}
	return &w, nil
}

// runDiff returns why two parts are not of the same run ("" when they are).
func runDiff(a, b *shardOut) string {
	x, y := a.Run, b.Run
	switch {
	case x.Network != y.Network:
		return "the network files differ (SHA-256 " + x.Network[:min(12, len(x.Network))] + "… and " + y.Network[:min(12, len(y.Network))] + "…)"
	case x.Start != y.Start:
		return fmt.Sprintf("--from %s and --from %s", x.Start, y.Start)
	case x.Particles != y.Particles:
		return fmt.Sprintf("--particles %d and %d", x.Particles, y.Particles)
	case x.Seed != y.Seed:
		return fmt.Sprintf("--seed %d and %d", x.Seed, y.Seed)
	case x.TimeCapFlag != y.TimeCapFlag:
		return fmt.Sprintf("--time-cap %g and %g", x.TimeCapFlag, y.TimeCapFlag)
	case x.Step != y.Step:
		return fmt.Sprintf("--step %g and %g", x.Step, y.Step)
	case x.StarFraction != y.StarFraction:
		return fmt.Sprintf("--star-fraction %g and %g", x.StarFraction, y.StarFraction)
	case a.Count != b.Count:
		return fmt.Sprintf("split into %d and %d parts", a.Count, b.Count)
	}
	return ""
}
