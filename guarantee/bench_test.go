package guarantee

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/cputime"
	"github.com/shotplan/shotplan/pauli"
)

// packedSettings returns k settings, each made by walking the terms of h in
// a random order and fixing the letters of every term compatible with the
// letters fixed so far (free qubits get Z): settings that cover many terms,
// like the greedy strategy's, without depending on it.
func packedSettings(h *hamiltonian.Hamiltonian, k int, rng *rand.Rand) []pauli.Setting {
	n := h.Qubits()
	out := make([]pauli.Setting, k)
	letters := make([]pauli.Letter, n)
	for s := range out {
		clear(letters)
		for range 200 {
			p := h.Pauli(rng.IntN(h.Len()))
			ok := true
			for q := range n {
				if l := p.At(q); l != pauli.I && letters[q] != pauli.I && letters[q] != l {
					ok = false
					break
				}
			}
			if !ok {
				continue
			}
			for q := range n {
				if l := p.At(q); l != pauli.I {
					letters[q] = l
				}
			}
		}
		b := make([]byte, n)
		for q, l := range letters {
			b[q] = "ZXYZ"[l]
		}
		out[s] = pauli.MustParseSetting(string(b))
	}
	return out
}

// BenchmarkCertify measures a full certificate (exact V, shares, both
// truncations) of a plan of distinct settings, one to three shots each.
func BenchmarkCertify(b *testing.B) {
	for _, sz := range []struct{ qubits, terms, settings int }{
		{50, 10_000, 1_000},
		{50, 100_000, 10_000},
	} {
		b.Run(fmt.Sprintf("plan=packed/qubits=%d/terms=%d/settings=%d", sz.qubits, sz.terms, sz.settings), func(b *testing.B) {
			rng := rand.New(rand.NewPCG(21, 22))
			h := randomH(b, rng, sz.qubits, sz.terms, 4)
			settings := packedSettings(h, sz.settings, rng)
			shots := make([]int, len(settings))
			for k := range shots {
				shots[k] = 1 + rng.IntN(3)
			}
			b.ReportAllocs()
			cpu := cputime.Now()
			for b.Loop() {
				if _, err := Certify(h, settings, shots, 0.05, nil); err != nil {
					b.Fatal(err)
				}
			}
			cputime.Report(b, cpu)
		})
	}
}

// BenchmarkCertifyGreedy certifies the greedy strategy's plan of 10^4 shots
// for a random 4-local Hamiltonian (hamiltonian.RandomLocal); the plan is
// made outside the timing.
func BenchmarkCertifyGreedy(b *testing.B) {
	for _, sz := range []struct{ qubits, terms, shots int }{
		{50, 100_000, 10_000},
	} {
		b.Run(fmt.Sprintf("qubits=%d/terms=%d/shots=%d", sz.qubits, sz.terms, sz.shots), func(b *testing.B) {
			h, err := hamiltonian.RandomLocal(sz.qubits, sz.terms, 4, 1)
			if err != nil {
				b.Fatal(err)
			}
			p, err := allocate.Run(h, sz.shots, &allocate.Greedy{}, nil)
			if err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			cpu := cputime.Now()
			for b.Loop() {
				if _, err := CertifyPlan(h, p, 0.05, nil); err != nil {
					b.Fatal(err)
				}
			}
			cputime.Report(b, cpu)
		})
	}
}

// BenchmarkEmpiricalLarge measures the data bounds of the estimate command
// (pooled and residual) for 10^5 shots on 10^5 distinct settings, drawn
// uniformly, of a random 4-local Hamiltonian of 10^5 terms on 50 qubits,
// with random outcomes. Peak memory: run under /usr/bin/time -v.
func BenchmarkEmpiricalLarge(b *testing.B) {
	const n = 50
	terms, shots := 100_000, 100_000
	if testing.Short() {
		// A smoke run (see BenchmarkCertifyMolecule): small sizes.
		terms, shots = 1000, 1000
	}
	h, err := hamiltonian.RandomLocal(n, terms, 4, 1)
	if err != nil {
		b.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(31, 32))
	rec := estimate.NewRecords(n)
	letters := make([]byte, n)
	for range shots {
		for q := range letters {
			letters[q] = "XYZ"[rng.IntN(3)]
		}
		if err := rec.Add(pauli.MustParseSetting(string(letters)), pauli.Bits{rng.Uint64() & (1<<n - 1)}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportAllocs()
	cpu := cputime.Now()
	for b.Loop() {
		for _, form := range []EmpiricalForm{Pooled, Residual} {
			if _, err := Empirical(h, rec, 0.025, &EmpiricalOptions{Form: form}); err != nil {
				b.Fatal(err)
			}
		}
	}
	cputime.Report(b, cpu)
}

// BenchmarkCertifyLarge is the work of `shotplan certify` after reading
// its files, for 10^5 distinct random local settings (one shot each) on a
// random 4-local Hamiltonian of 10^5 terms on 50 qubits (1.2·10^9 covered
// (setting, term) pairs, too many to store): the certificate with its
// shares and both truncations, and the comparison of its cover counts with
// the plan's (CertifyPlan; the command checks the plan file against the
// certificate's counts the same way).
func BenchmarkCertifyLarge(b *testing.B) {
	const n, terms, settings = 50, 100_000, 100_000
	h, err := hamiltonian.RandomLocal(n, terms, 4, 1)
	if err != nil {
		b.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	p := &allocate.Plan{Qubits: n}
	letters := make([]byte, n)
	for range settings {
		for q := range letters {
			letters[q] = "XYZ"[rng.IntN(3)]
		}
		p.Settings = append(p.Settings, pauli.MustParseSetting(string(letters)))
		p.Shots = append(p.Shots, 1)
	}
	if p.Cover, err = allocate.CoverCounts(h, p.Settings, p.Shots); err != nil {
		b.Fatal(err)
	}
	b.Run(fmt.Sprintf("qubits=%d/terms=%d/settings=%d", n, terms, settings), func(b *testing.B) {
		b.ReportAllocs()
		cpu := cputime.Now()
		for b.Loop() {
			if _, err := CertifyPlan(h, p, 0.05, nil); err != nil {
				b.Fatal(err)
			}
		}
		cputime.Report(b, cpu)
	})
}
