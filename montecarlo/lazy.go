package montecarlo

import (
	"math/rand/v2"
	"sync"
	"sync/atomic"
	"time"

	"github.com/ramify-dev/ramify/montecarlo/internal/starlaw"
)

// lazyTable is a visit-law table built on first use: on a large network
// walkers reach only some nodes, and each table costs milliseconds (a
// Laplace inversion per knot), so preparing every node's tables up front
// would cost more than the walk. The first walker to need a table builds
// it (so tables of different nodes are built in parallel by the workers);
// others needing the same one wait for it. Tables with equal parameters
// are shared through starlaw's cache. The table built does not depend on
// which walker builds it, so results stay the same for any Workers.
type lazyTable struct {
	tab   atomic.Pointer[starlaw.Table]
	once  sync.Once
	build func() *starlaw.Table
	stats *tableStats
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

// Draw draws from the table (see starlaw.Table.Draw).
func (l *lazyTable) Draw(rng *rand.Rand) float64 {
	return l.get().Draw(rng)
}
