package allocate_test

import (
	"fmt"
	"github.com/shotplan/shotplan/internal/cputime"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// BenchmarkCoverCounts counts the covers of 10^5 distinct random local
// settings on a random 4-local Hamiltonian of 10^5 terms on 50 qubits, the
// recount PlanFile.Check does before a certificate.
func BenchmarkCoverCounts(b *testing.B) {
	const qubits, terms, settings = 50, 100_000, 100_000
	h, err := hamiltonian.RandomLocal(qubits, terms, 4, 1)
	if err != nil {
		b.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	ss := make([]pauli.Setting, settings)
	shots := make([]int, settings)
	buf := make([]byte, qubits)
	for k := range ss {
		for q := range buf {
			buf[q] = "XYZ"[rng.IntN(3)]
		}
		ss[k] = pauli.MustParseSetting(string(buf))
		shots[k] = 1
	}
	b.Run(fmt.Sprintf("qubits=%d/terms=%d/settings=%d", qubits, terms, settings), func(b *testing.B) {
		b.ReportAllocs()
		cpu := cputime.Now()
		for b.Loop() {
			if _, err := allocate.CoverCounts(h, ss, shots); err != nil {
				b.Fatal(err)
			}
		}
		cputime.Report(b, cpu)
	})
}
