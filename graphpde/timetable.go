package graphpde

import (
	"fmt"
	"math"
	"sort"
)

// TimeTable is node data given at increasing times T with values V (a
// schedule): linear between rows, or, with Steps, held from each row until
// the next; held at the first and last values beyond the table. Its
// Laplace transform is exact (a sum of delayed steps e^{−sτ}/s or ramps
// e^{−sτ}/s², docs/time-and-spectrum.md §2), which Evolve's exact method
// uses.
type TimeTable struct {
	T, V  []float64
	Steps bool
}

// NewTimeTable checks a table: at least one row, as many values as times,
// finite numbers, strictly increasing times.
func NewTimeTable(ts, vs []float64, steps bool) (*TimeTable, error) {
	if len(ts) == 0 || len(ts) != len(vs) {
		return nil, fmt.Errorf("time table: %d times and %d values (want the same number, at least one)", len(ts), len(vs))
	}
	for i := range ts {
		if math.IsNaN(ts[i]) || math.IsInf(ts[i], 0) || math.IsNaN(vs[i]) || math.IsInf(vs[i], 0) {
			return nil, fmt.Errorf("time table: row %d (t = %g, value %g) is not finite", i+1, ts[i], vs[i])
		}
		if i > 0 && !(ts[i] > ts[i-1]) {
			return nil, fmt.Errorf("time table: time %g does not increase (previous %g)", ts[i], ts[i-1])
		}
	}
	return &TimeTable{T: ts, V: vs, Steps: steps}, nil
}

// At returns the value at t: right-continuous at the rows of a step table.
func (tt *TimeTable) At(t float64) float64 {
	ts, vs := tt.T, tt.V
	i := sort.SearchFloat64s(ts, t) // first ts[i] ≥ t
	switch {
	case i < len(ts) && ts[i] == t:
		return vs[i]
	case i == 0:
		return vs[0]
	case i == len(ts):
		return vs[len(vs)-1]
	case tt.Steps:
		return vs[i-1]
	}
	w := (t - ts[i-1]) / (ts[i] - ts[i-1])
	return (1-w)*vs[i-1] + w*vs[i]
}

// kink is one term of a table's expansion for t > 0: C·H(t − At) for
// Order 1 (a step), C·(t − At)₊ for Order 2 (a ramp).
type kink struct {
	At, C float64
	Order int
}

// expand writes the table for t > 0 as its value at 0+ plus steps and
// ramps: g(t) = g0 + Σ C_k·(t − τ_k)₊^{Order−1}, with a ramp from τ = 0
// for the slope at 0+ (derived: a piecewise linear function is its value
// plus its slope changes times ramps). Zero terms are dropped.
func (tt *TimeTable) expand() (g0 float64, ks []kink) {
	ts, vs, n := tt.T, tt.V, len(tt.T)
	g0 = tt.At(0)
	if tt.Steps {
		for k := 1; k < n; k++ {
			if ts[k] > 0 && vs[k] != vs[k-1] {
				ks = append(ks, kink{At: ts[k], C: vs[k] - vs[k-1], Order: 1})
			}
		}
		return g0, ks
	}
	slope := func(k int) float64 { // on (ts[k], ts[k+1]); 0 outside the table
		if k < 0 || k >= n-1 {
			return 0
		}
		return (vs[k+1] - vs[k]) / (ts[k+1] - ts[k])
	}
	s0 := 0.0 // the slope at 0+
	for k := range n {
		if ts[k] > 0 {
			d := slope(k) - slope(k-1)
			if d != 0 {
				ks = append(ks, kink{At: ts[k], C: d, Order: 2})
			}
			continue
		}
		s0 = slope(k)
	}
	if s0 != 0 {
		ks = append(ks, kink{At: 0, C: s0, Order: 2})
	}
	return g0, ks
}
