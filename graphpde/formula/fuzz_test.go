package formula

import (
	"errors"
	"testing"
)

// FuzzCompile checks that Compile never panics on any input, that its
// errors are *Error values, and that a compiled expression evaluates (value,
// derivatives, node law) without panicking and with Value equal to Eval's
// value.
func FuzzCompile(f *testing.F) {
	for _, c := range handCases() {
		f.Add(c.src)
	}
	for _, s := range []string{"d.a + d[\"b-1\"]*u", "max(d.a, u, 1)^k0", "-(2*d.a) + lambda", "x ? y : z", "1..3", "let a = 1; a", "u |> exp()", "d.a.from"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		spec := Spec{Vars: X | U | UX | UXX | T | D, Params: params(), Ends: []string{"a", "b-1", "a.from"}}
		e, err := Compile(src, spec)
		if err != nil {
			var fe *Error
			if !errors.As(err, &fe) {
				t.Fatalf("%q: error %T is not *Error: %v", src, err, err)
			}
			return
		}
		d, dd := []float64{0.5, -1, 2}, make([]float64, 3)
		g, _ := e.EvalLaw(0.3, d, dd)
		if e.Uses()&D == 0 {
			r := e.Eval(0.1, 0.3, -0.2, 0.7, 0.4)
			v := e.Value(0.1, 0.3, -0.2, 0.7, 0.4)
			if !(v == r.V || v != v && r.V != r.V) {
				t.Fatalf("%q: Value %g, Eval %g", src, v, r.V)
			}
		}
		_ = g
		_ = e.Explain(0.1, 0.3, -0.2, 0.7, 0.4, d)
	})
}
