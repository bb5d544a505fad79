package montecarlo

import (
	"fmt"
	"time"

	"github.com/ramify-dev/ramify/vertex"
)

// Network is what the walkers need to know about a network. Node and edge
// indices run from 0 to nodes−1 and edges−1; x is the distance from an
// edge's From node. *graphpde.Network satisfies it.
type Network interface {
	// Size returns the numbers of nodes and edges.
	Size() (nodes, edges int)
	// WalkNode returns node v's id, law and incident ends, and the
	// walker-only split per end (aligned with ends), nil when it has none.
	WalkNode(v int) (id string, law vertex.Law, ends []vertex.End, split []float64)
	// WalkEdge returns edge e's id, end nodes, length, the weights α at its
	// From and To ends, and whether its coefficients are constant along it.
	WalkEdge(e int) (id string, from, to int, length float64, alpha [2]float64, constant bool)
	// EdgeCoeffs returns a, b, c, f, ρ of edge e at x.
	EdgeCoeffs(e int, x float64) (a, b, c, f, rho float64)
}

// StretchNetwork is implemented by networks that can say how far from each
// end of an edge its coefficients stay constant (an edge whose control
// switches inside it: constant pieces). Where the stretch reaches beyond a
// node's star, the visit uses the coefficients of that stretch exactly
// instead of freezing varying ones on a shrunk star (Result.Frozen).
type StretchNetwork interface {
	Network
	// ConstantStretch returns the length from the given end (0 = From,
	// 1 = To) of edge e over which its coefficients are constant (the
	// edge's length for a constant edge, 0 when they vary at once).
	ConstantStretch(e, side int) float64
}

// Recorder receives progress reports: done walkers out of total. Run calls it
// from one goroutine at a time, after each completed block.
type Recorder interface {
	Progress(done, total int64)
}

// Settings control a run. A nil *Settings means all defaults; each field's
// zero value selects the default named in its comment.
type Settings struct {
	// Particles is the number of walkers; 0 means 100000.
	Particles int64
	// Seed selects the random streams: block k of BlockSize walkers draws
	// from rand.NewPCG(Seed, k).
	Seed uint64
	// Workers is the number of goroutines; 0 means runtime.GOMAXPROCS(0).
	// The result does not depend on it.
	Workers int
	// TimeCap is the largest lifetime followed per walker (time units of ρ);
	// a walker still out at TimeCap is censored. 0 means 1000 times the
	// network's time scale (see DefaultTimeCap).
	TimeCap float64
	// Step is the Euler–Maruyama time step on time-stepping edges; 0 means a
	// step per edge of 1e−3 of its diffusive time L²ρ/(2a) (and at most
	// 1e−2 of its drift time Lρ/|b|).
	Step float64
	// StepScale multiplies the step of every time-stepping edge (Step or
	// its default); 0 means 1. A second run at StepScale ½ with the same
	// seed estimates the first-order bias of the time stepping.
	StepScale float64
	// StarFraction is the star radius, as a fraction of the largest star
	// that fits, at nodes whose arms decay at different rates (exact in law
	// at any radius; the small star keeps the departure counts close to the
	// weights) and at nodes with an arm whose coefficients vary along its
	// edge (frozen at the node for the visit; the small star keeps that
	// error small); 0 means 1/8. Other nodes always use the full star (next
	// to a time-stepping arm, the largest that fits in its hand-off zone).
	StarFraction float64
	// KeepSamples keeps every walker's lifetime and fate in Result.Samples
	// (16 bytes per walker; refused above MaxSampleBytes).
	KeepSamples bool
	// Quantiles are the probabilities at which the exit-time quantiles are
	// reported; nil means 0.1, 0.25, 0.5, 0.75, 0.9.
	Quantiles []float64
	// Recorder, if not nil, receives progress reports.
	Recorder Recorder
	// Growth allows a negative decay c on edges whose coefficients vary
	// along them (time-stepping edges): there a walker is not killed but
	// carries the weight exp(∫|c|/ρ dt), which multiplies everything it
	// collects afterwards (Feynman–Kac with a potential of either sign).
	// At a node next to such an edge the visit's growth rate is the arms'
	// |c|/ρ averaged by their star weights (frozen at the node, like the
	// other coefficients of such a visit). The value estimate and its
	// standard error include the weights; Result.MaxWeight reports the
	// largest. Off (the default), a negative decay is an error; on edges
	// with constant coefficients it is an error either way.
	Growth bool
	// Shard, when its Count is not zero, runs only that part of the
	// walkers' blocks; Result.Part then carries the block sums that Merge
	// combines with the other parts into the whole run's result. The
	// estimates of a part's own Result are over its walkers only.
	Shard Shard
	// PositionTimes asks for every walker's place at these times
	// (Result.Positions): the walker is stopped at each of them exactly in
	// law, as docs/walkers.md ("Positions at fixed times") describes.
	// Each must be finite, ≥ 0 and within the time cap. Walkers held by a
	// node's capacity at a record time are recorded AtNode there, walkers
	// killed by a leak Ended (Killed). Refused with a shard, and
	// (*PositionError) on networks with a balance node that has a leak or
	// a capacity next to a time-stepped arm (drift or varying
	// coefficients); see also Result.PositionApprox. Records take 24 bytes per walker and time
	// (at most MaxPositionBytes).
	PositionTimes []float64
	// KeepBlocks keeps the per-block sums of value, lifetime, fates and
	// hits in Result.Blocks (without occupations, visits, departures or
	// lifetimes). Two runs with the same seed walk block k from the same
	// random stream, so their block sums are paired: the standard error of
	// a difference between the runs follows from the differences of the
	// block sums (PairedStdErr), including the covariance of the runs.
	KeepBlocks bool
}

// BlockSize is the number of walkers per block: the unit of work, of random
// streams and of the summation order.
const BlockSize = 4096

// MaxSampleBytes is the largest memory KeepSamples may ask for.
const MaxSampleBytes = 4 << 30

// maxInternalTimes is the number of walkers whose lifetimes are kept
// internally for the quantiles when KeepSamples is off (32 MiB).
const maxInternalTimes = 1 << 22

// Estimate is a Monte Carlo mean over N walkers with its standard error
// sqrt(s²/N), s² the sample variance.
type Estimate struct {
	Mean, StdErr float64
	N            int64
}

// Quantile is the empirical P-quantile T of the exit time.
type Quantile struct {
	P, T float64
}

// Fates of a walker in Sample.Node besides a node index.
const (
	Killed   = -1 // killed by decay on an edge or leak at a node
	Censored = -2 // still out at TimeCap
)

// Sample is one walker's lifetime and fate: the fixed node that absorbed it,
// Killed or Censored. For a censored walker Time is the time reached (≥
// TimeCap).
type Sample struct {
	Time float64
	Node int
}

// Status says how a run ended.
type Status uint8

const (
	// Complete: every walker was followed to its end or to TimeCap.
	Complete Status = iota
	// Cancelled: the context was cancelled; the estimates cover the
	// completed prefix of blocks.
	Cancelled
)

func (s Status) String() string {
	switch s {
	case Complete:
		return "complete"
	case Cancelled:
		return "cancelled"
	}
	return fmt.Sprintf("Status(%d)", uint8(s))
}

// Stats describe the cost of a run.
type Stats struct {
	Steps   int64 // walker steps: edge steps and node visits
	Elapsed time.Duration
	// Exact reports that no edge needed time stepping: values, hitting
	// probabilities, occupations and mean exit times carry no
	// discretisation bias.
	// Every node visit is then exact in law as well (for every node law
	// and any decay rates on the arms; see the package documentation), so
	// the exit-time distribution is exact too.
	Exact bool
	// Prepare is the time spent checking the network and setting up the
	// step rules before the first walker (visit-law tables apart).
	Prepare time.Duration
	// Tables is the number of visit-law tables the walkers needed, and
	// TableTime the time spent looking them up or building them, summed
	// over workers. Tables are built on a node's first visit (about a
	// millisecond or less each; shared between nodes whose laws have the
	// same quantised parameters, and between runs), so nodes no walker
	// reaches cost nothing. The climb and killing pieces of decaying arms
	// are mostly drawn by rejection from two tables shared by all nodes,
	// not counted here (docs/walkers.md §6).
	Tables    int
	TableTime time.Duration
}

// Result holds the estimates of a run. Means over "walkers" are over the
// Finished walkers, censored ones included (with what they had collected at
// TimeCap).
type Result struct {
	Particles, Finished int64
	// Status is Cancelled when the run was interrupted: the estimates
	// then cover the completed prefix of blocks (Finished < Particles).
	Status Status
	Seed   uint64

	Value Estimate // Feynman–Kac value u(start)
	// ExitTime is the mean lifetime of the walkers absorbed or killed: with
	// censored walkers, the mean of τ given τ ≤ TimeCap, not E τ.
	ExitTime Estimate
	ExitSD   float64 // sample standard deviation of those lifetimes
	// Quantiles of the lifetime τ, from the first min(Finished, 2²²)
	// walkers (all of them with KeepSamples). Censored walkers count as
	// living longer than TimeCap, so these are quantiles of τ itself, not
	// of τ given an exit; one that lies beyond the cap (P above the
	// fraction that exited) is NaN.
	Quantiles []Quantile
	Hit       []Estimate // per node: P(absorbed there); zero for balance nodes
	Killed    Estimate   // P(killed by decay or leak)
	Censored  int64      // walkers still out at TimeCap, never counted as exits
	TimeCap   float64    // the per-walker time cap in force (Settings.TimeCap or the default)
	// Occupation is per edge the expected time spent on the edge.
	Occupation []Estimate
	// Visits is per node the expected number of node steps (arrivals at a
	// fixed node count one). At balance nodes it depends on the star radius
	// and is a diagnostic, not a property of the diffusion.
	Visits []Estimate
	// Departures[v][k] counts the walkers that left node v along its k-th
	// incident end (NodeIncident order); nil for nodes never visited.
	Departures [][]int64
	// SplitExact[v] reports that departures from balance node v follow
	// its star weights w_e/Σw exactly (docs/walkers.md): every edge at v is
	// walked on intervals (constant coefficients, no drift) and all decay
	// at one rate c/ρ. Only there can the split frequencies be compared
	// with the weights; elsewhere they lean towards the arms that decay
	// less, or carry the error of freezing coefficients at the node.
	SplitExact []bool
	// Frozen[v] reports that visits to node v freeze coefficients that
	// vary within its star (an arm whose coefficients change near the
	// node): those visits are approximate, with a bias that shrinks with
	// Settings.StarFraction. False where every arm is constant over the
	// star (StretchNetwork), which keeps the visit exact in law.
	Frozen  []bool
	Samples []Sample // with KeepSamples: per walker, in walker order
	// MaxWeight is the largest growth weight a walker reached (1 without
	// Settings.Growth or negative decay): weights far above 1 make the
	// value's variance large.
	MaxWeight float64
	Stats     Stats
	// Part holds the block sums of a sharded run (Settings.Shard), nil
	// otherwise.
	Part *Part
	// Blocks holds the block sums in block order with
	// Settings.KeepBlocks (Hits only while blocks × nodes stays within
	// MaxBlockHits), nil otherwise.
	Blocks []Block
	// PositionTimes are Settings.PositionTimes in ascending order, and
	// Positions[k][i] is the place of walker i (of the Finished, in walker
	// order) at PositionTimes[k]; nil without position times.
	PositionTimes []float64
	Positions     [][]Position
	// PositionLate counts records taken after their time because a step
	// overshot it (probability below about 1e-9 per record; the place is
	// then that after the step).
	PositionLate int64
	// PositionApprox reports that some records may come from approximate
	// visits: near a record time a node whose arms decay at different
	// rates, or with an arm that has drift or varying coefficients, is
	// visited by a Walsh step of a small radius ε with the split w_k/Σw
	// and the arms' mean decay, the limit of its exact visit as the
	// radius shrinks (an error of order ε in the split, ε² in time).
	PositionApprox bool
}

// CensoredFraction returns Censored/Finished (0 when nothing finished).
func (r *Result) CensoredFraction() float64 {
	if r.Finished == 0 {
		return 0
	}
	return float64(r.Censored) / float64(r.Finished)
}

// WeightError reports an edge weight α or a split entry that is not a finite
// number > 0.
type WeightError struct {
	Node, Edge string
	Field      string // "weight" or "split"
	Value      float64
}

func (e *WeightError) Error() string {
	if e.Field == "split" {
		return fmt.Sprintf("node %q, edge %q: split = %g must be a finite number ≥ 0, and the node's split must not be all zero", e.Node, e.Edge, e.Value)
	}
	return fmt.Sprintf("node %q, edge %q: %s = %g must be a finite number > 0", e.Node, e.Edge, e.Field, e.Value)
}

// CoefficientError reports an edge coefficient the walker cannot use.
type CoefficientError struct {
	Edge   string
	Field  string // "diffusivity", "capacity", "decay", "drift", "source", "length"
	X      float64
	Value  float64
	Reason string
}

func (e *CoefficientError) Error() string {
	return fmt.Sprintf("edge %q: %s = %g at x = %g %s", e.Edge, e.Field, e.Value, e.X, e.Reason)
}

// NodeError reports a node law the walker cannot use.
type NodeError struct {
	Node   string
	Field  string
	Value  float64
	Reason string
}

func (e *NodeError) Error() string {
	return fmt.Sprintf("node %q: %s = %g %s", e.Node, e.Field, e.Value, e.Reason)
}

// MemoryError reports a run whose kept samples would not fit in memory; it
// is returned before anything is allocated.
type MemoryError struct {
	Particles int64
	Bytes     int64 // what KeepSamples would need (math.MaxInt64 when that overflows)
	Limit     int64
}

func (e *MemoryError) Error() string {
	return fmt.Sprintf("keeping samples of %d walkers needs %.4g bytes (16 per walker), above the limit %d: lower Particles or clear KeepSamples", e.Particles, 16*float64(e.Particles), e.Limit)
}

// SettingsError reports an inadmissible setting.
type SettingsError struct {
	Field  string
	Value  float64
	Reason string
}

func (e *SettingsError) Error() string {
	return fmt.Sprintf("setting %s = %g: %s", e.Field, e.Value, e.Reason)
}

// CensoredError reports that no walker exited within TimeCap. Run returns it
// together with the result.
type CensoredError struct {
	Censored, Finished int64
	TimeCap            float64
}

func (e *CensoredError) Error() string {
	return fmt.Sprintf("all %d walkers still out at the time cap %g (censored fraction %d/%d): nothing anchors the walk, or raise the time cap", e.Censored, e.TimeCap, e.Censored, e.Finished)
}
