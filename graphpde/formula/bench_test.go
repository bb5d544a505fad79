package formula

import (
	"math"
	"testing"
	"time"

	"github.com/ramify-dev/ramify/graphpde"
)

var benchSink float64

// BenchmarkCoef evaluates the typical quasilinear law k0*(1 + b*u) with its
// u-derivative at a million points per iteration, compiled ("formula") and as
// a plain Go closure computing the same ("plain"), and reports points per
// second and the ratio formula/plain of the time per point measured in the
// same run ("x-plain").
func BenchmarkCoef(b *testing.B) {
	const points = 1 << 20
	p := &graphpde.Params{Names: []string{"k0", "b"}, Values: []float64{2.5, 0.3}}
	e, err := Compile("k0*(1 + b*u)", Spec{Vars: X | U | T, Params: p})
	if err != nil {
		b.Fatal(err)
	}
	compiled := e.Coef().Fn
	vals := p.Values
	plain := func(x, u, t float64) (float64, float64) {
		k0, bb := vals[0], vals[1]
		return k0 * (1 + bb*u), k0 * bb
	}
	run := func(fn func(x, u, t float64) (float64, float64)) time.Duration {
		start := time.Now()
		var s float64
		for i := range points {
			v, du := fn(0.5, float64(i)*1e-6, 0)
			s += v + du
		}
		benchSink += s
		return time.Since(start)
	}
	b.ReportAllocs()
	var tf, tp time.Duration
	for b.Loop() {
		tf += run(compiled)
		tp += run(plain)
	}
	n := float64(b.N) * points
	b.ReportMetric(n/tf.Seconds(), "points/s")
	b.ReportMetric(n/tp.Seconds(), "plain-points/s")
	b.ReportMetric(tf.Seconds()/tp.Seconds(), "x-plain")
}

// BenchmarkEquation evaluates a fully nonlinear edge law with its three
// derivatives, as Newton does at every grid point, compiled and as a
// hand-written Go closure, a million points per iteration; it reports
// points per second and the ratio of the times ("x-plain").
func BenchmarkEquation(b *testing.B) {
	const points = 1 << 20
	p := &graphpde.Params{Names: []string{"lambda"}, Values: []float64{1}}
	e, err := Compile("(1 + u^2)*uxx - abs(ux) + lambda*exp(u)", Spec{Vars: X | U | UX | UXX, Params: p})
	if err != nil {
		b.Fatal(err)
	}
	compiled := e.Equation().Fn
	vals := p.Values
	plain := func(x, u, ux, uxx float64) (float64, float64, float64, float64) {
		lam, ex := vals[0], math.Exp(u)
		k := 1 + u*u
		s := 0.0
		switch {
		case ux > 0:
			s = 1
		case ux < 0:
			s = -1
		}
		return k*uxx - math.Abs(ux) + lam*ex, 2*u*uxx + lam*ex, -s, k
	}
	run := func(fn func(x, u, ux, uxx float64) (float64, float64, float64, float64)) time.Duration {
		start := time.Now()
		var s float64
		for i := range points {
			v, du, dux, duxx := fn(0.5, float64(i)*1e-6, 0.2, -1)
			s += v + du + dux + duxx
		}
		benchSink += s
		return time.Since(start)
	}
	b.ReportAllocs()
	var tf, tp time.Duration
	for b.Loop() {
		tf += run(compiled)
		tp += run(plain)
	}
	n := float64(b.N) * points
	b.ReportMetric(n/tf.Seconds(), "points/s")
	b.ReportMetric(tf.Seconds()/tp.Seconds(), "x-plain")
}
