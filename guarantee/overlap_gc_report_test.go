package guarantee_test

import (
	"os"
	"testing"

	"github.com/shotplan/shotplan/allocate"
)

// overlapGCReportEnv names the environment variable that turns on
// TestOverlapGCReport and gives the file its table is written to.
const overlapGCReportEnv = "SHOTPLAN_OVERLAP_GC_REPORT"

// TestOverlapGCReport compares overlap-gc (overlapped generally commuting
// groups with coefficient splitting) with overlap, sorted-gc (with and
// without the Hartree–Fock proxy) and greedy-gc on H2O and BeH2 (STO-3G, Jordan–Wigner), 10^4 shots: ε²M in
// the exact ground state (MeritOf) and the certified bound at δ = 0.05.
// It checks, on every row, that the certificate's V bounds the plan's
// variance in the ground state (PlanValue ≤ M·V, MATH.md §2.5).
func TestOverlapGCReport(t *testing.T) {
	out := os.Getenv(overlapGCReportEnv)
	if out == "" {
		t.Skipf("set %s=<file> to build the overlap-gc table", overlapGCReportEnv)
	}
	writeOverlapTable(t, out, [][2]string{{"h2o_sto3g", "H2O"}, {"beh2_sto3g_1.326A", "BeH2"}}, func(hf allocate.BasisProxy, _ *allocate.StateProxy) []overlapRow {
		return []overlapRow{
			{"sorted-gc", "–", &allocate.SortedGC{}},
			{"sorted-gc", "Hartree–Fock", &allocate.SortedGC{Proxy: hf}},
			{"greedy-gc", "–", &allocate.GreedyGC{}},
			{"overlap", "none (worst case)", &allocate.Overlap{}},
			{"overlap", "Hartree–Fock", &allocate.Overlap{Proxy: hf}},
			{"overlap-gc", "none (worst case)", &allocate.OverlapGC{}},
			{"overlap-gc", "Hartree–Fock", &allocate.OverlapGC{Proxy: hf}},
		}
	})
}
