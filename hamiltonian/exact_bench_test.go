package hamiltonian

import (
	"fmt"
	"testing"
)

// BenchmarkApply measures one product H·ψ for a random 4-local Hamiltonian.
func BenchmarkApply(b *testing.B) {
	for _, c := range []struct{ n, terms int }{{16, 1000}, {20, 100}, {20, 1000}} {
		b.Run(fmt.Sprintf("qubits=%d/terms=%d", c.n, c.terms), func(b *testing.B) {
			h, err := RandomLocal(c.n, c.terms, 4, 1)
			if err != nil {
				b.Fatal(err)
			}
			src := randomState(c.n, 2)
			dst := make([]complex128, len(src))
			b.ReportAllocs()
			for b.Loop() {
				h.Apply(dst, src)
			}
		})
	}
}

// BenchmarkGroundState measures the lowest eigenpair of the Heisenberg ring
// J Σ (XX+YY+ZZ) with default settings.
func BenchmarkGroundState(b *testing.B) {
	for _, n := range []int{12, 16} {
		b.Run(fmt.Sprintf("model=heisenberg-ring/qubits=%d", n), func(b *testing.B) {
			h, err := Heisenberg(Ring(n), 1)
			if err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			for b.Loop() {
				if _, err := GroundState(h, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
