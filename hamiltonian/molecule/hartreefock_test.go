package molecule

import (
	"math"
	"math/bits"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/pauli"
)

// diagonalBits returns ⟨b|H|b⟩ for a basis state of any width: only
// strings without X or Y contribute, each (−1)^{|z∧b|} times its
// coefficient (MATH.md §7).
func diagonalBits(h *hamiltonian.Hamiltonian, b pauli.Bits) float64 {
	e := h.Offset()
	for _, term := range h.Terms() {
		x, z := term.Pauli.Words()
		odd, diag := 0, true
		for w := range x {
			if x[w] != 0 {
				diag = false
				break
			}
			odd += bits.OnesCount64(z[w] & b[w])
		}
		switch {
		case !diag:
		case odd%2 == 1:
			e -= term.Coeff
		default:
			e += term.Coeff
		}
	}
	return e
}

// TestHartreeFockBits checks, for every reference molecule and every
// encoding, that the qubit Hamiltonian's diagonal element on the basis
// state HartreeFockBits returns is the RHF energy of testdata/energies.json
// (psi4 1.3.2, computed outside this project), to 1e-8 hartree, and that
// the bits agree with the test's own encoding of the occupations by the
// matrices of Seeley, Richard & Love (encodeOccupations).
func TestHartreeFockBits(t *testing.T) {
	const tol = 1e-8
	refs := loadReferences(t)
	for _, name := range molecules {
		ref := refs[name]
		g := readMolecule(t, name)
		for _, enc := range encodings {
			h, err := g.QubitHamiltonian(enc)
			if err != nil {
				t.Fatal(err)
			}
			b, err := g.HartreeFockBits(enc)
			if err != nil {
				t.Fatal(err)
			}
			if e := diagonalBits(h, b); math.Abs(e-ref.EHF) > tol {
				t.Errorf("%s %s: ⟨HF|H|HF⟩ = %.10f, want the SCF energy %.10f (±%g)", name, enc, e, ref.EHF, tol)
			}
			n := 2 * g.Orbitals()
			if want := encodeOccupations(enc, n, uint64(1)<<g.Electrons-1); b[0] != want {
				t.Errorf("%s %s: bits %b, want %b", name, enc, b[0], want)
			}
		}
	}
}

// TestHartreeFockBitsOpenShell: a triplet (2S_z = 2) of 2 electrons in 3
// orbitals occupies orbitals 0 and 1 with spin α, modes 0 and 2 under
// Jordan–Wigner; more electrons than spin orbitals is an error.
func TestHartreeFockBitsOpenShell(t *testing.T) {
	g, err := New(3)
	if err != nil {
		t.Fatal(err)
	}
	g.Electrons, g.SpinTwice = 2, 2
	b, err := g.HartreeFockBits(fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	if b[0] != 0b101 {
		t.Errorf("triplet bits %b, want 101", b[0])
	}
	g.Electrons, g.SpinTwice = 7, 1
	if _, err := g.HartreeFockBits(fermion.Parity); err == nil {
		t.Error("7 electrons in 3 orbitals: no error")
	}
}
