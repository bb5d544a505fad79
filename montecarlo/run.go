package montecarlo

import (
	"context"
	"math"
	"runtime"
	"slices"
	"sort"
	"sync"
	"sync/atomic"
	"time"

	"github.com/ramify-dev/ramify/vertex"
)

// moments accumulates a count, mean and sum of squared deviations, merged
// block by block (Chan, Golub & LeVeque's pairwise update), in block order.
type moments struct {
	n       int64
	mean, q float64
}

// addBlock merges a block of nb values with sum s and sum of squares s2.
func (m *moments) addBlock(nb int64, s, s2 float64) {
	if nb == 0 {
		return
	}
	fb := float64(nb)
	mb := s / fb
	qb := math.Max(0, s2-s*mb)
	if m.n == 0 {
		*m = moments{n: nb, mean: mb, q: qb}
		return
	}
	n := m.n + nb
	delta := mb - m.mean
	m.q += qb + delta*delta*float64(m.n)*fb/float64(n)
	m.mean += delta * fb / float64(n)
	m.n = n
}

// estimate returns the mean and its standard error over total walkers, the
// values not in m counting as zeros.
func (m moments) estimate(total int64) Estimate {
	if total == 0 {
		return Estimate{}
	}
	full := m
	if pad := total - m.n; pad > 0 {
		full.addBlock(pad, 0, 0)
	}
	var se float64
	if total > 1 {
		se = math.Sqrt(full.q / float64(total-1) / float64(total))
	}
	return Estimate{Mean: full.mean, StdErr: se, N: total}
}

func proportion(count, total int64) Estimate {
	if total == 0 {
		return Estimate{}
	}
	p := float64(count) / float64(total)
	var se float64
	if total > 1 {
		se = math.Sqrt(p * (1 - p) / float64(total-1))
	}
	return Estimate{Mean: p, StdErr: se, N: total}
}

func defaults(set *Settings) Settings {
	var s Settings
	if set != nil {
		s = *set
	}
	if s.Particles == 0 {
		s.Particles = 100000
	}
	if s.Workers <= 0 {
		s.Workers = runtime.GOMAXPROCS(0)
	}
	if s.StarFraction == 0 {
		s.StarFraction = 1.0 / 8
	}
	if s.Quantiles == nil {
		s.Quantiles = vertex.DefaultQuantiles()
	}
	return s
}

func checkSettings(s *Settings) error {
	bad := func(field string, v float64, reason string) error {
		return &SettingsError{Field: field, Value: v, Reason: reason}
	}
	switch {
	case s.Particles < 0:
		return bad("particles", float64(s.Particles), "must be ≥ 0")
	case !finite(s.TimeCap) || s.TimeCap < 0:
		return bad("time cap", s.TimeCap, "must be a finite number ≥ 0")
	case !finite(s.Step) || s.Step < 0:
		return bad("step", s.Step, "must be a finite number ≥ 0")
	case !finite(s.StepScale) || s.StepScale < 0:
		return bad("step scale", s.StepScale, "must be a finite number ≥ 0")
	case !finite(s.StarFraction) || s.StarFraction <= 0 || s.StarFraction > 1:
		return bad("star fraction", s.StarFraction, "must be in (0, 1]")
	}
	if err := s.Shard.check(); err != nil {
		return err
	}
	for _, p := range s.Quantiles {
		if !(p >= 0 && p <= 1) {
			return bad("quantile", p, "must be in [0, 1]")
		}
	}
	if s.KeepSamples {
		const sampleBytes = 16
		if s.Particles > MaxSampleBytes/sampleBytes {
			bytes := int64(math.MaxInt64) // saturated: Particles·16 overflows
			if s.Particles <= math.MaxInt64/sampleBytes {
				bytes = s.Particles * sampleBytes
			}
			return &MemoryError{Particles: s.Particles, Bytes: bytes, Limit: MaxSampleBytes}
		}
	}
	return nil
}

// startPlace checks the start point (a *vertex.PointError if it is not on
// the network) and turns a point at an edge's end into its node.
func (m *model) startPlace(s vertex.Point) (place, error) {
	if err := s.Check(len(m.nodes), len(m.edges), func(e int) float64 { return m.edges[e].L }); err != nil {
		return place{}, err
	}
	if s.Node >= 0 {
		return place{node: s.Node, edge: -1}, nil
	}
	ed := &m.edges[s.Edge]
	switch s.X {
	case 0:
		return place{node: ed.from, edge: -1}, nil
	case ed.L:
		return place{node: ed.to, edge: -1}, nil
	}
	return place{node: -1, edge: s.Edge, x: s.X}, nil
}

// Run releases set.Particles walkers at start and returns their estimates.
//
// Walkers are split into blocks of BlockSize; block k draws from
// rand.NewPCG(Seed, k); workers take blocks in order and the block sums are
// merged in block order, so a given Seed gives bit-identical results for any
// Workers (Stats.Elapsed aside). When ctx is cancelled, Run stops within
// about a thousand walker steps per worker (even inside a walker that would
// live for ever) and returns the estimates of the completed prefix of
// blocks with Status Cancelled and no error.
//
// Errors: *vertex.PointError (a start off the network, or the zero Point), *WeightError, *CoefficientError, *NodeError,
// *SettingsError, *MemoryError (before any allocation), and *CensoredError,
// returned with the result, when walkers finished but none exited. Run does
// not modify net or set. Cost: O(steps) time, O(nodes + edges) memory per
// worker, plus 16 bytes per walker with KeepSamples and 8 bytes per walker
// (at most 2²² walkers) for the quantiles.
func Run(ctx context.Context, net Network, start vertex.Point, set *Settings) (*Result, error) {
	t0 := time.Now()
	s := defaults(set)
	if err := checkSettings(&s); err != nil {
		return nil, err
	}
	m, err := prepare(net, &s)
	if err != nil {
		return nil, err
	}
	if m.posT, err = m.checkPositions(&s); err != nil {
		return nil, err
	}
	p, err := m.startPlace(start)
	if err != nil {
		return nil, err
	}
	prepTime := time.Since(t0)
	N := s.Particles
	// Without N + BlockSize − 1, which overflows for N near 2⁶³.
	nblocks := int(N / BlockSize)
	if N%BlockSize != 0 {
		nblocks++
	}

	// This run's blocks [first, last) and walkers [w0, w1): all of them,
	// or a shard's part.
	first, last := s.Shard.blockRange(nblocks)
	w0, w1 := int64(first)*BlockSize, min(int64(last)*BlockSize, N)
	shardN := max(0, w1-w0)

	var positions [][]Position // per record time, per walker
	if len(m.posT) > 0 {
		positions = make([][]Position, len(m.posT))
		for k := range positions {
			positions[k] = make([]Position, shardN)
		}
	}
	var samples []Sample
	var times []float64 // lifetimes of walkers w0, w0+1, … below maxInternalTimes
	if s.KeepSamples {
		samples = make([]Sample, shardN)
	} else {
		times = make([]float64, max(0, min(w1, maxInternalTimes)-w0))
	}
	// blockTimes returns block k's lifetimes, sorted, with +Inf for the
	// censored walkers, or nil beyond the first maxInternalTimes walkers.
	blockTimes := func(k int) []float64 {
		lo := int64(k) * BlockSize
		hi := min(lo+BlockSize, N, maxInternalTimes)
		if hi <= lo {
			return nil
		}
		if samples == nil {
			return times[lo-w0 : hi-w0]
		}
		ts := make([]float64, hi-lo)
		for i := range ts {
			sm := samples[lo-w0+int64(i)]
			ts[i] = sm.Time
			if sm.Node == Censored {
				ts[i] = math.Inf(1)
			}
		}
		slices.Sort(ts)
		return ts
	}

	// The walkers look at this flag, not at ctx, every few steps: an atomic
	// load costs next to nothing.
	var stop atomic.Bool
	defer context.AfterFunc(ctx, func() { stop.Store(true) })()
	if ctx.Err() != nil {
		stop.Store(true)
	}

	workers := min(s.Workers, max(last-first, 1))
	results := make(chan *blockAcc, workers)
	free := make(chan *blockAcc, 2*workers+1)
	var next atomic.Int64
	next.Store(int64(first))
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			w := newWalker(m, &stop)
			for {
				k := int(next.Add(1) - 1)
				if k >= last || stop.Load() {
					return
				}
				var acc *blockAcc
				select {
				case acc = <-free:
				default:
					acc = newBlockAcc(m)
				}
				acc.reset(k)
				w.pcg.Seed(s.Seed, uint64(k))
				lo := int64(k) * BlockSize
				hi := lo + min(BlockSize, N-lo)
				ok := true
				for i := lo; i < hi; i++ {
					if i&255 == 0 && stop.Load() {
						ok = false
						break
					}
					t, fate := w.walk(p, acc)
					if fate == aborted {
						ok = false
						break
					}
					for k := range positions {
						positions[k][i-w0] = w.pos[k]
					}
					if samples != nil {
						samples[i-w0] = Sample{Time: t, Node: fate}
					} else if i-w0 < int64(len(times)) {
						if fate == Censored {
							t = math.NaN()
						}
						times[i-w0] = t
					}
				}
				if !ok {
					return
				}
				if lo-w0 < int64(len(times)) {
					// Sort this block's lifetimes here, in parallel, so
					// that the quantiles need no serial sort at the end
					// (censored walkers, NaN, are put last as +Inf).
					seg := times[lo-w0 : min(hi-w0, int64(len(times)))]
					for j, t := range seg {
						if math.IsNaN(t) {
							seg[j] = math.Inf(1)
						}
					}
					slices.Sort(seg)
				}
				acc.late, w.late = w.late, 0
				results <- acc
			}
		}()
	}
	go func() {
		wg.Wait()
		close(results)
	}()

	l := m.layout()
	f := newFolder(len(m.nodes), len(m.edges), m.nDep)
	var part *Part
	if s.Shard.Count > 0 {
		part = &Part{Shard: s.Shard, Blocks: nblocks, Particles: s.Particles, Seed: s.Seed, TimeCap: m.timeCap,
			Quantiles: slices.Clone(s.Quantiles), Exact: m.exact, Fixed: l.fixed, SplitExact: l.splitExact, Frozen: l.frozen,
			Arms: l.arms, DepOff: l.depOff}
	}
	var late int64
	var blocks []Block
	keepHits := int64(last-first)*int64(len(m.nodes)) <= MaxBlockHits
	pending := make(map[int]*blockAcc)
	nextFold := first
	for acc := range results {
		pending[acc.k] = acc
		for {
			b, ok := pending[nextFold]
			if !ok {
				break
			}
			delete(pending, nextFold)
			nextFold++
			f.add(b)
			late += b.late
			if part != nil {
				part.Sums = append(part.Sums, b.toBlock(blockTimes(b.k)))
			}
			if s.KeepBlocks {
				blocks = append(blocks, b.toPairBlock(keepHits))
			}
			select {
			case free <- b:
			default:
			}
			if s.Recorder != nil {
				s.Recorder.Progress(f.done, shardN)
			}
		}
	}

	res := f.result(&l, N, s.Seed)
	res.Part = part
	res.Blocks = blocks
	done := f.done
	if positions != nil {
		res.PositionTimes = m.posT
		res.Positions = make([][]Position, len(positions))
		for k := range positions {
			res.Positions[k] = positions[k][:done]
		}
		res.PositionLate = late
		res.PositionApprox = m.posApprox
	}
	if nextFold < last {
		res.Status = Cancelled
	}
	if samples != nil {
		res.Samples = samples[:done]
		ts := make([]float64, len(res.Samples))
		for i, sm := range res.Samples {
			ts[i] = sm.Time
			if sm.Node == Censored {
				ts[i] = math.Inf(1)
			}
		}
		res.Quantiles = quantiles(ts, s.Quantiles)
	} else {
		res.Quantiles = blockQuantiles(times[:min(done, int64(len(times)))], BlockSize, s.Quantiles)
	}
	res.Stats.Elapsed = time.Since(t0)
	res.Stats.Prepare = prepTime
	res.Stats.Tables = int(m.tables.n.Load())
	res.Stats.TableTime = time.Duration(m.tables.nano.Load())
	if done > 0 && f.exited == 0 {
		return res, &CensoredError{Censored: f.censored, Finished: done, TimeCap: m.timeCap}
	}
	return res, nil
}

// quantiles reorders ts and returns the empirical quantiles with linear
// interpolation between order statistics (Hyndman and Fan's type 7). ts may
// hold +Inf for censored walkers (longer than any finite lifetime); a
// quantile that needs one of them is NaN: it lies beyond the time cap.
func quantiles(ts []float64, ps []float64) []Quantile {
	if len(ts) == 0 {
		return nil
	}
	// The order statistics needed, ascending; each is found by selection in
	// the part of ts above the previous one, so the whole costs O(n) per
	// quantile at most instead of a full O(n log n) sort, which would be the
	// serial bottleneck of a parallel run.
	need := make([]int, 0, 2*len(ps))
	n := float64(len(ts))
	for _, p := range ps {
		lo := int(math.Floor((n - 1) * p))
		need = append(need, lo, min(lo+1, len(ts)-1))
	}
	slices.Sort(need)
	need = slices.Compact(need)
	from := 0
	for _, k := range need {
		selectKth(ts[from:], k-from)
		from = k
	}
	out := make([]Quantile, len(ps))
	for i, p := range ps {
		h := (n - 1) * p
		lo := int(math.Floor(h))
		hi := min(lo+1, len(ts)-1)
		out[i] = Quantile{P: p, T: interpolate(ts[lo], ts[hi], h-float64(lo))}
	}
	return out
}

// interpolate returns lo + f·(hi − lo), lo itself when f = 0, and NaN when
// an order statistic it needs is +Inf (a censored walker).
func interpolate(lo, hi, f float64) float64 {
	if f == 0 {
		hi = lo
	}
	if math.IsInf(lo, 1) || math.IsInf(hi, 1) {
		return math.NaN()
	}
	return lo + f*(hi-lo)
}

// blockQuantiles returns the same quantiles as quantiles of ts, for ts made
// of consecutive sorted blocks of length block (the last may be shorter) with
// +Inf for censored walkers. Each order
// statistic is found by bisection on the values' bit patterns (non-negative
// float64s order like their bits), counting with a binary search in every
// block: O(64·(len(ts)/block)·log block) per order statistic and no serial
// sort of the whole sample.
func blockQuantiles(ts []float64, block int, ps []float64) []Quantile {
	var blocks [][]float64
	finite := 0
	for lo := 0; lo < len(ts); lo += block {
		b := ts[lo:min(lo+block, len(ts))]
		blocks = append(blocks, b)
		finite += sort.SearchFloat64s(b, math.Inf(1))
	}
	n := len(ts)
	if n == 0 {
		return nil
	}
	// countLE returns the number of finite elements ≤ x.
	countLE := func(x float64) int {
		c := 0
		for _, b := range blocks {
			c += sort.Search(len(b), func(i int) bool { return b[i] > x })
		}
		return c
	}
	// kth returns the k-th smallest finite element (0-based): the least x
	// with countLE(x) > k.
	kth := func(k int) float64 {
		if k >= finite {
			return math.Inf(1)
		}
		lo, hi := uint64(0), math.Float64bits(math.MaxFloat64)
		for lo < hi {
			mid := lo + (hi-lo)/2
			if countLE(math.Float64frombits(mid)) > k {
				hi = mid
			} else {
				lo = mid + 1
			}
		}
		return math.Float64frombits(lo)
	}
	out := make([]Quantile, len(ps))
	for i, p := range ps {
		h := float64(n-1) * p
		lo := int(math.Floor(h))
		hi := min(lo+1, n-1)
		tl := kth(lo)
		th := tl
		if hi != lo {
			th = kth(hi)
		}
		out[i] = Quantile{P: p, T: interpolate(tl, th, h-float64(lo))}
	}
	return out
}

// selectKth reorders a so that a[k] is the element a sorted copy would hold
// there, every element before it is ≤ a[k] and every one after is ≥ a[k]
// (Hoare's selection with a median-of-three pivot; expected O(len(a))). a
// must hold no NaN.
func selectKth(a []float64, k int) {
	lo, hi := 0, len(a)-1
	for hi-lo > 16 {
		mid := lo + (hi-lo)/2
		if a[mid] < a[lo] {
			a[mid], a[lo] = a[lo], a[mid]
		}
		if a[hi] < a[lo] {
			a[hi], a[lo] = a[lo], a[hi]
		}
		if a[hi] < a[mid] {
			a[hi], a[mid] = a[mid], a[hi]
		}
		pivot := a[mid]
		i, j := lo, hi
		for i <= j {
			for a[i] < pivot {
				i++
			}
			for a[j] > pivot {
				j--
			}
			if i <= j {
				a[i], a[j] = a[j], a[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return
		}
	}
	slices.Sort(a[lo : hi+1])
}
