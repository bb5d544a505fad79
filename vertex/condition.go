package vertex

import "fmt"

// Condition is a node law in residual form, the reading through which the
// PDE side treats every node law alike, linear or not (docs/node-laws.md):
//
//	G(u, d_1, …, d_k) = 0,
//
// with u the node value and d_j the derivative of u leaving the node along
// its j-th incident end (the network's incidence order). A law is admissible
// when G is non-decreasing in u and non-increasing in every d_j: then a
// larger node value or a smaller outflow never lowers the residual, which
// is what the comparison principle (uniqueness, and Newton's convergence
// from the linear solution) needs.
//
// Residual evaluates G at (u, d), writes ∂G/∂d_j into dd (len(dd) =
// len(d)) and returns G and ∂G/∂u. Monotone reports, for the state (u, d),
// nil when the signs of the derivatives are admissible, or a
// *MonotoneError naming the variable that breaks them. Neither allocates.
//
// Implementations: Linear (every node of a linear network, fixed or
// balance); the network's nonlinear node laws implement it on the PDE side.
type Condition interface {
	Residual(u float64, d, dd []float64) (g, du float64)
	Monotone(u float64, d []float64) error
}

// MonotoneError reports a node law that is not monotone at a state: its
// residual decreases in u (End < 0) or increases in the derivative along
// end End.
type MonotoneError struct {
	End   int     // −1 for u, else the index of the end
	Slope float64 // the offending partial derivative
	U     float64 // the node value of the state
}

func (e *MonotoneError) Error() string {
	if e.End < 0 {
		return fmt.Sprintf("the node law decreases in u at u = %g (∂G/∂u = %g < 0)", e.U, e.Slope)
	}
	return fmt.Sprintf("the node law increases in the derivative along end %d at u = %g (∂G/∂d = %g > 0)", e.End, e.U, e.Slope)
}

// CheckMonotone is Monotone for any residual: it evaluates c at (u, d) with
// dd as scratch (len(d)) and checks the signs of the derivatives.
func CheckMonotone(c Condition, u float64, d, dd []float64) error {
	_, du := c.Residual(u, d, dd)
	if du < 0 {
		return &MonotoneError{End: -1, Slope: du, U: u}
	}
	for j, s := range dd[:len(d)] {
		if s > 0 {
			return &MonotoneError{End: j, Slope: s, U: u}
		}
	}
	return nil
}

// Linear is the residual form of a linear law l with end weights Alpha
// (α_j > 0, one per incident end):
//
//	balance:  G = Σ_j J_j + β u − γ,   J_j = −α_j d_j,
//	fixed:    G = u − g,
//
// the steady row of Law.Row (the capacity term belongs to the time
// discretisation, which adds it). It is monotone when β ≥ 0 and every
// α_j ≥ 0, which Law.Validate and the network's weight checks ensure.
type Linear struct {
	Law   Law
	Alpha []float64
}

// Residual implements Condition.
func (c Linear) Residual(u float64, d, dd []float64) (g, du float64) {
	dd = dd[:len(d)]
	if c.Law.Kind == Fixed {
		clear(dd)
		return u - c.Law.Value, 1
	}
	g = c.Law.Leak*u - c.Law.Inject
	for j, x := range d {
		g -= c.Alpha[j] * x
		dd[j] = -c.Alpha[j]
	}
	return g, c.Law.Leak
}

// Monotone implements Condition; for a linear law the answer does not
// depend on the state.
func (c Linear) Monotone(u float64, _ []float64) error {
	if c.Law.Kind == Fixed {
		return nil
	}
	if c.Law.Leak < 0 {
		return &MonotoneError{End: -1, Slope: c.Law.Leak, U: u}
	}
	for j, a := range c.Alpha {
		if a < 0 {
			return &MonotoneError{End: j, Slope: -a, U: u}
		}
	}
	return nil
}
