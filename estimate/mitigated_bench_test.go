package estimate

import (
	"fmt"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/cputime"
)

// BenchmarkMitigated is BenchmarkGrouped's first two cases with readout
// mitigation from calibration intervals ([Mitigated]), for comparison: each
// sample is a product over the term's bits instead of a parity.
func BenchmarkMitigated(b *testing.B) {
	for _, c := range []struct{ n, terms, shots, settings int }{
		{50, 100000, 100000, 1000},
		{50, 100000, 100000, 100000},
	} {
		h, err := hamiltonian.RandomLocal(c.n, c.terms, 4, 1)
		if err != nil {
			b.Fatal(err)
		}
		rec := benchRecords(c.n, c.shots, c.settings, 2)
		cal, err := SimulateCalibration(make([]Readout, c.n), 10000, 1)
		if err != nil {
			b.Fatal(err)
		}
		bounds, err := cal.Bounds(0.01)
		if err != nil {
			b.Fatal(err)
		}
		m, err := NewMitigation(bounds)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(fmt.Sprintf("qubits=%d/terms=%d/shots=%d/settings=%d", c.n, c.terms, c.shots, c.settings), func(b *testing.B) {
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
