package allocate_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/internal/cputime"
	"github.com/shotplan/shotplan/pauli"
)

// BenchmarkProxyShares times Init of the grouping strategies on H2O (JW,
// 14 qubits, 1086 terms) without a proxy, with a basis-state proxy (the
// Hartree–Fock determinant, bits 0–9) and with a 2^14-amplitude state proxy
// (a random state: the cost does not depend on which state).
func BenchmarkProxyShares(b *testing.B) {
	h, err := hamiltoniantest.Molecule(hamiltoniantest.H2O, fermion.JordanWigner)
	if err != nil {
		b.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	amp := make([]complex128, 1<<h.Qubits())
	norm := 0.0
	for k := range amp {
		amp[k] = complex(rng.NormFloat64(), rng.NormFloat64())
		norm += real(amp[k])*real(amp[k]) + imag(amp[k])*imag(amp[k])
	}
	for k := range amp {
		amp[k] /= complex(math.Sqrt(norm), 0)
	}
	state, err := allocate.NewStateProxy(amp)
	if err != nil {
		b.Fatal(err)
	}
	for _, px := range []struct {
		name string
		p    allocate.Proxy
	}{{"none", nil}, {"basis", allocate.BasisProxy{Bits: pauli.Bits{1<<10 - 1}}}, {"state", state}} {
		for _, st := range []struct {
			name string
			a    func() allocate.Allocator
		}{
			{"sorted", func() allocate.Allocator { return &allocate.Sorted{Proxy: px.p} }},
			{"color-gc", func() allocate.Allocator { return &allocate.ColorGC{Proxy: px.p} }},
		} {
			b.Run("strategy="+st.name+"/proxy="+px.name, func(b *testing.B) {
				b.ReportAllocs()
				start := cputime.Now()
				for b.Loop() {
					if err := st.a().Init(h, 1000000); err != nil {
						b.Fatal(err)
					}
				}
				cputime.Report(b, start)
			})
		}
	}
}
