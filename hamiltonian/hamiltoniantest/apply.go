package hamiltoniantest

import "github.com/shotplan/shotplan/pauli"

// ApplyString returns P|ψ⟩ for a state of 2^n amplitudes (bit q of the
// index is qubit q), computed qubit by qubit from the 2×2 Pauli matrices
// on basis states — X|0⟩ = |1⟩, X|1⟩ = |0⟩, Y|0⟩ = i|1⟩, Y|1⟩ = −i|0⟩,
// Z|b⟩ = (−1)^b|b⟩ (textbook; Nielsen & Chuang §2.1.3) — without the
// library's word-wise algebra, so tests can use it as an outside reference.
// It panics if len(psi) is not 2^n for p's width n.
func ApplyString(p pauli.String, psi []complex128) []complex128 {
	if len(psi) != 1<<p.Qubits() {
		panic("hamiltoniantest: ApplyString: state length is not 2^n")
	}
	out := make([]complex128, len(psi))
	for b, a := range psi {
		if a == 0 {
			continue
		}
		nb, ph := b, complex128(1)
		for q := range p.Qubits() {
			bit := b >> q & 1
			switch p.At(q) {
			case pauli.X:
				nb ^= 1 << q
			case pauli.Y:
				nb ^= 1 << q
				if bit == 0 {
					ph *= 1i
				} else {
					ph *= -1i
				}
			case pauli.Z:
				if bit == 1 {
					ph = -ph
				}
			}
		}
		out[nb] += ph * a
	}
	return out
}
