package hamiltoniantest

import (
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// The single-qubit actions of the Pauli matrices (textbook) and one
// two-qubit product: (X⊗Z)|q0=0, q1=1⟩ = −|q0=1, q1=1⟩.
func TestApplyString(t *testing.T) {
	cases := []struct {
		p    string
		in   []complex128
		want []complex128
	}{
		{"X", []complex128{1, 0}, []complex128{0, 1}},
		{"Y", []complex128{1, 0}, []complex128{0, 1i}},
		{"Y", []complex128{0, 1}, []complex128{-1i, 0}},
		{"Z", []complex128{0, 1}, []complex128{0, -1}},
		{"XZ", []complex128{0, 0, 1, 0}, []complex128{0, 0, 0, -1}},
	}
	for _, c := range cases {
		got := ApplyString(pauli.MustParse(c.p), c.in)
		for i := range got {
			if got[i] != c.want[i] {
				t.Errorf("%s%v = %v, want %v", c.p, c.in, got, c.want)
				break
			}
		}
	}
}
