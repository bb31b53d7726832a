package molecule

import (
	"fmt"

	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/pauli"
)

// HartreeFockBits returns the Hartree–Fock determinant as a computational
// basis state of the qubit Hamiltonian [Integrals.QubitHamiltonian] builds
// under enc: bit q of the result is the outcome of qubit q. The determinant
// fills the lowest nα = (Electrons+SpinTwice)/2 orbitals with spin α and
// the lowest nβ = (Electrons−SpinTwice)/2 with spin β, spin orbitals
// interleaved (mode 2p is orbital p spin α, 2p+1 spin β); under
// Jordan–Wigner an occupied mode is bit 1, and under Bravyi–Kitaev and
// parity the occupations f map to b = β f (mod 2) ([fermion.Encoding.Occupations]).
// When the orbitals are the canonical SCF orbitals listed in energy order,
// as FCIDUMP writers list them, ⟨HF|H|HF⟩ is the SCF energy (Szabo &
// Ostlund, Modern Quantum Chemistry, §3.4; common practice). Any number of
// orbitals works: no state vector is built.
//
// It returns an error if the electron count or spin does not fit the
// orbitals, or enc is not a defined encoding.
func (g *Integrals) HartreeFockBits(enc fermion.Encoding) (pauli.Bits, error) {
	if enc != fermion.JordanWigner && enc != fermion.BravyiKitaev && enc != fermion.Parity {
		return nil, fmt.Errorf("molecule: Hartree–Fock state: unknown encoding %s", enc)
	}
	n := 2 * g.norb
	if g.Electrons < 0 || (g.Electrons+g.SpinTwice)%2 != 0 {
		return nil, fmt.Errorf("molecule: Hartree–Fock state: %d electrons with 2S_z = %d: want electrons ≥ 0 and electrons + 2S_z even", g.Electrons, g.SpinTwice)
	}
	na, nb := (g.Electrons+g.SpinTwice)/2, (g.Electrons-g.SpinTwice)/2
	if na < 0 || nb < 0 || na > g.norb || nb > g.norb {
		return nil, fmt.Errorf("molecule: Hartree–Fock state: %d α and %d β electrons do not fit %d orbitals", na, nb, g.norb)
	}
	f := make(pauli.Bits, pauli.Words(n))
	for p := range na {
		f.Set(2*p, 1)
	}
	for p := range nb {
		f.Set(2*p+1, 1)
	}
	return enc.Occupations(n, f), nil
}
