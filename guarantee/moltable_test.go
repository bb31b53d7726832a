package guarantee_test

import (
	"fmt"
	"io"
	"math"
	"math/bits"
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

// moleculeTableEnv names the environment variable that turns on
// TestMoleculeTable and gives the file the table is written to; see
// BENCHMARKS.md for the command.
const moleculeTableEnv = "SHOTPLAN_MOLTABLE"

// TestMoleculeTable builds the molecule table of BENCHMARKS.md: for every
// reference molecule, encoding and built-in strategy, a plan of 10^4 shots,
// its ε²M on the exact ground state (MeritOf), its certificate at δ = 0.05
// (CertifyPlan), the data bound of one seeded simulation (Empirical) and
// the shots to certify 1.6 mHa (BudgetOf), with the expected shots of the
// anytime route without and with the Hartree–Fock baseline (BudgetWith,
// MATH.md §4.11). It also checks, on every row, properties that hold
// whatever the numbers are:
//
//   - 0 < Optimal ≤ PlanValue (Cauchy–Schwarz, MATH.md §2.3) and
//     PlanValue ≤ M·V, the worst case over all states (|Z| ≤ s_Q, §3.1);
//   - BudgetOf's proxy variance is MeritOf's PlanValue/M (the same
//     quantity computed by two routes);
//   - the certified radius times sqrt(N) does not change when every shot
//     count is multiplied by 4 (ε_stat = sqrt(2 V ln(2/δ)), V ∝ 1/N);
//   - Copies copies of the plan certify 1.6 mHa and Copies − 1 do not
//     (when the plan covers every term);
//   - the baseline changes only the anytime figures (same Copies and proxy
//     variance).
//
// It also checks that the Jordan–Wigner sector ground state, carried to the
// Bravyi–Kitaev basis, has the same energy there (a state whose energy is
// the lowest eigenvalue is a ground state), and that the Bravyi–Kitaev
// Hartree–Fock determinant is the Jordan–Wigner one carried the same way.
func TestMoleculeTable(t *testing.T) {
	out := os.Getenv(moleculeTableEnv)
	if out == "" {
		t.Skipf("set %s=<file> to build the molecule table", moleculeTableEnv)
	}
	const (
		shots  = 10000
		delta  = 0.05
		target = 1.6e-3
		seed   = 1
	)
	var b strings.Builder
	fmt.Fprintf(&b, "| molecule | enc | qubits | terms | strategy | settings | ε²M plan | ε²M opt. | certified ε | data ε | worst-case shots | anytime shots | anytime, HF baseline |\n")
	fmt.Fprintf(&b, "|---|---|---|---|---|---|---|---|---|---|---|---|---|\n")
	for _, mol := range []struct{ file, name string }{
		{"h2_sto3g_0.7414A", "H2"}, {"lih_sto3g_1.5949A", "LiH"}, {"h2o_sto3g", "H2O"},
		{"beh2_sto3g_1.326A", "BeH2"}, {"nh3_sto3g", "NH3"},
	} {
		// The exact ground state: Jordan–Wigner in the electron sector of
		// the file's NELEC and MS2, carried to the Bravyi–Kitaev basis by
		// bkState (a whole-space search takes minutes on NH3).
		hjw, g := moleculeHamiltonian(t, mol.file, fermion.JordanWigner)
		sec, err := hamiltonian.ElectronSector(hjw.Qubits(), g.Electrons, g.SpinTwice)
		if err != nil {
			t.Fatal(err)
		}
		gs, err := hamiltonian.GroundState(hjw, &hamiltonian.EigenOptions{Sector: &sec})
		if err != nil {
			t.Fatal(err)
		}
		hfJW, err := g.HartreeFockBits(fermion.JordanWigner)
		if err != nil {
			t.Fatal(err)
		}
		for _, enc := range []fermion.Encoding{fermion.JordanWigner, fermion.BravyiKitaev} {
			h, state := hjw, gs.State
			hf, err := g.HartreeFockBits(enc)
			if err != nil {
				t.Fatal(err)
			}
			if enc == fermion.BravyiKitaev {
				if got := bkState(basisState(hfJW, h.Qubits()), h.Qubits()); got[hf[0]] != 1 {
					t.Fatalf("%s: the Bravyi–Kitaev Hartree–Fock determinant %s is not the Jordan–Wigner one carried over", mol.name, hf.Format(h.Qubits()))
				}
				h, _ = moleculeHamiltonian(t, mol.file, enc)
				state = bkState(gs.State, h.Qubits())
				// The same eigenvector in the other basis has the same
				// energy, up to the residual and rounding (1e-9 for a few
				// thousand terms).
				if e := h.Energy(state); math.Abs(e-gs.Energy) > gs.Residual+1e-9 {
					t.Fatalf("%s: Bravyi–Kitaev energy of the carried ground state %.10f, Jordan–Wigner %.10f", mol.name, e, gs.Energy)
				}
			}
			base, err := guarantee.BaselineOf(h, allocate.BasisProxy{Bits: hf})
			if err != nil {
				t.Fatal(err)
			}
			for _, name := range allocate.Names() {
				if name == "fixed" {
					continue // needs settings from the user
				}
				a, err := allocate.ByName(name, seed)
				if err != nil {
					t.Fatal(err)
				}
				p, err := allocate.Run(h, shots, a, nil)
				if err != nil {
					t.Fatalf("%s %v %s: %v", mol.name, enc, name, err)
				}
				row := tableRow(t, h, p, state, base, delta, target, seed)
				fmt.Fprintf(&b, "| %s | %s | %d | %d | %s | %s |\n", mol.name, encName(enc), h.Qubits(), h.Len(), name, row)
			}
		}
	}
	if err := atomicfile.Write(out, func(w io.Writer) error {
		_, err := io.WriteString(w, b.String())
		return err
	}); err != nil {
		t.Fatal(err)
	}
}

// bkState carries a state from the Jordan–Wigner basis (bit k of f is the
// occupation of spin orbital k) to the Bravyi–Kitaev basis, |f⟩ ↦ |β f⟩:
// qubit k holds the parity of the occupations l = k+1−2^t, …, k, where 2^t
// is the lowest set bit of k+1. These are the rows of the matrix β of
// Seeley, Richard & Love, arXiv:1208.5986, eq. 23 (β_1 = [1],
// β_2m = [[β_m, 0], [A_m, β_m]], A_m zero but an all-ones last row), cut to
// n qubits; the caller checks the energy of the result.
func bkState(psi []complex128, n int) []complex128 {
	out := make([]complex128, len(psi))
	for f, v := range psi {
		if v == 0 {
			continue
		}
		var b uint64
		for k := range n {
			lo := k + 1 - (k+1)&-(k+1)
			w := uint64(f) >> lo & (1<<(k-lo+1) - 1)
			b |= uint64(bits.OnesCount64(w)&1) << k
		}
		out[b] = v
	}
	return out
}

func encName(e fermion.Encoding) string {
	if e == fermion.JordanWigner {
		return "JW"
	}
	return "BK"
}

// tableRow evaluates one plan and checks the properties listed at
// TestMoleculeTable; it returns the row's cells from "settings" on.
func tableRow(t *testing.T, h *hamiltonian.Hamiltonian, p *allocate.Plan, state []complex128, base []float64, delta, target float64, seed uint64) string {
	t.Helper()
	what := p.Stats.Strategy
	m, err := guarantee.MeritOf(h, p, state)
	if err != nil {
		t.Fatalf("%s: %v", what, err)
	}
	cert, err := guarantee.CertifyPlan(h, p, delta, nil)
	if err != nil {
		t.Fatalf("%s: %v", what, err)
	}
	M := float64(m.Shots)
	if !(m.Optimal > 0 && m.Optimal <= m.PlanValue*(1+1e-12) && m.PlanValue <= M*cert.Variance*(1+1e-12)) {
		t.Errorf("%s: Optimal %g, PlanValue %g, M·V %g: want 0 < Optimal ≤ PlanValue ≤ M·V", what, m.Optimal, m.PlanValue, M*cert.Variance)
	}
	cert4, err := guarantee.CertifyPlan(h, copies(p, 4), delta, nil)
	if err != nil {
		t.Fatalf("%s: %v", what, err)
	}
	if r1, r4 := cert.Radius*math.Sqrt(M), cert4.Radius*math.Sqrt(4*M); math.Abs(r1-r4) > 1e-9*r1 {
		t.Errorf("%s: radius·sqrt(N) %g at N and %g at 4N", what, r1, r4)
	}
	sim, err := estimate.NewSimulator(state, seed, nil)
	if err != nil {
		t.Fatal(err)
	}
	rec := estimate.NewRecords(h.Qubits())
	if err := sim.Run(p.Settings, p.Shots, rec); err != nil {
		t.Fatalf("%s: %v", what, err)
	}
	db, err := guarantee.Empirical(h, rec, delta, nil)
	if err != nil {
		t.Fatalf("%s: %v", what, err)
	}
	bud, err := guarantee.BudgetOf(h, p, target, delta, state)
	if err != nil {
		t.Fatalf("%s: %v", what, err)
	}
	if bud.Reachable && math.Abs(bud.ProxyVariance*M-m.PlanValue) > 1e-9*m.PlanValue {
		t.Errorf("%s: BudgetOf proxy M·Var %g, MeritOf %g", what, bud.ProxyVariance*M, m.PlanValue)
	}
	// A plan that leaves a term uncovered cannot certify by copies: the
	// budget is asked of the same strategy's plan for 10^5 and 10^6 shots
	// instead, while it has at most 2·10^4 distinct settings (the state
	// proxy costs a transform per setting).
	ref := ""
	for budget := 100000; !bud.Reachable && budget <= 1000000; budget *= 10 {
		a, err := allocate.ByName(what, seed)
		if err != nil {
			t.Fatal(err)
		}
		big, err := allocate.Run(h, budget, a, nil)
		if err != nil {
			t.Fatalf("%s: %v", what, err)
		}
		if s, _ := big.Distinct(); len(s) > 20000 {
			break
		}
		if bud, err = guarantee.BudgetOf(h, big, target, delta, state); err != nil {
			t.Fatalf("%s: %v", what, err)
		}
		p, ref = big, fmt.Sprintf(" (ref. %.0g)", float64(budget))
	}
	worst, anytime, anytimeHF := "– (uncovered terms)", "– (uncovered terms)", "– (uncovered terms)"
	if bud.Reachable {
		hf, err := guarantee.BudgetWith(h, p, target, delta, &guarantee.ShotBudgetOptions{State: state, Baseline: base})
		if err != nil {
			t.Fatalf("%s: %v", what, err)
		}
		if hf.Copies != bud.Copies || hf.ProxyVariance != bud.ProxyVariance || !hf.Baseline {
			t.Errorf("%s: with the baseline %d copies, proxy variance %g; without %d, %g", what, hf.Copies, hf.ProxyVariance, bud.Copies, bud.ProxyVariance)
		}
		anytimeHF = sci(float64(hf.AnytimeShots)) + ref
		for _, r := range []int{bud.Copies, bud.Copies - 1} {
			if r < 1 {
				continue
			}
			c, err := guarantee.CertifyPlan(h, copies(p, r), delta, nil)
			if err != nil {
				t.Fatalf("%s: %v", what, err)
			}
			if ok := c.Bound <= target; ok != (r == bud.Copies) {
				t.Errorf("%s: %d copies certify %g (target %g)", what, r, c.Bound, target)
			}
		}
		worst, anytime = sci(float64(bud.Shots))+ref, sci(float64(bud.AnytimeShots))+ref
	}
	return fmt.Sprintf("%d | %.3g | %.3g | %.3g | %.3g | %s | %s | %s", m.Settings, m.PlanValue, m.Optimal, cert.Bound, db.Bound, worst, anytime, anytimeHF)
}

// copies returns r copies of p: every shot and cover count times r.
func copies(p *allocate.Plan, r int) *allocate.Plan {
	cp := *p
	cp.Shots = make([]int, len(p.Shots))
	for k, s := range p.Shots {
		cp.Shots[k] = r * s
	}
	cp.Cover = make([]int, len(p.Cover))
	for i, n := range p.Cover {
		cp.Cover[i] = r * n
	}
	return &cp
}

// basisState returns |b⟩ as 2^n amplitudes.
func basisState(b pauli.Bits, n int) []complex128 {
	v := make([]complex128, 1<<n)
	v[b[0]] = 1
	return v
}

// sci prints a shot count as 2.3e+08.
func sci(x float64) string { return fmt.Sprintf("%.2g", x) }
