package guarantee_test

import (
	"fmt"
	"io"
	"os"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/pauli"
)

// overlapReportEnv names the environment variable that turns on
// TestOverlapReport and gives the file its table is written to.
const overlapReportEnv = "SHOTPLAN_OVERLAP_REPORT"

// TestOverlapReport compares the overlap strategy (MATH.md §2.5) with
// sorted insertion on LiH and H2O (STO-3G, Jordan–Wigner), 10^4 shots:
// ε²M on the exact ground state (MeritOf: the plan's own value and the
// value at the optimal fractions) and the certified bound at δ = 0.05,
// for overlap without a proxy (the worst case), with the Hartree–Fock
// determinant as a BasisProxy, and with the exact ground state as a
// StateProxy. It checks, on every row, that the certificate's V bounds the
// plan's variance in the ground state (PlanValue ≤ M·V, MATH.md §2.5).
func TestOverlapReport(t *testing.T) {
	out := os.Getenv(overlapReportEnv)
	if out == "" {
		t.Skipf("set %s=<file> to build the overlap table", overlapReportEnv)
	}
	writeOverlapTable(t, out, [][2]string{{"lih_sto3g_1.5949A", "LiH"}, {"h2o_sto3g", "H2O"}}, func(hf allocate.BasisProxy, gs *allocate.StateProxy) []overlapRow {
		return []overlapRow{
			{"sorted", "–", &allocate.Sorted{}},
			{"overlap", "none (worst case)", &allocate.Overlap{}},
			{"overlap", "Hartree–Fock", &allocate.Overlap{Proxy: hf}},
			{"overlap", "exact ground state", &allocate.Overlap{Proxy: gs}},
		}
	})
}

// overlapRow is one row of an overlap table: a strategy with its proxy.
type overlapRow struct {
	strategy, proxy string
	a               allocate.Allocator
}

// writeOverlapTable writes to out, for every molecule (file, name) of
// hamiltonian/hamiltoniantest under Jordan–Wigner and every row rows gives
// for its Hartree–Fock determinant and exact ground state, the 10^4-shot
// plan's ε²M in the ground state (MeritOf), its certified bound at
// δ = 0.05 and the bounds of its two truncations (threshold rule and
// optimal search, MATH.md §3.3, with the split's weights, §2.5), checking on
// every row that PlanValue ≤ M·V (MATH.md §2.5).
func writeOverlapTable(t *testing.T, out string, molecules [][2]string, rows func(hf allocate.BasisProxy, gs *allocate.StateProxy) []overlapRow) {
	t.Helper()
	const shots = 10000
	var b strings.Builder
	fmt.Fprintf(&b, "| molecule | terms | strategy | proxy | settings | split entries | ε²M plan | ε²M opt. | certified ε | threshold ε | optimal truncation ε |\n|---|---|---|---|---|---|---|---|---|---|---|\n")
	for _, mol := range molecules {
		name := mol[1]
		h, g := moleculeHamiltonian(t, mol[0], fermion.JordanWigner)
		sec, err := hamiltonian.ElectronSector(h.Qubits(), g.Electrons, g.SpinTwice)
		if err != nil {
			t.Fatal(err)
		}
		gs, err := hamiltonian.GroundState(h, &hamiltonian.EigenOptions{Sector: &sec})
		if err != nil {
			t.Fatal(err)
		}
		hf, err := estimate.HartreeFockState(h.Qubits(), g.Electrons, g.SpinTwice)
		if err != nil {
			t.Fatal(err)
		}
		gsp, err := allocate.NewStateProxy(gs.State)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range rows(basisOf(t, hf, h.Qubits()), gsp) {
			p, err := allocate.Run(h, shots, c.a, nil)
			if err != nil {
				t.Fatal(err)
			}
			m, err := guarantee.MeritOf(h, p, gs.State)
			if err != nil {
				t.Fatal(err)
			}
			cert, err := guarantee.CertifyPlan(h, p, 0.05, nil)
			if err != nil {
				t.Fatal(err)
			}
			if m.PlanValue > shots*cert.Variance*(1+1e-12) {
				t.Errorf("%s %s %s: PlanValue %g above M·V %g", name, c.strategy, c.proxy, m.PlanValue, shots*cert.Variance)
			}
			if o := cert.Optimal; o.Bound > min(cert.Bound, cert.Threshold.Bound)*(1+1e-12) || o.Lower > o.Bound {
				t.Errorf("%s %s %s: optimal truncation %g (lower %g) above dropping nothing %g or the threshold rule %g", name, c.strategy, c.proxy, o.Bound, o.Lower, cert.Bound, cert.Threshold.Bound)
			}
			opt := fmt.Sprintf("%.4g (drop %d", cert.Optimal.Bound, cert.Optimal.Dropped)
			if cert.Optimal.Exact {
				opt += ", exact)"
			} else {
				opt += fmt.Sprintf(", ≥ %.4g)", cert.Optimal.Lower)
			}
			fmt.Fprintf(&b, "| %s | %d | %s | %s | %d | %d | %.3g | %.3g | %.3g | %.4g (drop %d) | %s |\n", name, h.Len(), c.strategy, c.proxy, m.Settings, p.Split.Entries(), m.PlanValue, m.Optimal, cert.Bound, cert.Threshold.Bound, cert.Threshold.Dropped, opt)
		}
	}
	if err := atomicfile.Write(out, func(w io.Writer) error {
		_, err := io.WriteString(w, b.String())
		return err
	}); err != nil {
		t.Fatal(err)
	}
}

// basisOf returns the BasisProxy of a computational-basis state given by
// its amplitudes (one amplitude of modulus 1).
func basisOf(t *testing.T, amp []complex128, n int) allocate.BasisProxy {
	t.Helper()
	for b, a := range amp {
		if real(a)*real(a)+imag(a)*imag(a) > 0.5 {
			out := pauli.NewBits(n)
			for q := range n {
				out.Set(q, uint64(b>>q&1))
			}
			return allocate.BasisProxy{Bits: out}
		}
	}
	t.Fatal("not a basis state")
	return allocate.BasisProxy{}
}
