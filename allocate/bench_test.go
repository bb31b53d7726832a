package allocate_test

import (
	"fmt"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
)

// benchLocality is the largest weight of the terms of the benchmark
// Hamiltonians (weights uniform on 1..benchLocality).
const benchLocality = 4

func benchRun(b *testing.B, a allocate.Allocator, qubits, terms, settings int) {
	h, err := hamiltonian.RandomLocal(qubits, terms, benchLocality, 1)
	if err != nil {
		b.Fatal(err)
	}
	b.Run(fmt.Sprintf("qubits=%d/terms=%d/settings=%d", qubits, terms, settings), func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := allocate.Run(h, settings, a, nil); err != nil {
				b.Fatal(err)
			}
		}
	})
}

func BenchmarkGreedy(b *testing.B) {
	benchRun(b, &allocate.Greedy{}, 50, 100_000, 10_000)
}
