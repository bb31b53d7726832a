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
		sz.terms, sz.settings = smoke(sz.terms, 100), smoke(sz.settings, 10)
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

// benchSettings is the budget of the molecular rows of every strategy.
const benchSettings = 10_000

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

func BenchmarkGreedy(b *testing.B) {
	mk := func() allocate.Allocator { return &allocate.Greedy{} }
	benchPlan(b, mk, size1e5, size1e6)
	benchMoleculePlan(b, mk, benchSettings)
}

func BenchmarkDerandomized(b *testing.B) {
	mk := func() allocate.Allocator { return &allocate.Derandomized{} }
	benchPlan(b, mk, size1e5)
	benchMoleculePlan(b, mk, benchSettings)
}

func BenchmarkSorted(b *testing.B) {
	mk := func() allocate.Allocator { return &allocate.Sorted{} }
	benchPlan(b, mk, size1e5)
	benchMoleculePlan(b, mk, benchSettings)
}

func BenchmarkRandom(b *testing.B) {
	mk := func() allocate.Allocator { return &allocate.Random{Seed: 1} }
	benchPlan(b, mk, size1e5)
	benchMoleculePlan(b, mk, benchSettings)
}

func BenchmarkBiased(b *testing.B) {
	mk := func() allocate.Allocator { return &allocate.Biased{Seed: 1} }
	benchPlan(b, mk, size1e5)
	benchMoleculePlan(b, mk, benchSettings)
}

func BenchmarkImportance(b *testing.B) {
	mk := func() allocate.Allocator { return &allocate.Importance{Seed: 1} }
	benchPlan(b, mk, size1e5)
	benchMoleculePlan(b, mk, benchSettings)
}

// The strategies of generally commuting settings, on both molecular
// fixtures; GreedyGC also with 100 settings on the 571 875-term one, a
// shorter run to estimate from. The random rows of grouping are
// BenchmarkSortedGCInit and BenchmarkColorGCInit.

func BenchmarkSortedGC(b *testing.B) {
	benchMoleculePlan(b, func() allocate.Allocator { return &allocate.SortedGC{} }, benchSettings)
}

func BenchmarkColorGC(b *testing.B) {
	benchMoleculePlan(b, func() allocate.Allocator { return &allocate.ColorGC{} }, benchSettings)
}

func BenchmarkGreedyGC(b *testing.B) {
	mk := func() allocate.Allocator { return &allocate.GreedyGC{} }
	benchMoleculePlan(b, mk, benchSettings)
	benchMoleculePlan(b, mk, 100, 25)
}
