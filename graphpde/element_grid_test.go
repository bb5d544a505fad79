package graphpde

import "testing"

// TestCondensePairEqualsSingle: the interleaved sweep of two edges gives the
// same storage and end maps, bit for bit, as two single sweeps (the same
// operations in the same order on each lane).
func TestCondensePairEqualsSingle(t *testing.T) {
	const n = 17
	ka := newConstCell(n, 1.3, 0.7, 2.5, 0.4, 1.1)
	kb := newConstCell(n, 0.6, 2.0, -40, 0, -0.3)
	sa, sb := make([]float64, 3*(n-1)), make([]float64, 3*(n-1))
	ra, rb := make([]float64, 3*(n-1)), make([]float64, 3*(n-1))
	da, db, ga, gb := condenseConstPair(sa, sb, &ka, &kb)
	wda, wga := condenseConst(ra, &ka)
	wdb, wgb := condenseConst(rb, &kb)
	if da != wda || ga != wga || db != wdb || gb != wgb {
		t.Errorf("pair maps %v %v %v %v, single %v %v %v %v", da, ga, db, gb, wda, wga, wdb, wgb)
	}
	for i := range sa {
		if sa[i] != ra[i] || sb[i] != rb[i] {
			t.Fatalf("storage differs at %d", i)
		}
	}
}
