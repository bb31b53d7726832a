package fermion

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// BenchmarkHubbard maps periodic Hubbard rectangles; 6×6 has 72 modes, so
// its strings take two words.
func BenchmarkHubbard(b *testing.B) {
	for _, side := range []int{4, 6} {
		m := Hubbard{Width: side, Height: side, PeriodicX: true, PeriodicY: true, Hopping: 1, Interaction: 4, ChemicalPotential: 2}
		o, err := m.Operator()
		if err != nil {
			b.Fatal(err)
		}
		for _, enc := range []Encoding{JordanWigner, BravyiKitaev} {
			b.Run(fmt.Sprintf("modes=%d/products=%d/enc=%s", o.Modes(), o.Len(), enc), func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					if _, err := o.QubitHamiltonian(enc); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}

// BenchmarkNormalOrder normal-orders seeded random products of up to four
// ladder operators.
func BenchmarkNormalOrder(b *testing.B) {
	for _, terms := range []int{1000, 100000} {
		o := randomOperator(rand.New(rand.NewPCG(1, 2)), 20, terms)
		b.Run(fmt.Sprintf("modes=20/terms=%d", terms), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				o.NormalOrder()
			}
		})
	}
}
