package main

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"testing"
)

// TestJSONFloat checks that num writes every float64 exactly as
// encoding/json does (the fast path must not change a digit), on random
// bit patterns and on the edges of the exponent form.
func TestJSONFloat(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	xs := []float64{0, math.Copysign(0, -1), 1, -1, 1e-6, 9.999999e-7, 1e21, 9.99e20, 1e-7, 5e-324, math.MaxFloat64, 0.1, 123456789, 1e-100, -2.5e-9}
	for range 20000 {
		x := math.Float64frombits(rng.Uint64())
		if !math.IsNaN(x) && !math.IsInf(x, 0) {
			xs = append(xs, x)
		}
		xs = append(xs, rng.NormFloat64()*math.Pow(10, float64(rng.IntN(60)-30)))
	}
	for _, x := range xs {
		want, _ := json.Marshal(x)
		got, _ := num(x).MarshalJSON()
		if string(got) != string(want) {
			t.Fatalf("%v: num writes %s, encoding/json %s", x, got, want)
		}
	}
}
