package montecarlo

import (
	"math/rand/v2"
	"sync"
	"sync/atomic"
	"time"

	"github.com/ramify-dev/ramify/montecarlo/internal/starlaw"
)

// lazyTable is a visit-law table built on first use: on a large network
// walkers reach only some nodes, and each table costs a fraction of a
// millisecond (about a hundred Laplace inversions), so preparing every
// node's tables up front would cost more than the walk. The first walker to
// need a table builds it (so tables of different nodes are built in
// parallel by the workers); others needing the same one wait for it. Nodes
// whose laws have the same quantised parameters share one lazyTable in a
// run (lazyShared), and tables are shared across runs through starlaw's
// cache. The table built depends only on the quantised parameters, not on
// which walker or node asks first, so results stay the same for any Workers
// and shards (docs/walkers.md §6).
//
// A climb or killing law without drift is an exponential tilt of one law
// shared by all nodes (starlaw.ExitTilt, starlaw.KillTilt): such a lazyTable
// needs no table of its own and draws by rejection (tilt.Base set).
type lazyTable struct {
	tab   atomic.Pointer[starlaw.Table]
	once  sync.Once
	build func() *starlaw.Table
	stats *tableStats
	tilt  starlaw.Tilt
}

// tableStats counts the tables a run looked up and the time spent on them
// (summed over workers).
type tableStats struct {
	n    atomic.Int64
	nano atomic.Int64
}

func (m *model) lazy(build func() *starlaw.Table) *lazyTable {
	return &lazyTable{build: build, stats: &m.tables}
}

// shareTables lets nodes share tables by key (off only in tests that
// compare against unshared tables).
var shareTables = true

// lazyShared returns the lazy table of key, made with build on the key's
// first request in this run: nodes whose laws have the same quantised
// parameters (starlaw.Quantise) share one table, however many there are.
func (m *model) lazyShared(key string, build func() *starlaw.Table) *lazyTable {
	if l, ok := m.shared[key]; ok && shareTables {
		return l
	}
	if m.shared == nil {
		m.shared = map[string]*lazyTable{}
	}
	l := m.lazy(build)
	m.shared[key] = l
	return l
}

// lazyVisit returns the shared lazy table of starlaw.VisitTable(mu, eta).
func (m *model) lazyVisit(mu, eta float64) *lazyTable {
	return m.lazyShared(starlaw.VisitKey(starlaw.Quantise(mu), starlaw.Quantise(eta)), func() *starlaw.Table { return starlaw.VisitTable(mu, eta) })
}

// lazyMixture returns the shared lazy table of starlaw.MixtureDriftTable.
func (m *model) lazyMixture(kappa, eta float64, p, q, g []float64) *lazyTable {
	return m.lazyShared(starlaw.MixtureKey(kappa, eta, p, q, g), func() *starlaw.Table { return starlaw.MixtureDriftTable(kappa, eta, p, q, g) })
}

// lazyExit returns the sampler of the climb law ExitLaw(q): a tilt of T_f,
// or a table of its own where the tilt would reject too often.
func (m *model) lazyExit(q float64) *lazyTable {
	if t, ok := starlaw.ExitTilt(q); ok {
		return &lazyTable{tilt: t}
	}
	return m.lazyShared("e"+starlaw.VisitKey(q, 0), func() *starlaw.Table { return starlaw.ExitTable(q) })
}

// lazyKill returns the sampler of the killing law KillLawDrift(q, g), q > 0:
// without drift a tilt of starlaw.KillBase where it rejects rarely, else a
// table of its own.
func (m *model) lazyKill(q, g float64) *lazyTable {
	if g == 0 {
		if t, ok := starlaw.KillTilt(q); ok {
			return &lazyTable{tilt: t}
		}
	}
	return m.lazyShared("k"+starlaw.VisitKey(q, g), func() *starlaw.Table { return starlaw.KillDriftTable(q, g) })
}

// get returns the table, building it on the first call.
func (l *lazyTable) get() *starlaw.Table {
	if t := l.tab.Load(); t != nil {
		return t
	}
	l.once.Do(func() {
		t0 := time.Now()
		l.tab.Store(l.build())
		l.stats.n.Add(1)
		l.stats.nano.Add(int64(time.Since(t0)))
		l.build = nil
	})
	return l.tab.Load()
}

// Draw draws from the table (see starlaw.Table.Draw) or the tilt.
func (l *lazyTable) Draw(rng *rand.Rand) float64 {
	if l.tilt.Base != nil {
		return l.tilt.Draw(rng)
	}
	return l.get().Draw(rng)
}
