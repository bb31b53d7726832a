package hamiltonian

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// A NaN tolerance must not silently empty the Hamiltonian.
func TestPruneNaNKeepsTerms(t *testing.T) {
	h, err := New(2, 0.5, []Term{{Pauli: pauli.MustParse("ZZ"), Coeff: -1}, {Pauli: pauli.MustParse("XI"), Coeff: 1e-9}})
	if err != nil {
		t.Fatal(err)
	}
	if got := h.Prune(math.NaN()).Len(); got != 2 {
		t.Errorf("Prune(NaN).Len() = %d, want 2", got)
	}
	if got := h.Prune(1e-6).Len(); got != 1 {
		t.Errorf("Prune(1e-6).Len() = %d, want 1", got)
	}
}
