package estimate

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// ProductState returns the state vector of the product state whose qubit q
// is qubits[q][0]|0⟩ + qubits[q][1]|1⟩: amplitude a is the product over q
// of qubits[q][bit q of a]. It returns an error for no qubits or more than
// [hamiltonian.MaxExactQubits].
func ProductState(qubits [][2]complex128) ([]complex128, error) {
	n := len(qubits)
	if n < 1 || n > hamiltonian.MaxExactQubits {
		return nil, fmt.Errorf("estimate: %d qubits, want 1 to %d", n, hamiltonian.MaxExactQubits)
	}
	psi := make([]complex128, 1<<n)
	psi[0] = 1
	// After qubit q the first 2^(q+1) entries hold the product of qubits 0..q.
	for q, c := range qubits {
		h := 1 << q
		for a := range h {
			psi[a+h] = psi[a] * c[1]
			psi[a] *= c[0]
		}
	}
	return psi, nil
}

// BasisState returns the computational basis state whose qubit q is bit q
// of b, on n qubits. It returns an error if n is out of range or b has a
// bit beyond qubit n−1.
func BasisState(n int, b pauli.Bits) ([]complex128, error) {
	if n < 1 || n > hamiltonian.MaxExactQubits {
		return nil, fmt.Errorf("estimate: %d qubits, want 1 to %d", n, hamiltonian.MaxExactQubits)
	}
	if len(b) != 1 || b[0]>>n != 0 {
		return nil, fmt.Errorf("estimate: bit-string does not fit %d qubits", n)
	}
	psi := make([]complex128, 1<<n)
	psi[b[0]] = 1
	return psi, nil
}

// EigenState returns the product state that setting s measures as outcome
// b with certainty: qubit q is the eigenstate of s's letter on q with
// eigenvalue (−1)^(bit q of b). The X eigenstates are (|0⟩ ± |1⟩)/√2, the Y
// eigenstates (|0⟩ ± i|1⟩)/√2, the Z eigenstates |0⟩ and |1⟩ (Nielsen &
// Chuang §2.1.3; common practice).
func EigenState(s pauli.Setting, b pauli.Bits) ([]complex128, error) {
	n := s.Qubits()
	if !s.IsLocal() {
		return nil, fmt.Errorf("estimate: setting %s is entangled; its eigenstates are not product states", s)
	}
	if n < 1 || len(b) != pauli.Words(n) || (n&63 != 0 && b[len(b)-1]>>(n&63) != 0) {
		return nil, fmt.Errorf("estimate: bit-string does not fit setting %s", s)
	}
	r := complex(1/math.Sqrt2, 0)
	qubits := make([][2]complex128, n)
	for q := range qubits {
		sign := complex(1-2*float64(b.Get(q)), 0)
		switch s.At(q) {
		case pauli.X:
			qubits[q] = [2]complex128{r, sign * r}
		case pauli.Y:
			qubits[q] = [2]complex128{r, sign * r * 1i}
		default:
			qubits[q][b.Get(q)] = 1
		}
	}
	return ProductState(qubits)
}

// HartreeFockState returns the Slater determinant that fills the lowest
// spatial orbitals, as a computational basis state on qubits spin orbitals
// numbered as hamiltonian/molecule's Jordan–Wigner mapping numbers them
// (interleaved: qubit 2p is orbital p with spin α, qubit 2p+1 the same
// orbital with spin β; an occupied spin orbital is bit 1). With
// nα = (electrons+spinTwice)/2 and nβ = (electrons−spinTwice)/2 it occupies
// qubits 2p for p < nα and 2p+1 for p < nβ. When the orbitals are the
// Hartree–Fock (canonical SCF) orbitals of an FCIDUMP file, listed in
// energy order as FCIDUMP writers list them, this is the Hartree–Fock
// determinant and its energy ⟨HF|H|HF⟩ is the SCF energy (Szabo & Ostlund,
// Modern Quantum Chemistry, §3.4; common practice). It returns an error for
// an odd qubit count, an electron count or spin that does not fit, or more
// than [hamiltonian.MaxExactQubits] qubits.
func HartreeFockState(qubits, electrons, spinTwice int) ([]complex128, error) {
	b, err := hartreeFockBits(qubits, electrons, spinTwice)
	if err != nil {
		return nil, err
	}
	return BasisState(qubits, pauli.Bits{b})
}

// hartreeFockBits returns the occupation bits of HartreeFockState.
func hartreeFockBits(qubits, electrons, spinTwice int) (uint64, error) {
	if qubits < 2 || qubits%2 != 0 || qubits > hamiltonian.MaxExactQubits {
		return 0, fmt.Errorf("estimate: Hartree–Fock state: %d qubits, want an even count from 2 to %d (two spin orbitals per orbital)", qubits, hamiltonian.MaxExactQubits)
	}
	orbitals := qubits / 2
	if electrons < 0 || (electrons+spinTwice)%2 != 0 {
		return 0, fmt.Errorf("estimate: Hartree–Fock state: %d electrons with 2S_z = %d: want electrons ≥ 0 and electrons + 2S_z even", electrons, spinTwice)
	}
	na, nb := (electrons+spinTwice)/2, (electrons-spinTwice)/2
	if na < 0 || nb < 0 || na > orbitals || nb > orbitals {
		return 0, fmt.Errorf("estimate: Hartree–Fock state: %d α and %d β electrons do not fit %d orbitals", na, nb, orbitals)
	}
	var b uint64
	for p := range na {
		b |= 1 << (2 * p)
	}
	for p := range nb {
		b |= 1 << (2*p + 1)
	}
	return b, nil
}
