package guarantee

import (
	"fmt"
	"testing"

	"github.com/shotplan/shotplan/internal/benchmol"
	"github.com/shotplan/shotplan/internal/cputime"
)

// BenchmarkCertifyMolecule is the work of `shotplan certify` after reading
// its files (CertifyPlan: V, the shares, both truncations and the check of
// the plan's cover counts) for plans of 10^4 shots on the molecular
// fixtures of internal/benchmol (14 250 and 571 875 terms): sorted
// insertion's, a few thousand grouped settings, and random's, about one
// distinct setting a shot. The plans are made outside the timing. Under
// -short (`go test -short -run '^$' -bench . -benchtime 1x`, as CI runs
// every benchmark once to catch one that no longer runs) only the smaller
// fixture, with 100 shots.
func BenchmarkCertifyMolecule(b *testing.B) {
	shots, orbitals := 10_000, benchmol.Orbitals
	if testing.Short() {
		shots, orbitals = 100, orbitals[:1]
	}
	for _, o := range orbitals {
		for _, strategy := range []string{"sorted", "random"} {
			b.Run(fmt.Sprintf("molecule/qubits=%d/terms=%d/plan=%s/shots=%d", 2*o, benchmol.Terms(o), strategy, shots), func(b *testing.B) {
				h, p, err := benchmol.Plan(o, strategy, shots)
				if err != nil {
					b.Fatal(err)
				}
				b.ReportMetric(float64(len(p.Settings)), "settings")
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
}
