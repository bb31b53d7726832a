package allocate_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// sameOverlapPlan fails unless Overlap's groups, rounded shares and split
// on h equal, bit for bit, those of the first, unindexed implementation
// kept in overlap_reference_test.go.
func sameOverlapPlan(t *testing.T, name string, h *hamiltonian.Hamiltonian, budget int, px allocate.Proxy) {
	t.Helper()
	o := &allocate.Overlap{Proxy: px}
	if err := o.Init(h, budget); err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	settings, shots := o.Groups()
	split := o.Split()
	rs, rshots, rsplit, err := allocate.RefOverlapPlan(h, budget, px)
	if err != nil {
		t.Fatalf("%s: reference: %v", name, err)
	}
	if len(settings) != len(rs) {
		t.Fatalf("%s: %d groups, reference %d", name, len(settings), len(rs))
	}
	for g := range rs {
		if !settings[g].Equal(rs[g]) || shots[g] != rshots[g] {
			t.Fatalf("%s: group %d: %s × %d, reference %s × %d", name, g, settings[g], shots[g], rs[g], rshots[g])
		}
	}
	if len(split) != len(rsplit) {
		t.Fatalf("%s: %d split groups, reference %d", name, len(split), len(rsplit))
	}
	entries := 0
	for g := range rsplit {
		a, b := split[g], rsplit[g]
		if !a.Setting.Equal(b.Setting) || len(a.Terms) != len(b.Terms) {
			t.Fatalf("%s: split group %d: %s with %d terms, reference %s with %d", name, g, a.Setting, len(a.Terms), b.Setting, len(b.Terms))
		}
		for k := range b.Terms {
			if a.Terms[k] != b.Terms[k] || math.Float64bits(a.Weights[k]) != math.Float64bits(b.Weights[k]) {
				t.Fatalf("%s: split group %d entry %d: term %d weight %v, reference term %d weight %v", name, g, k, a.Terms[k], a.Weights[k], b.Terms[k], b.Weights[k])
			}
		}
		entries += len(b.Terms)
	}
	t.Logf("%s: %d groups, %d split entries, identical", name, len(rs), entries)
}

// TestOverlapMatchesReference checks the indexed implementation against
// the reference on random local Hamiltonians (one and two words of qubits,
// budgets below and above the number of groups, without and with proxies)
// and, without -short, on the 20-qubit molecular fixture of the
// benchmarks.
func TestOverlapMatchesReference(t *testing.T) {
	for _, c := range []struct{ n, terms, k, budget int }{
		{6, 40, 3, 50}, {12, 300, 4, 1000}, {12, 300, 4, 20}, {20, 2000, 4, 10000}, {70, 600, 5, 3000}, {70, 600, 5, 100},
	} {
		h := mustRandomLocal(t, c.n, c.terms, c.k, uint64(c.n*1000+c.budget))
		name := "random"
		sameOverlapPlan(t, name, h, c.budget, nil)
		bits := make(pauli.Bits, pauli.Words(c.n))
		rng := rand.New(rand.NewPCG(uint64(c.terms), 3))
		for q := range c.n {
			bits[q>>6] |= uint64(rng.IntN(2)) << (q & 63)
		}
		if c.terms <= 600 {
			sameOverlapPlan(t, name+" basis proxy", h, c.budget, allocate.BasisProxy{Bits: bits})
		}
	}
	h := mustRandomLocal(t, 8, 120, 3, 9)
	psi := make([]complex128, 1<<8)
	rng := rand.New(rand.NewPCG(5, 6))
	norm := 0.0
	for b := range psi {
		psi[b] = complex(rng.NormFloat64(), rng.NormFloat64())
		norm += real(psi[b])*real(psi[b]) + imag(psi[b])*imag(psi[b])
	}
	for b := range psi {
		psi[b] /= complex(math.Sqrt(norm), 0)
	}
	sp, err := allocate.NewStateProxy(psi)
	if err != nil {
		t.Fatal(err)
	}
	sameOverlapPlan(t, "random state proxy", h, 500, sp)
	if testing.Short() {
		return
	}
	sameOverlapPlan(t, "molecule 14250 terms", moleculeFixture(t, 10), 10_000, nil)
}
