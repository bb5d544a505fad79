package montecarlo

import (
	"fmt"
	"math"
	"math/bits"
	"slices"
	"strconv"
	"strings"
)

// Shard selects one of Count disjoint parts of a run's walkers
// (Settings.Shard): part Index (from 1 to Count) walks the blocks
// ⌊(Index−1)·B/Count⌋ up to ⌊Index·B/Count⌋ of the run's B blocks, with the
// same random streams as the whole run. The zero value is the whole run.
type Shard struct {
	Index, Count int
}

// Block holds the sums of one block of walkers, enough to fold it into the
// estimates exactly as Run does.
type Block struct {
	K                        int   // block index in the whole run
	N                        int64 // walkers in the block
	Exited, Killed, Censored int64
	Steps                    int64
	MaxWeight                float64
	ValueSum, ValueSq        float64   // Σ and Σ² of the walkers' values
	TimeSum, TimeSq          float64   // Σ and Σ² of the lifetimes of the walkers that exited
	Hits                     []int64   // per node
	OccSum, OccSq            []float64 // per edge
	VisSum, VisSq            []float64 // per node
	Departures               []int64   // per node end (Part.DepOff)
	// Times are the block's lifetimes, sorted, +Inf for censored walkers;
	// only for blocks among the first 2²² walkers (those the quantiles
	// use), nil for the others.
	Times []float64
}

// Part is what a sharded run (Settings.Shard) keeps for Merge: the run's
// identity, the layout of its counters and the sums of its blocks.
type Part struct {
	Shard
	Blocks    int // blocks in the whole run
	Particles int64
	Seed      uint64
	TimeCap   float64
	Quantiles []float64
	Exact     bool
	// Fixed[v] reports a fixed node (whose hits are probabilities);
	// SplitExact as in Result; node v's departure counts are
	// Departures[DepOff[v] : DepOff[v]+Arms[v]].
	Fixed, SplitExact []bool
	// Frozen as in Result (nil in parts written before it existed).
	Frozen       []bool
	Arms, DepOff []int
	Sums         []Block // this part's blocks, in order
}

// blockRange returns the blocks [lo, hi) of shard sh of a run of nblocks.
func (sh Shard) blockRange(nblocks int) (lo, hi int) {
	if sh.Count == 0 {
		return 0, nblocks
	}
	at := func(i int) int {
		h, l := bits.Mul64(uint64(nblocks), uint64(i))
		q, _ := bits.Div64(h, l, uint64(sh.Count))
		return int(q)
	}
	return at(sh.Index - 1), at(sh.Index)
}

func (sh Shard) check() error {
	if sh == (Shard{}) {
		return nil
	}
	if sh.Count < 1 || sh.Index < 1 || sh.Index > sh.Count {
		return &SettingsError{Field: "shard", Value: float64(sh.Index), Reason: fmt.Sprintf("must be a part from 1 to the number of parts (%d), which must be ≥ 1", sh.Count)}
	}
	return nil
}

// MismatchError reports parts that Merge cannot combine: of different runs,
// missing or repeated, or incomplete.
type MismatchError struct {
	Reason string
}

func (e *MismatchError) Error() string { return e.Reason }

// Merge combines the parts of one sharded run (in any order) into the
// result Run returns for the whole run with the same settings: the same
// numbers, bit for bit (Stats.Elapsed is zero,
// Samples are not kept, and the quantiles are those of the first 2²²
// walkers, as Run has them without KeepSamples). Every part 1..Count must be
// given exactly once, complete, and all must agree on the run (particles,
// seed, time cap, quantiles, network layout); otherwise Merge returns a
// *MismatchError naming the first difference. Each part's Result.Status
// must have been Complete; an interrupted part has fewer sums than its
// range and is refused.
func Merge(parts []*Part) (*Result, error) {
	if len(parts) == 0 {
		return nil, &MismatchError{Reason: "no parts to merge"}
	}
	p0 := parts[0]
	byIndex := make([]*Part, p0.Count+1)
	for i, p := range parts {
		if err := p.Shard.check(); err != nil || p.Count == 0 {
			return nil, &MismatchError{Reason: fmt.Sprintf("part %d of the list is not a shard (part %d of %d)", i+1, p.Index, p.Count)}
		}
		if why := sameRun(p0, p); why != "" {
			return nil, &MismatchError{Reason: fmt.Sprintf("part %d/%d and part %d/%d are not of the same run: %s", p0.Index, p0.Count, p.Index, p.Count, why)}
		}
		if byIndex[p.Index] != nil {
			return nil, &MismatchError{Reason: fmt.Sprintf("part %d/%d is given twice", p.Index, p.Count)}
		}
		byIndex[p.Index] = p
		lo, hi := p.Shard.blockRange(p.Blocks)
		if len(p.Sums) != hi-lo {
			return nil, &MismatchError{Reason: fmt.Sprintf("part %d/%d is incomplete (%d of its %d blocks of walkers; was it interrupted?)", p.Index, p.Count, len(p.Sums), hi-lo)}
		}
		for j := range p.Sums {
			if p.Sums[j].K != lo+j {
				return nil, &MismatchError{Reason: fmt.Sprintf("part %d/%d holds block %d where block %d belongs", p.Index, p.Count, p.Sums[j].K, lo+j)}
			}
		}
	}
	var missing []string
	for i := 1; i <= p0.Count; i++ {
		if byIndex[i] == nil {
			missing = append(missing, strconv.Itoa(i))
		}
	}
	if len(missing) > 0 {
		what := "part"
		if len(missing) > 1 {
			what = "parts"
		}
		if len(missing) > 8 {
			missing = append(missing[:8], "…")
		}
		return nil, &MismatchError{Reason: fmt.Sprintf("%s %s of %d missing", what, strings.Join(missing, ", "), p0.Count)}
	}
	nn, ne := len(p0.Fixed), 0
	for _, p := range byIndex[1:] {
		if len(p.Sums) > 0 {
			ne = len(p.Sums[0].OccSum)
			break
		}
	}
	nDep := 0
	for v := range p0.Arms {
		nDep = max(nDep, p0.DepOff[v]+p0.Arms[v])
	}
	f := newFolder(nn, ne, nDep)
	var times []float64
	for _, p := range byIndex[1:] {
		for j := range p.Sums {
			b := &p.Sums[j]
			if len(b.Hits) != nn || len(b.OccSum) != ne || len(b.OccSq) != ne || len(b.VisSum) != nn || len(b.VisSq) != nn || len(b.Departures) != nDep {
				return nil, &MismatchError{Reason: fmt.Sprintf("part %d/%d: block %d does not fit the network's layout", p.Index, p.Count, b.K)}
			}
			f.add(&blockAcc{k: b.K, n: b.N, valS: b.ValueSum, valQ: b.ValueSq, exited: b.Exited, tS: b.TimeSum, tQ: b.TimeSq,
				killed: b.Killed, censored: b.Censored, maxW: b.MaxWeight, steps: b.Steps,
				hits: b.Hits, occS: b.OccSum, occQ: b.OccSq, visS: b.VisSum, visQ: b.VisSq, dep: b.Departures})
			lo := int64(b.K) * BlockSize
			if want := min(lo+b.N, maxInternalTimes) - lo; want > 0 {
				if int64(len(b.Times)) != want {
					return nil, &MismatchError{Reason: fmt.Sprintf("part %d/%d: block %d holds %d lifetimes, not %d", p.Index, p.Count, b.K, len(b.Times), want)}
				}
				times = append(times, b.Times...)
			}
		}
	}
	l := layout{fixed: p0.Fixed, splitExact: p0.SplitExact, frozen: p0.Frozen, arms: p0.Arms, depOff: p0.DepOff, exact: p0.Exact, timeCap: p0.TimeCap}
	res := f.result(&l, p0.Particles, p0.Seed)
	if f.folded < p0.Blocks {
		res.Status = Cancelled
	}
	res.Quantiles = blockQuantiles(times, BlockSize, p0.Quantiles)
	if res.Finished > 0 && f.exited == 0 {
		return res, &CensoredError{Censored: f.censored, Finished: res.Finished, TimeCap: p0.TimeCap}
	}
	return res, nil
}

// sameRun returns why parts a and b are not of one run ("" when they are).
func sameRun(a, b *Part) string {
	switch {
	case a.Count != b.Count:
		return fmt.Sprintf("split into %d and %d parts", a.Count, b.Count)
	case a.Particles != b.Particles:
		return fmt.Sprintf("%d and %d walkers", a.Particles, b.Particles)
	case a.Seed != b.Seed:
		return fmt.Sprintf("seeds %d and %d", a.Seed, b.Seed)
	case a.Blocks != b.Blocks:
		return fmt.Sprintf("%d and %d blocks", a.Blocks, b.Blocks)
	case math.Float64bits(a.TimeCap) != math.Float64bits(b.TimeCap):
		return fmt.Sprintf("time caps %g and %g", a.TimeCap, b.TimeCap)
	case !slices.Equal(a.Quantiles, b.Quantiles):
		return fmt.Sprintf("quantiles %v and %v", a.Quantiles, b.Quantiles)
	case a.Exact != b.Exact || !slices.Equal(a.Fixed, b.Fixed) || !slices.Equal(a.SplitExact, b.SplitExact) || !slices.Equal(a.Frozen, b.Frozen) ||
		!slices.Equal(a.Arms, b.Arms) || !slices.Equal(a.DepOff, b.DepOff):
		return "different networks"
	}
	return ""
}

// layout is what a result needs to know of the model besides the sums.
type layout struct {
	fixed, splitExact []bool
	frozen            []bool
	arms, depOff      []int
	exact             bool
	timeCap           float64
}

func (m *model) layout() layout {
	l := layout{exact: m.exact, timeCap: m.timeCap}
	for _, nd := range m.nodes {
		l.fixed = append(l.fixed, nd.mode == modeFixed)
		l.splitExact = append(l.splitExact, nd.splitExact)
		l.frozen = append(l.frozen, nd.frozen)
		l.arms = append(l.arms, len(nd.arms))
		l.depOff = append(l.depOff, nd.depOff)
	}
	return l
}

// folder merges block sums in block order.
type folder struct {
	val, tim                              moments
	occ, vis                              []moments
	hits, dep                             []int64
	killed, censored, exited, steps, done int64
	maxW                                  float64
	folded                                int // blocks folded
}

func newFolder(nn, ne, nDep int) *folder {
	return &folder{occ: make([]moments, ne), vis: make([]moments, nn), hits: make([]int64, nn), dep: make([]int64, nDep)}
}

func (f *folder) add(b *blockAcc) {
	f.val.addBlock(b.n, b.valS, b.valQ)
	f.tim.addBlock(b.exited, b.tS, b.tQ)
	for e := range f.occ {
		f.occ[e].addBlock(b.n, b.occS[e], b.occQ[e])
	}
	for v := range f.vis {
		f.vis[v].addBlock(b.n, b.visS[v], b.visQ[v])
	}
	for v, h := range b.hits {
		f.hits[v] += h
	}
	for i, d := range b.dep {
		f.dep[i] += d
	}
	f.killed += b.killed
	f.censored += b.censored
	f.maxW = max(f.maxW, b.maxW)
	f.exited += b.exited
	f.steps += b.steps
	f.done += b.n
	f.folded++
}

// result returns the estimates of the folded blocks (no quantiles, samples
// or elapsed time).
func (f *folder) result(l *layout, N int64, seed uint64) *Result {
	done := f.done
	res := &Result{
		Particles: N,
		Finished:  done,
		Seed:      seed,
		Value:     f.val.estimate(done),
		ExitTime:  f.tim.estimate(f.exited),
		Killed:    proportion(f.killed, done),
		Censored:  f.censored,
		MaxWeight: f.maxW,
		TimeCap:   l.timeCap,
	}
	if f.exited > 1 {
		res.ExitSD = math.Sqrt(f.tim.q / float64(f.exited-1))
	}
	nn, ne := len(f.vis), len(f.occ)
	res.Hit = make([]Estimate, nn)
	res.Visits = make([]Estimate, nn)
	res.Departures = make([][]int64, nn)
	res.SplitExact = make([]bool, nn)
	res.Frozen = make([]bool, nn)
	for v := range nn {
		res.SplitExact[v] = l.splitExact[v]
		res.Frozen[v] = v < len(l.frozen) && l.frozen[v]
		if l.fixed[v] {
			res.Hit[v] = proportion(f.hits[v], done)
		}
		res.Visits[v] = f.vis[v].estimate(done)
		if f.vis[v].n > 0 && f.vis[v].mean != 0 && l.arms[v] > 0 {
			off := l.depOff[v]
			res.Departures[v] = slices.Clone(f.dep[off : off+l.arms[v]])
		}
	}
	res.Occupation = make([]Estimate, ne)
	for e := range ne {
		res.Occupation[e] = f.occ[e].estimate(done)
	}
	res.Stats = Stats{Steps: f.steps, Exact: l.exact}
	return res
}

// toBlock copies a block's sums (acc is reused afterwards) with its sorted
// lifetimes ts.
func (b *blockAcc) toBlock(ts []float64) Block {
	return Block{K: b.k, N: b.n, Exited: b.exited, Killed: b.killed, Censored: b.censored, Steps: b.steps,
		MaxWeight: b.maxW, ValueSum: b.valS, ValueSq: b.valQ, TimeSum: b.tS, TimeSq: b.tQ,
		Hits: slices.Clone(b.hits), OccSum: slices.Clone(b.occS), OccSq: slices.Clone(b.occQ),
		VisSum: slices.Clone(b.visS), VisSq: slices.Clone(b.visQ), Departures: slices.Clone(b.dep),
		Times: slices.Clone(ts)}
}
