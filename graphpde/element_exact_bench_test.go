package graphpde

import "testing"

// BenchmarkExactElement times one element evaluation in the regimes of
// exactElement (|κL| < 1 by the series, ≥ 1 in closed form), real and complex.
func BenchmarkExactElement(b *testing.B) {
	b.Run("real/small", func(b *testing.B) {
		for b.Loop() {
			exactElement(1, 0.3, 0.2, 1.0, 1)
		}
	})
	b.Run("real/large", func(b *testing.B) {
		for b.Loop() {
			exactElement(1, 0.3, 20.0, 1.0, 1)
		}
	})
	b.Run("complex/small", func(b *testing.B) {
		for b.Loop() {
			exactElement(1, 0.3, complex(0.2, 0.3), complex(1, 0), 1)
		}
	})
	b.Run("complex/large", func(b *testing.B) {
		for b.Loop() {
			exactElement(1, 0.3, complex(20, 30), complex(1, 0), 1)
		}
	})
}
