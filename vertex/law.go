package vertex

import (
	"fmt"
	"math"
)

// Kind is the kind of a node condition. The set is closed: both engines switch
// on it and panic on a kind they do not know.
type Kind uint8

const (
	// Balance is the linear flux balance Σ J + β u + ρ_v ∂_t u = γ.
	Balance Kind = iota
	// Fixed is a prescribed value u = g; walkers are absorbed with payoff g.
	Fixed
)

// String returns "balance" or "fixed".
func (k Kind) String() string {
	switch k {
	case Balance:
		return "balance"
	case Fixed:
		return "fixed"
	}
	return fmt.Sprintf("Kind(%d)", uint8(k))
}

// Law is the condition carried by one node.
//
// For Kind == Fixed only Value is used. For Kind == Balance, Leak (β), Inject (γ)
// and Capacity (ρ_v) are used; their zero values give Kirchhoff's current law.
type Law struct {
	Kind     Kind
	Value    float64 // g, the prescribed value of a Fixed node
	Leak     float64 // β ≥ 0, loss proportional to u(v)
	Inject   float64 // γ, injection into the network
	Capacity float64 // ρ_v ≥ 0, storage of the node itself
}

// LawError reports a node law that is not admissible.
type LawError struct {
	Field  string  // "leak", "capacity", "fixed", "inject"
	Value  float64 // the offending value
	Reason string  // what is required
}

func (e *LawError) Error() string {
	return fmt.Sprintf("%s = %g: %s", e.Field, e.Value, e.Reason)
}

// Validate reports the first field of l that breaks the requirements of its
// kind: finite numbers, β ≥ 0 and ρ_v ≥ 0. A negative leak or capacity would
// break the comparison principle (and make walker probabilities negative).
func (l Law) Validate() error {
	finite := func(field string, v float64) error {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return &LawError{Field: field, Value: v, Reason: "must be a finite number"}
		}
		return nil
	}
	switch l.Kind {
	case Fixed:
		return finite("fixed", l.Value)
	case Balance:
		for _, f := range []struct {
			name string
			v    float64
		}{{"leak", l.Leak}, {"inject", l.Inject}, {"capacity", l.Capacity}} {
			if err := finite(f.name, f.v); err != nil {
				return err
			}
		}
		if l.Leak < 0 {
			return &LawError{Field: "leak", Value: l.Leak, Reason: "must be ≥ 0"}
		}
		if l.Capacity < 0 {
			return &LawError{Field: "capacity", Value: l.Capacity, Reason: "must be ≥ 0"}
		}
		return nil
	}
	panic(fmt.Sprintf("vertex: unknown kind %v", l.Kind))
}

// Anchors reports whether the law alone pins the level of the solution in its
// connected component for a steady problem: a fixed value or a positive leak.
// (Decay on an edge anchors too; that is the network's business.)
func (l Law) Anchors() bool {
	switch l.Kind {
	case Fixed:
		return true
	case Balance:
		return l.Leak > 0
	}
	panic(fmt.Sprintf("vertex: unknown kind %v", l.Kind))
}

// Row returns the node's own terms of its balance row in the node system
//
//	Σ_e J_e(v) + diag·u(v) = rhs
//
// for a problem with Laplace (or implicit time-stepping) parameter s: the node
// capacity acts as an extra leak s·ρ_v. For s = 0 this is the steady row,
// diag = β and rhs = γ. Row panics on a Fixed law, which has no balance row.
func (l Law) Row(s float64) (diag, rhs float64) {
	switch l.Kind {
	case Balance:
		return l.Leak + s*l.Capacity, l.Inject
	case Fixed:
		panic("vertex: Row of a fixed node")
	}
	panic(fmt.Sprintf("vertex: unknown kind %v", l.Kind))
}

// End names one end of an edge incident to a node: the edge's index and the
// side, 0 for the edge's from end and 1 for its to end. A self-loop gives its
// node two Ends.
type End struct {
	Edge int
	Side int
}
