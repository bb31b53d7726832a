package hamiltoniantest

import (
	"bytes"
	"math"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
)

// The embedded files must load, and the H2 Hamiltonians must reach the
// full-CI energy of energies.json (psi4 1.3.2) to 1e-9 hartree.
func TestH2QubitMatchesFullCI(t *testing.T) {
	for _, name := range []string{H2, H2Alt, H2Bohr} {
		for _, enc := range []string{"jw", "bk", "parity"} {
			h, lowest, err := H2Qubit(name, enc)
			if err != nil {
				t.Fatalf("H2Qubit(%s, %s): %v", name, enc, err)
			}
			fci, err := FullCI(name)
			if err != nil {
				t.Fatal(err)
			}
			if h.Len() != 14 || math.Abs(lowest-fci) > 1e-9 {
				t.Errorf("H2Qubit(%s, %s): %d non-identity terms, lowest %.12f; want 14 and %.12f", name, enc, h.Len(), lowest, fci)
			}
			g, err := hamiltonian.GroundState(h, nil)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(g.Energy-fci) > 1e-9 {
				t.Errorf("ground energy of H2Qubit(%s, %s) = %.12f, want full CI %.12f", name, enc, g.Energy, fci)
			}
		}
	}
}

func TestMoleculeLoads(t *testing.T) {
	for _, c := range []struct {
		name   string
		qubits int
	}{{H2, 4}, {LiH, 12}, {H2O, 14}, {BeH2, 14}, {NH3, 16}} {
		h, err := Molecule(c.name, fermion.JordanWigner)
		if err != nil {
			t.Fatalf("Molecule(%s): %v", c.name, err)
		}
		if h.Qubits() != c.qubits {
			t.Errorf("Molecule(%s): %d qubits, want %d", c.name, h.Qubits(), c.qubits)
		}
	}
	if _, err := Molecule("unobtainium", fermion.JordanWigner); err == nil {
		t.Error("Molecule(unobtainium) succeeded, want an error")
	}
	if _, err := FullCI("unobtainium"); err == nil {
		t.Error("FullCI(unobtainium) succeeded, want an error")
	}
}

// Every embedded molecule must reach its full-CI energy (psi4 1.3.2 detci,
// energies.json or energies_beh2_nh3.json) in the sector of its FCIDUMP's
// NELEC electrons and 2S_z = MS2 = 0 under Jordan–Wigner, to 1e-6 hartree:
// the sector residual (below 1e-7 here) and psi4's CI residual bound the
// difference far below that.
func TestMoleculesReachFullCI(t *testing.T) {
	for _, name := range Molecules {
		h, err := Molecule(name, fermion.JordanWigner)
		if err != nil {
			t.Fatal(err)
		}
		b, err := FCIDUMP(name)
		if err != nil {
			t.Fatal(err)
		}
		g, err := molecule.ReadFCIDUMP(bytes.NewReader(b))
		if err != nil {
			t.Fatal(err)
		}
		sec, err := hamiltonian.ElectronSector(h.Qubits(), g.Electrons, g.SpinTwice)
		if err != nil {
			t.Fatal(err)
		}
		gs, err := hamiltonian.GroundState(h, &hamiltonian.EigenOptions{Sector: &sec})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		fci, err := FullCI(name)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(gs.Energy-fci) > 1e-6 {
			t.Errorf("%s: sector ground state %.10f, full CI %.10f", name, gs.Energy, fci)
		}
	}
}
