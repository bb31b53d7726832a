package allocate_test

import (
	"fmt"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/cputime"
)

// benchLocality is the largest weight of the terms of the benchmark
// Hamiltonians: hamiltonian.RandomLocal draws weights uniformly on
// 1..benchLocality, qubits and letters uniformly, coefficients on [−1, 1).
const benchLocality = 4

type benchSize struct{ qubits, terms, settings int }

// benchPlan runs a fresh strategy from mk to plan size.settings shots on a
// seeded random Hamiltonian, built before the timed loop.
func benchPlan(b *testing.B, mk func() allocate.Allocator, sizes ...benchSize) {
	for _, sz := range sizes {
		b.Run(fmt.Sprintf("qubits=%d/terms=%d/settings=%d", sz.qubits, sz.terms, sz.settings), func(b *testing.B) {
			h, err := hamiltonian.RandomLocal(sz.qubits, sz.terms, benchLocality, 1)
			if err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			start := cputime.Now()
			for b.Loop() {
				if _, err := allocate.Run(h, sz.settings, mk(), nil); err != nil {
					b.Fatal(err)
				}
			}
			cputime.Report(b, start)
		})
	}
}

var (
	size1e5 = benchSize{50, 100_000, 10_000}
	size1e6 = benchSize{100, 1_000_000, 10_000}
)

func BenchmarkGreedy(b *testing.B) {
	benchPlan(b, func() allocate.Allocator { return &allocate.Greedy{} }, size1e5, size1e6)
}

func BenchmarkDerandomized(b *testing.B) {
	benchPlan(b, func() allocate.Allocator { return &allocate.Derandomized{} }, size1e5)
}

func BenchmarkSorted(b *testing.B) {
	benchPlan(b, func() allocate.Allocator { return &allocate.Sorted{} }, size1e5)
}

func BenchmarkRandom(b *testing.B) {
	benchPlan(b, func() allocate.Allocator { return &allocate.Random{Seed: 1} }, size1e5)
}

func BenchmarkBiased(b *testing.B) {
	benchPlan(b, func() allocate.Allocator { return &allocate.Biased{Seed: 1} }, size1e5)
}

func BenchmarkImportance(b *testing.B) {
	benchPlan(b, func() allocate.Allocator { return &allocate.Importance{Seed: 1} }, size1e5)
}
