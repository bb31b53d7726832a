package allocate_test

import (
	"testing"

	"github.com/shotplan/shotplan/allocate"
)

// BenchmarkDerandomizedLong plans ten times the shots of the other
// benchmarks on the random 10^5-term Hamiltonian: the cost per setting of
// derand depends on the terms' weights, which fall as they are covered.
func BenchmarkDerandomizedLong(b *testing.B) {
	mk := func() allocate.Allocator { return &allocate.Derandomized{} }
	benchPlan(b, mk, benchSize{size1e5.qubits, size1e5.terms, 100_000})
}
