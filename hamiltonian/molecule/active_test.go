package molecule

import (
	"math"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian/fermion"
)

// TestActiveSpaceNothingFrozen checks that freezing nothing and keeping
// every orbital changes nothing: equal integrals and equal qubit
// Hamiltonians (common practice: the identity active space).
func TestActiveSpaceNothingFrozen(t *testing.T) {
	for _, name := range []string{"h2_sto3g_0.74A", "lih_sto3g_1.5949A"} {
		g := readMolecule(t, name)
		a, err := g.ActiveSpace(0, g.Orbitals())
		if err != nil {
			t.Fatal(err)
		}
		if !a.Equal(g) {
			t.Errorf("%s: ActiveSpace(0, %d) differs from the input", name, g.Orbitals())
		}
		for _, enc := range encodings {
			h1, err1 := g.QubitHamiltonian(enc)
			h2, err2 := a.QubitHamiltonian(enc)
			if err1 != nil || err2 != nil {
				t.Fatal(err1, err2)
			}
			if !h1.Equal(h2) {
				t.Errorf("%s %s: Hamiltonian of ActiveSpace(0, %d) differs", name, enc, g.Orbitals())
			}
		}
	}
}

// TestActiveSpaceHartreeFock checks the frozen-core formulas: the closed-shell
// determinant of the active space is the same determinant as that of the
// whole molecule, so its energy must equal E_HF of testdata/energies.json
// (psi4 1.3.2) to 1e-8 for every number of frozen orbitals, with or without
// dropping the virtual orbitals (Szabo & Ostlund §3.4: the energy of a
// determinant splits into core, core–active and active parts).
func TestActiveSpaceHartreeFock(t *testing.T) {
	refs := loadReferences(t)
	for _, name := range []string{"lih_sto3g_1.5949A", "h2o_sto3g"} {
		g := readMolecule(t, name)
		for frozen := range g.Electrons/2 + 1 {
			for _, active := range []int{g.Orbitals() - frozen, g.Electrons/2 - frozen + 1} {
				if active < 1 || frozen+active > g.Orbitals() {
					continue
				}
				a, err := g.ActiveSpace(frozen, active)
				if err != nil {
					t.Fatal(err)
				}
				e, err := a.HartreeFock()
				if err != nil {
					t.Fatal(err)
				}
				if want := refs[name].EHF; math.Abs(e-want) > 1e-8 {
					t.Errorf("%s ActiveSpace(%d, %d): E_HF = %.10f, want %.10f", name, frozen, active, e, want)
				}
				if len(a.OrbSym) != active {
					t.Errorf("%s ActiveSpace(%d, %d): %d ORBSYM labels", name, frozen, active, len(a.OrbSym))
				}
			}
		}
	}
}

func TestActiveSpaceErrors(t *testing.T) {
	g := readMolecule(t, "lih_sto3g_1.5949A") // 6 orbitals, 4 electrons
	tests := []struct {
		frozen, active int
		reason         string
	}{
		{-1, 3, "negative frozen"},
		{0, 0, "want at least 1"},
		{2, 5, "exceed the 6 orbitals"},
		{3, 1, "need 6 electrons, have 4"},
		{0, 1, "4 electrons left after freezing do not fit in 1 orbitals"},
	}
	for _, tc := range tests {
		_, err := g.ActiveSpace(tc.frozen, tc.active)
		if err == nil || !strings.Contains(err.Error(), tc.reason) {
			t.Errorf("ActiveSpace(%d, %d) error = %v, want %q", tc.frozen, tc.active, err, tc.reason)
		}
	}
	// OrbSym is an exported field a caller may set to any length; a short
	// one must give an error, not an out-of-range panic.
	short := g.Clone()
	short.OrbSym = []int{1}
	if _, err := short.ActiveSpace(1, 2); err == nil || !strings.Contains(err.Error(), "OrbSym has 1 labels for 6 orbitals") {
		t.Errorf("ActiveSpace(1, 2) with 1 ORBSYM label: error = %v, want %q", err, "OrbSym has 1 labels for 6 orbitals")
	}
}

// TestSpinOrderInvariance checks that the spin-blocked numbering gives the
// same Hartree–Fock diagonal element as the interleaved one once the
// occupied modes are renumbered (Jordan–Wigner, H2O).
func TestSpinOrderInvariance(t *testing.T) {
	g := readMolecule(t, "h2o_sto3g")
	h, err := g.FermionOperator(fermion.SpinBlocks).QubitHamiltonian(fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	n := g.Orbitals()
	var occ uint64
	for p := range g.Electrons / 2 {
		occ |= 1<<fermion.SpinBlocks.Mode(p, fermion.Up, n) | 1<<fermion.SpinBlocks.Mode(p, fermion.Down, n)
	}
	if e, want := diagonal(h, occ), loadReferences(t)["h2o_sto3g"].EHF; math.Abs(e-want) > 1e-8 {
		t.Errorf("H2O spin blocks: ⟨HF|H|HF⟩ = %.10f, want %.10f", e, want)
	}
}
