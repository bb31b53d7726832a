package estimate

import (
	"fmt"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/cputime"
)

// BenchmarkMitigated is BenchmarkGrouped's first two cases with readout
// mitigation from calibration intervals ([Mitigated]), for comparison: each
// sample is a product over the term's bits instead of a parity. The case
// with pairs reads the 50 qubits as 25 disjoint pairs (0, 1), (2, 3), ...
// through their 4×4 models (MATH.md §2.1.5).
func BenchmarkMitigated(b *testing.B) {
	for _, c := range []struct{ n, terms, shots, settings, pairs int }{
		{50, 100000, 100000, 1000, 0},
		{50, 100000, 100000, 100000, 0},
		{50, 100000, 100000, 1000, 25},
	} {
		c.terms, c.shots, c.settings = smoke(c.terms, 100), smoke(c.shots, 100), smoke(c.settings, 10)
		h, err := hamiltonian.RandomLocal(c.n, c.terms, 4, 1)
		if err != nil {
			b.Fatal(err)
		}
		rec := benchRecords(c.n, c.shots, c.settings, 2)
		cal, err := SimulateCalibration(make([]Readout, c.n), 10000, 1)
		if err != nil {
			b.Fatal(err)
		}
		name := fmt.Sprintf("qubits=%d/terms=%d/shots=%d/settings=%d", c.n, c.terms, c.shots, c.settings)
		if c.pairs > 0 {
			var pairs [][2]int
			for k := range c.pairs {
				pairs = append(pairs, [2]int{2 * k, 2*k + 1})
			}
			if cal, err = NewPairCalibration(c.n, pairs); err != nil {
				b.Fatal(err)
			}
			for k := range cal.Pairs {
				for s := range 4 {
					for r := range 4 {
						cal.Pairs[k].Counts[s][r] = 100 + 9600*btoi(r == s)
					}
				}
			}
			name += fmt.Sprintf("/pairs=%d", c.pairs)
		}
		m, err := cal.Mitigation(0.01)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(name, func(b *testing.B) {
			b.ReportAllocs()
			start := cputime.Now()
			for b.Loop() {
				if _, err := Mitigated(h, rec, m, nil); err != nil {
					b.Fatal(err)
				}
			}
			cputime.Report(b, start)
		})
	}
}

func btoi(v bool) int {
	if v {
		return 1
	}
	return 0
}
