package montecarlo

import (
	"fmt"
	"math"
	"slices"
)

// PositionState says where a walker is at one of Settings.PositionTimes.
type PositionState uint8

const (
	// OnEdge: on edge Position.Edge at Position.X.
	OnEdge PositionState = iota
	// AtNode: alive at node Position.Node: held by its capacity, or at a
	// balance node without edges, or, with probability of order 1e-12, a
	// record taken at a node.
	AtNode
	// Ended: absorbed at fixed node Position.Node, or killed
	// (Position.Node = Killed), before the time.
	Ended
	// Unknown: the walker was still out at the time cap, before the time,
	// or its record could not be placed.
	Unknown
)

// Position is a walker's place at one of Settings.PositionTimes.
type Position struct {
	State PositionState
	Node  int32 // AtNode: the node; Ended: the absorbing node, or Killed
	Edge  int32 // OnEdge: the edge (−1 otherwise)
	X     float64
}

// Constants of the stop at a record time (docs/walkers.md, "Positions at
// fixed times"). A step of radius r (in the diffusive coordinate
// y = x·sqrt(ρ/a), generator d²/dy², duration r²τ₁/2) lasts longer than
// the remaining time s with probability P(τ₁ > 2s/r²) ≤ (4/π)e^{−π²u/8} at
// u = 2s/r² (the first term of the exit-time series of (−1, 1), derived):
// at u ≥ posU = 20 that is below 3e-11, and such a step is taken as it is.
// Otherwise the walker either jumps straight to the record time by the
// exact Gaussian increment of variance 2s (y units), when it is at least
// posJump·sqrt(2s) from every node (it touches one before the time with
// probability 2Φ(−posJump) ≈ 2e-9), or takes a step of the shrunk radius
// sqrt(2s/posU), exact in law and again overshooting with probability
// below 3e-11 (a record needs some tens of such steps: on a three-arm
// star, about 70 extra steps per walker and record time, measured). Any
// record taken late (after an overshoot) is counted in
// Result.PositionLate. On time-stepping edges the Euler step is shortened
// to end at the record time, and a near-node step that could outlast it
// is replaced by such an Euler step (the edge's Euler bias, no more). The remaining time is considered zero below
// posFloor times the record time (the place is then off by about
// sqrt(2e-12·t) in y, far below any grid or statistical resolution).
const (
	posU     = 20.0
	posJump  = 6.0
	posFloor = 1e-12
)

// MaxPositionBytes is the largest memory the position records may take
// (24 bytes per walker and time).
const MaxPositionBytes = 4 << 30

// PositionError reports a network on which walkers cannot be stopped at
// fixed times exactly: a node whose visits are not Walsh steps of a radius
// the walker can shrink.
type PositionError struct {
	Node   string
	Reason string
}

func (e *PositionError) Error() string {
	return fmt.Sprintf("node %q: positions at fixed times are not supported here: %s", e.Node, e.Reason)
}

// checkPositions validates set.PositionTimes against the model and returns
// them sorted. Nodes with a leak or a capacity stop walkers exactly where
// their arms are walked on intervals, whatever their decay rates
// (positions_sticky.go); next to a time-stepped arm they are refused.
// Nodes whose arms decay at different rates, or next to an edge with
// drift or varying coefficients, are visited near a record time by an
// approximate small star (m.posApprox).
func (m *model) checkPositions(set *Settings) ([]float64, error) {
	if len(set.PositionTimes) == 0 {
		return nil, nil
	}
	if set.Shard.Count > 0 {
		return nil, &SettingsError{Field: "position times", Value: float64(len(set.PositionTimes)), Reason: "cannot be combined with a shard (positions are not merged)"}
	}
	ts := slices.Clone(set.PositionTimes)
	slices.Sort(ts)
	for _, t := range ts {
		if !finite(t) || t < 0 {
			return nil, &SettingsError{Field: "position time", Value: t, Reason: "must be a finite number ≥ 0"}
		}
		if t > m.timeCap {
			return nil, &SettingsError{Field: "position time", Value: t, Reason: fmt.Sprintf("is beyond the time cap %g: raise the time cap", m.timeCap)}
		}
	}
	if need := float64(set.Particles) * float64(len(ts)) * 24; need > MaxPositionBytes {
		return nil, &SettingsError{Field: "position times", Value: float64(len(ts)), Reason: fmt.Sprintf("records of %d walkers at %d times need %.3g bytes, above %d: fewer walkers or times", set.Particles, len(ts), need, int64(MaxPositionBytes))}
	}
	for v := range m.nodes {
		nd := &m.nodes[v]
		switch nd.mode {
		case modeStar:
			if m.pos == nil {
				m.pos = make([]*posNode, len(m.nodes))
			}
			m.pos[v] = m.preparePosStar(v)
		case modeStarArms:
			if nd.posPlain {
				m.posApprox = true
				continue
			}
			for _, a := range nd.arms {
				if !m.edges[a.edge].exact {
					// Measured: next to a drifting arm the share held at
					// the node came out 7% low (11 standard errors) with
					// the drift frozen in the ladder's visits and left out
					// of the jump, near-node Euler steps around them.
					id, _, _, _ := m.net.WalkNode(v)
					return nil, &PositionError{Node: id, Reason: "it has a leak or a capacity next to a time-stepped arm (drift or coefficients that vary along the edge)"}
				}
			}
			if m.pos == nil {
				m.pos = make([]*posNode, len(m.nodes))
			}
			m.pos[v] = m.preparePosStar(v)
		}
	}
	return ts, nil
}

// record writes the walker's current place as its record at time index k.
func (w *walker) record(k, node, e int, x float64) {
	p := &w.pos[k]
	switch {
	case node >= 0 && w.m.nodes[node].mode == modeFixed:
		*p = Position{State: Ended, Node: int32(node), Edge: -1}
	case node >= 0:
		*p = Position{State: AtNode, Node: int32(node), Edge: -1}
	default:
		*p = Position{State: OnEdge, Node: -1, Edge: int32(e), X: x}
	}
}

// finishRecords fills the records after the walker's end: Ended with its
// fate, or Unknown when it was censored.
func (w *walker) finishRecords(k, fate int) {
	for ; k < len(w.pos); k++ {
		switch fate {
		case Censored:
			w.pos[k] = Position{State: Unknown, Node: -1, Edge: -1}
		default:
			w.pos[k] = Position{State: Ended, Node: int32(fate), Edge: -1}
		}
	}
}

// shrunkStarReward is the injection reward of a visit to a walk-on-stars
// node at the radius eps instead of nd.r: rγ/Σw is linear in r, and with a
// common decay rate k it is γ·tanh(r√k)/(√k Σw).
func shrunkStarReward(nd *nodeInfo, eps float64) float64 {
	if nd.reward == 0 {
		return 0
	}
	if nd.kill == 0 {
		return nd.reward * eps / nd.r
	}
	sk := math.Sqrt(nd.kill)
	return nd.reward * math.Tanh(eps*sk) / math.Tanh(nd.r*sk)
}
