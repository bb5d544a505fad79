package montecarlo

import (
	"math"
	"slices"
)

// MaxBlockHits is the largest number of per-block hit counters
// (blocks × nodes) that Settings.KeepBlocks keeps (128 MiB).
const MaxBlockHits = 1 << 24

// toPairBlock is toBlock without occupations, visits, departures and
// lifetimes (hits only when hits is true).
func (b *blockAcc) toPairBlock(hits bool) Block {
	bl := Block{K: b.k, N: b.n, Exited: b.exited, Killed: b.killed, Censored: b.censored, Steps: b.steps,
		MaxWeight: b.maxW, ValueSum: b.valS, ValueSq: b.valQ, TimeSum: b.tS, TimeSq: b.tQ}
	if hits {
		bl.Hits = slices.Clone(b.hits)
	}
	return bl
}

// MinPairedBlocks is the fewest blocks from which PairedStdErr estimates a
// standard error (below it the spread of a handful of block differences
// is too uncertain to stand for the error; common practice, no source).
const MinPairedBlocks = 10

// PairedStdErr returns the standard error of α·X(a) + β·X(b), where X is a
// ratio of block sums, X = Σ num(B_k)/Σ den(B_k) (the value: ValueSum over
// N; a hitting probability: Hits[v] over N; the mean lifetime: TimeSum over
// Exited), and a and b are the blocks of two runs with the same seed and
// particles (Settings.KeepBlocks), so that block k of both walked from the
// same random stream. The blocks are independent of each other, the two
// runs' sums within a block are not: with the linearised residuals
// r_k = (num_k − X·den_k)/Σden of each run (the delta method for a
// ratio), the variance is K/(K − 1)·Σ_k (α r_k(a) + β r_k(b))², which
// carries the covariance of the runs (derived). ok is false when the
// blocks do not pair (different counts or block indices), when there are
// fewer than MinPairedBlocks, or when a denominator is zero.
func PairedStdErr(a, b []Block, alpha, beta float64, num, den func(*Block) float64) (se float64, ok bool) {
	K := len(a)
	if K != len(b) || K < MinPairedBlocks {
		return 0, false
	}
	var na, da, nb, db float64
	for k := range a {
		if a[k].K != b[k].K || a[k].N != b[k].N {
			return 0, false
		}
		na += num(&a[k])
		da += den(&a[k])
		nb += num(&b[k])
		db += den(&b[k])
	}
	if da == 0 || db == 0 {
		return 0, false
	}
	xa, xb := na/da, nb/db
	var q float64
	for k := range a {
		ra := (num(&a[k]) - xa*den(&a[k])) / da
		rb := (num(&b[k]) - xb*den(&b[k])) / db
		z := alpha*ra + beta*rb
		q += z * z
	}
	return math.Sqrt(q * float64(K) / float64(K-1)), true
}
