package fermion

import (
	"math/bits"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// applyTerms applies Σ_k c_k P_k to the state vector v of n qubits, each
// string by P|b⟩ = i^{|x∧z|} (−1)^{|z∧b|} |b⊕x⟩ (MATH.md §7; with Y = iXZ,
// check Y|0⟩ = i|1⟩, Nielsen & Chuang §2.1.3).
func applyTerms(v []complex128, terms []PauliTerm) []complex128 {
	out := make([]complex128, len(v))
	for _, t := range terms {
		xs, zs := t.Pauli.Words()
		x, z := xs[0], zs[0]
		ph := [4]complex128{1, 1i, -1, -1i}[bits.OnesCount64(x&z)&3]
		for b, a := range v {
			if a == 0 {
				continue
			}
			s := ph * t.Coeff * a
			if bits.OnesCount64(z&uint64(b))&1 == 1 {
				s = -s
			}
			out[uint64(b)^x] += s
		}
	}
	return out
}

// TestOccupations builds every occupation basis state of up to 7 modes as
// a_{j_k}† ⋯ a_{j_1}† |vac⟩ from the encoded ladder operators applied to
// the qubit vacuum |0…0⟩ (every encoding maps the vacuum to it: β·0 = 0),
// and checks that the result is ± the basis state Occupations returns. It
// also checks the Bravyi–Kitaev matrix of 8 modes row by row against the
// one printed in Seeley, Richard & Love, arXiv:1208.5986 (from memory: row
// j holds modes j+1−lowbit(j+1) to j).
func TestOccupations(t *testing.T) {
	for _, e := range []Encoding{JordanWigner, BravyiKitaev, Parity} {
		for n := 1; n <= 7; n++ {
			for f := range uint64(1) << n {
				v := make([]complex128, 1<<n)
				v[0] = 1
				for j := range n {
					if f>>j&1 == 1 {
						l := e.Ladder(n, Create(j))
						v = applyTerms(v, l[:])
					}
				}
				want := e.Occupations(n, pauli.Bits{f})[0]
				for b, a := range v {
					mag := real(a)*real(a) + imag(a)*imag(a)
					if uint64(b) == want && (mag < 1-1e-12 || mag > 1+1e-12) || uint64(b) != want && mag > 1e-24 {
						t.Fatalf("%s n=%d f=%b: amplitude %v on %b, Occupations gives %b", e, n, f, a, b, want)
					}
				}
			}
		}
	}
	rows := []uint64{0b1, 0b11, 0b100, 0b1111, 0b10000, 0b110000, 0b1000000, 0b11111111}
	for j, row := range rows {
		// Column l of β is the image of the single occupied mode l.
		for l := range 8 {
			got := BravyiKitaev.Occupations(8, pauli.Bits{1 << l})[0] >> j & 1
			if got != row>>l&1 {
				t.Errorf("BK β[%d][%d] = %d, want %d", j, l, got, row>>l&1)
			}
		}
	}
	// Width beyond one word: parity of 130 modes with mode 0 occupied is
	// all ones.
	b := Parity.Occupations(130, pauli.Bits{1, 0, 0})
	if b[0] != ^uint64(0) || b[1] != ^uint64(0) || b[2] != 0b11 {
		t.Errorf("parity of 130 modes, mode 0 occupied: %x, want all 130 bits set", b)
	}
}
