package allocate_test

import (
	"fmt"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/internal/cputime"
)

// BenchmarkCertifySplitMolecule certifies (guarantee.CertifyPlan, δ = 0.05)
// the 10^4- and 10^3-shot plans of overlap and overlap-gc without a proxy on the
// 14 250-term molecular fixture: the certificate of the estimator with the
// plan's coefficient split, with both truncations, the optimal one searched
// over the split's per-(term, group) weights (MATH.md §2.5, §3.3). The
// "unsplit" rows certify the same settings and shots without the split
// (the grouped estimator of MATH.md §2), for comparison. The plans are made
// outside the timing. It reports the threshold rule's dropped terms (the
// search's candidates, with the uncovered ones), the optimal truncation's
// and whether it is exact (1) or not (0).
func BenchmarkCertifySplitMolecule(b *testing.B) {
	h := moleculeFixture(b, 10)
	for _, tc := range []struct {
		name string
		a    allocate.Allocator
	}{{"overlap", &allocate.Overlap{}}, {"overlap-gc", &allocate.OverlapGC{}}} {
		for _, shots := range []int{10_000, 1_000} {
			p, err := allocate.Run(h, shots, tc.a, nil)
			if err != nil {
				b.Fatal(err)
			}
			unsplit := *p
			unsplit.Split = nil
			for _, v := range []struct {
				name string
				p    *allocate.Plan
			}{{"split", p}, {"unsplit", &unsplit}} {
				b.Run(fmt.Sprintf("%s/%s/molecule/qubits=%d/terms=%d/shots=%d", tc.name, v.name, h.Qubits(), h.Len(), shots), func(b *testing.B) {
					b.ReportAllocs()
					var cert *guarantee.Certificate
					cpu := cputime.Now()
					for b.Loop() {
						c, err := guarantee.CertifyPlan(h, v.p, 0.05, nil)
						if err != nil {
							b.Fatal(err)
						}
						cert = c
					}
					cputime.Report(b, cpu)
					exact := 0.0
					if cert.Optimal.Exact {
						exact = 1
					}
					b.ReportMetric(float64(cert.Threshold.Dropped), "threshold-dropped")
					b.ReportMetric(float64(cert.Optimal.Dropped), "dropped")
					b.ReportMetric(exact, "exact")
				})
			}
		}
	}
}
