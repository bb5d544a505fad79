package nodesys

import (
	"runtime"
	"slices"
	"sync"
	"sync/atomic"
)

// Parallel supernodal factorisation over independent subtrees.
//
// Supernodes in disjoint subtrees of the supernodal elimination tree never
// update one another, so a set of disjoint subtrees ("tasks", contiguous
// ranges of the postorder) can be factored by several goroutines at once;
// the supernodes above them ("top", their ancestors) follow on the calling
// goroutine. Every link a task makes to a supernode outside itself is kept
// in the order made and replayed, with the task's smallest pivot ratio and
// error, at the place the task holds in the postorder, so the lists of
// descendants, the order of the updates and therefore the factors are the
// same bit for bit as on one goroutine (tested).

// snPlan is the split of the supernodes into tasks and top.
type snPlan struct {
	workers int
	tasks   []snTask // in increasing lo
	top     []int    // the other supernodes, increasing
	// Predicted work (multiply-adds) of the largest worker's tasks, of
	// the top (its time: split supernodes count about half) and of
	// everything, for the tests and the benchmarks.
	maxWork, topWork, work float64
	// split[s]: the updates of top supernode s are shared by two
	// goroutines (snSplit), for the top supernodes with at least
	// splitMinWork multiply-adds.
	split []bool
}

// splitMinWork is the least work (multiply-adds) of a top supernode whose
// updates two goroutines share: a hand-over costs microseconds, this much
// work about a hundred (common practice, no source; a variable for the
// tests).
var splitMinWork = 2e5

// splitShare is the share of a split supernode's work the plan counts as
// time on the calling goroutine: half of the updates, plus its own dense
// factorisation (a tenth or less on meshes; no source, measured on the
// mesh benchmarks' plans).
const splitShare = 0.55

// topCost is the time the plan counts for a top supernode of work w.
func topCost(w float64) float64 {
	if w >= splitMinWork {
		return splitShare * w
	}
	return w
}

// snTask is the subtree of supernodes lo … hi (hi its root) and the worker
// that factors it.
type snTask struct{ lo, hi, worker int }

// parallelMinWork is the least predicted work (multiply-adds) of a
// factorisation that is split over goroutines, a few milliseconds: below
// it the second goroutine's start and the wait for a core on a busy
// machine cost about what they save (measured on the 100×100 mesh, 5·10⁶
// multiply-adds: no gain; a variable so that tests can split small
// systems).
var parallelMinWork = 2e7

// maxWorkers caps the goroutines of one factorisation.
const maxWorkers = 8

// workers is the number of goroutines a factorisation may use.
func (f *Factor[T]) workers() int {
	p := f.set.Workers
	if p <= 0 {
		p = runtime.GOMAXPROCS(0)
	}
	return min(p, maxWorkers)
}

// planParallel splits the supernodes into tasks for the workers, or returns
// nil when one goroutine is to do everything. The work of each supernode is
// counted as the numeric factorisation will do it (the updates it receives
// from its descendants and its own dense factorisation). Starting from the
// roots, the subtree with the most work is replaced by its children (its
// root joins the top) while that lowers the predicted time, the largest
// worker's share plus the top's; the subtrees are dealt to the workers
// largest first, each to the least loaded (longest processing time first:
// R. L. Graham, Bounds on multiprocessing timing anomalies, SIAM J. Appl.
// Math. 17 (1969) 416–429, from memory). Cost O(updates + nsup·log nsup).
func (f *Factor[T]) planParallel(sn *snodes) *snPlan {
	p := f.workers()
	nsup := len(sn.start) - 1
	if p < 2 || nsup < 2 || f.kernel == kernelRef {
		return nil
	}
	lp, li := f.lp, f.li
	// Work per supernode, by replaying the lists of the numeric kernel.
	own := make([]float64, nsup)
	head := make([]int, nsup)
	next := make([]int, nsup)
	npos := make([]int, nsup)
	for s := range head {
		head[s] = -1
	}
	total := 0.0
	for s := 0; s < nsup; s++ {
		f0, e := sn.start[s], sn.start[s+1]
		wd := float64(e - f0)
		r := float64(lp[e] - lp[e-1])
		own[s] = wd*wd*r/2 + wd*wd*wd/6
		for k := head[s]; k >= 0; {
			nk := next[k]
			ek := sn.start[k+1]
			rk := li[lp[ek-1]:lp[ek]]
			q0 := npos[k]
			q1 := q0
			for q1 < len(rk) && rk[q1] < e {
				q1++
			}
			own[s] += float64(len(rk)-q0) * float64(q1-q0) * float64(ek-sn.start[k])
			npos[k] = q1
			if q1 < len(rk) {
				tg := sn.of[rk[q1]]
				next[k], head[tg] = head[tg], k
			}
			k = nk
		}
		if e := sn.start[s+1]; lp[e] > lp[e-1] {
			tg := sn.of[li[lp[e-1]]]
			npos[s] = 0
			next[s], head[tg] = head[tg], s
		}
		total += own[s]
	}
	if total < parallelMinWork {
		return nil
	}
	// Supernodal tree, subtree work and first supernode of each subtree.
	spar := make([]int, nsup)
	sub := slices.Clone(own)
	first := make([]int, nsup)
	for s := range first {
		first[s] = s
	}
	for s := 0; s < nsup; s++ {
		spar[s] = -1
		if pc := f.par[sn.start[s+1]-1]; pc >= 0 {
			spar[s] = sn.of[pc]
		}
	}
	for s := 0; s < nsup; s++ {
		if t := spar[s]; t >= 0 {
			sub[t] += sub[s]
			first[t] = min(first[t], first[s])
		}
	}
	chead := make([]int, nsup)
	cnext := make([]int, nsup)
	for s := range chead {
		chead[s] = -1
	}
	var cand []int
	for s := nsup - 1; s >= 0; s-- {
		if t := spar[s]; t >= 0 {
			cnext[s], chead[t] = chead[t], s
		} else {
			cand = append(cand, s)
		}
	}
	top := 0.0
	// deal returns the largest worker load of cand dealt largest first.
	load := make([]float64, p)
	deal := func(cand []int, assign []int) float64 {
		slices.SortFunc(cand, func(a, b int) int {
			switch {
			case sub[a] > sub[b]:
				return -1
			case sub[a] < sub[b]:
				return 1
			}
			return a - b
		})
		clear(load)
		for i, s := range cand {
			wk := 0
			for k := 1; k < p; k++ {
				if load[k] < load[wk] {
					wk = k
				}
			}
			load[wk] += sub[s]
			if assign != nil {
				assign[i] = wk
			}
		}
		return slices.Max(load)
	}
	best, bestSplits := deal(cand, nil), 0
	var tops []int
	for it := 1; it <= 4*nsup && len(cand) > 0; it++ {
		// Split the largest candidate (cand is sorted by deal).
		s := cand[0]
		cand = cand[1:]
		tops = append(tops, s)
		top += topCost(own[s])
		for c := chead[s]; c >= 0; c = cnext[c] {
			cand = append(cand, c)
		}
		t := deal(cand, nil) + top
		if t < best {
			best, bestSplits = t, it
		}
		if top > best {
			break
		}
	}
	// Redo the best number of splits.
	cand = cand[:0]
	for s := 0; s < nsup; s++ {
		if spar[s] < 0 {
			cand = append(cand, s)
		}
	}
	deal(cand, nil)
	tops = tops[:0]
	top = 0
	for it := 0; it < bestSplits; it++ {
		s := cand[0]
		cand = cand[1:]
		tops = append(tops, s)
		top += topCost(own[s])
		for c := chead[s]; c >= 0; c = cnext[c] {
			cand = append(cand, c)
		}
		deal(cand, nil)
	}
	if len(cand) < 2 || best > 0.9*total {
		return nil
	}
	assign := make([]int, len(cand))
	maxWork := deal(cand, assign)
	pl := &snPlan{workers: p, maxWork: maxWork, topWork: top, work: total}
	for i, s := range cand {
		pl.tasks = append(pl.tasks, snTask{lo: first[s], hi: s, worker: assign[i]})
	}
	slices.SortFunc(pl.tasks, func(a, b snTask) int { return a.lo - b.lo })
	slices.Sort(tops)
	pl.top = tops
	pl.split = make([]bool, nsup)
	for _, s := range tops {
		pl.split[s] = own[s] >= splitMinWork
	}
	return pl
}

// snSplit runs the second half of split updates on a helper goroutine
// during the top phase of a parallel factorisation.
type snSplit[T Scalar] struct {
	f      *Factor[T]
	helper *snCtx[T]
	req    chan snSplitReq
	done   chan struct{}
}

type snSplitReq struct {
	s, f0, e int
	rel      []int
	sym      bool
}

// newSNSplit starts the helper goroutine; stop ends it.
func newSNSplit[T Scalar](f *Factor[T], helper *snCtx[T]) *snSplit[T] {
	h := &snSplit[T]{f: f, helper: helper, req: make(chan snSplitReq), done: make(chan struct{})}
	go func() {
		for r := range h.req {
			f.snUpdatesPart(h.helper, r.s, r.rel, r.sym, r.f0, r.e, 1, 2)
			h.done <- struct{}{}
		}
	}()
	return h
}

func (h *snSplit[T]) stop() { close(h.req) }

// updates applies every update waiting for supernode s (columns f0 … e−1,
// row positions rel): the target column pairs 0, 2, 4, … here, the others
// on the helper.
func (h *snSplit[T]) updates(s int, rel []int, sym bool, f0, e int, c *snCtx[T]) {
	h.req <- snSplitReq{s: s, f0: f0, e: e, rel: rel, sym: sym}
	h.f.snUpdatesPart(c, s, rel, sym, f0, e, 0, 2)
	<-h.done
}

// snUpdatesPart applies the updates waiting on supernode s's list to the
// target columns of part (snUpdate), without changing the list.
func (f *Factor[T]) snUpdatesPart(c *snCtx[T], s int, rel []int, sym bool, f0, e, part, parts int) {
	sn, w := f.sn, f.snw
	lp, li := f.lp, f.li
	for k := w.head[s]; k >= 0; k = w.next[k] {
		ek := sn.start[k+1]
		rk := li[lp[ek-1]:lp[ek]]
		q0 := w.npos[k]
		q1 := q0
		for q1 < len(rk) && rk[q1] < e {
			q1++
		}
		f.snUpdate(c, rel, sym, f0, e, k, q0, q1, part, parts)
	}
}

// numericSNParallel runs the plan: the workers factor their tasks, then the
// calling goroutine replays the tasks' links in postorder and factors the
// top. Only the calling goroutine calls Settings.Stop; the others follow
// its answer.
func (f *Factor[T]) numericSNParallel(m *Matrix[T], sym bool) error {
	sn, w := f.sn, f.snw
	pl := sn.plan
	nsup := len(sn.start) - 1
	for i := range w.outcome {
		w.outcome[i] = snOutcome{err: errNotRun}
	}
	var stopped atomic.Bool
	run := func(wk int) {
		c := &w.ctx[wk]
		count := 0
		for i, t := range pl.tasks {
			if t.worker != wk {
				continue
			}
			c.hi, c.pend = t.hi, w.pend[2*t.lo:2*t.lo:2*(t.hi+1)]
			c.minRatio, c.minIdx = 1, -1
			var err error
			for s := t.lo; s <= t.hi; s++ {
				if count%(stopEvery/8) == 0 && wk == 0 && f.set.Stop != nil && f.set.Stop() {
					stopped.Store(true)
				}
				count++
				if stopped.Load() {
					err = ErrStopped
					break
				}
				if err = f.snSupernode(s, m, sym, c); err != nil {
					break
				}
			}
			w.outcome[i] = snOutcome{err: err, npend: len(c.pend), minRatio: c.minRatio, minIdx: c.minIdx}
			if err != nil {
				return
			}
		}
	}
	var wg sync.WaitGroup
	for wk := 1; wk < pl.workers; wk++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			run(wk)
		}()
	}
	run(0)
	wg.Wait()

	c := &w.ctx[0]
	c.hi, c.pend, c.minRatio, c.minIdx = nsup-1, c.pend[:0], 1, -1
	if slices.Contains(pl.split, true) {
		c.split = newSNSplit(f, &w.ctx[1])
		defer func() {
			c.split.stop()
			c.split = nil
		}()
	}
	ti := 0
	replay := func(upto int) error {
		for ; ti < len(pl.tasks) && pl.tasks[ti].lo < upto; ti++ {
			o := &w.outcome[ti]
			if o.err != nil {
				return o.err
			}
			lo := pl.tasks[ti].lo
			pend := w.pend[2*lo : 2*lo+o.npend]
			for q := 0; q < len(pend); q += 2 {
				k, tg := pend[q], pend[q+1]
				w.next[k] = w.head[tg]
				w.head[tg] = k
			}
			c.notePivot(o.minIdx, o.minRatio)
		}
		return nil
	}
	for i, s := range pl.top {
		if err := replay(s); err != nil {
			return err
		}
		if i%(stopEvery/8) == 0 && f.set.Stop != nil && f.set.Stop() {
			return ErrStopped
		}
		if err := f.snSupernode(s, m, sym, c); err != nil {
			return err
		}
	}
	if err := replay(nsup); err != nil {
		return err
	}
	f.notePivot(c.minIdx, c.minRatio)
	return nil
}
