package hamiltoniantest

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
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
	}{{H2, 4}, {LiH, 12}, {H2O, 14}} {
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
}
