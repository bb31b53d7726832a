package estimate

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/cputime"
	"github.com/shotplan/shotplan/pauli"
)

// benchRecords returns shots random outcomes spread evenly over distinct
// random settings on n qubits, in runs of one setting.
func benchRecords(n, shots, distinct int, seed uint64) *Records {
	rng := rand.New(rand.NewPCG(seed, 5))
	rec := NewRecords(n)
	b := pauli.NewBits(n)
	per := shots / distinct
	for range distinct {
		s := randomSetting(rng, n)
		for range per {
			for k := range b {
				b[k] = rng.Uint64()
			}
			if r := n & 63; r != 0 {
				b[len(b)-1] &= 1<<r - 1
			}
			rec.Add(s, b)
		}
	}
	return rec
}

// smoke returns n, or under -short n/100 but at least least: with -short,
// `go test -short -run '^$' -bench . -benchtime 1x ./...` runs every
// benchmark once on small sizes (the molecular ones on the 14 250-term
// fixture only), as CI does, so that a benchmark that no longer runs is
// caught. The measured sizes are those without -short.
func smoke(n, least int) int {
	if testing.Short() {
		return max(n/100, least)
	}
	return n
}

// BenchmarkGrouped estimates from 10^5 shots of a 50-qubit Hamiltonian of
// 10^5 random terms of weight 1 to 4, with the shots spread over 10^3
// settings (a grouped plan) or 10^5 (one shot each, as random plans give).
func BenchmarkGrouped(b *testing.B) {
	for _, c := range []struct{ n, terms, shots, settings int }{
		{50, 100000, 100000, 1000},
		{50, 100000, 100000, 100000},
		{50, 100000, 10000, 10000},
	} {
		c.terms, c.shots, c.settings = smoke(c.terms, 100), smoke(c.shots, 100), smoke(c.settings, 10)
		h, err := hamiltonian.RandomLocal(c.n, c.terms, 4, 1)
		if err != nil {
			b.Fatal(err)
		}
		rec := benchRecords(c.n, c.shots, c.settings, 2)
		b.Run(fmt.Sprintf("qubits=%d/terms=%d/shots=%d/settings=%d", c.n, c.terms, c.shots, c.settings), func(b *testing.B) {
			b.ReportAllocs()
			start := cputime.Now()
			for b.Loop() {
				if _, err := Grouped(h, rec, nil); err != nil {
					b.Fatal(err)
				}
			}
			cputime.Report(b, start)
		})
	}
}

// BenchmarkUniformShadow is the shadow estimate on the one-shot-a-setting
// records of BenchmarkGrouped.
func BenchmarkUniformShadow(b *testing.B) {
	terms, shots := smoke(100000, 100), smoke(100000, 100)
	h, err := hamiltonian.RandomLocal(50, terms, 4, 1)
	if err != nil {
		b.Fatal(err)
	}
	rec := benchRecords(50, shots, shots, 2)
	b.Run(fmt.Sprintf("qubits=50/terms=%d/shots=%d/settings=%d", terms, shots, shots), func(b *testing.B) {
		b.ReportAllocs()
		start := cputime.Now()
		for b.Loop() {
			if _, err := UniformShadow(h, rec, &Options{Batches: 10}); err != nil {
				b.Fatal(err)
			}
		}
		cputime.Report(b, start)
	})
}

// BenchmarkSimulator measures 10^4 shots of a random state, one for each of
// 10^4 distinct random settings (as random plans give), or 100 for each of
// 100 settings (as grouped plans give).
func BenchmarkSimulator(b *testing.B) {
	for _, c := range []struct{ n, settings, each int }{
		{16, 10000, 1},
		{16, 100, 100},
		{20, 10000, 1},
		{20, 100, 100},
	} {
		rng := rand.New(rand.NewPCG(3, 4))
		settings := make([]pauli.Setting, c.settings)
		shots := make([]int, c.settings)
		for k := range settings {
			settings[k] = randomSetting(rng, c.n)
			shots[k] = c.each
		}
		psi := randomState(c.n, 8)
		b.Run(fmt.Sprintf("qubits=%d/settings=%d/shots=%d", c.n, c.settings, c.settings*c.each), func(b *testing.B) {
			b.ReportAllocs()
			start := cputime.Now()
			for b.Loop() {
				sim, err := NewSimulator(psi, 1, nil)
				if err != nil {
					b.Fatal(err)
				}
				if err := sim.Run(settings, shots, NewRecords(c.n)); err != nil {
					b.Fatal(err)
				}
			}
			cputime.Report(b, start)
		})
	}
}
