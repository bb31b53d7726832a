package hamiltoniantest

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
)

// The closed forms must agree with an exact diagonalisation (this module's
// Lanczos solver, tolerance 1e-10 relative by default; 1e-8 allows for it).
func TestSpinRingsMatchLanczos(t *testing.T) {
	check := func(name string, h *hamiltonian.Hamiltonian, want float64, err error) {
		t.Helper()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		g, err := hamiltonian.GroundState(h, nil)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if math.Abs(g.Energy-want) > 1e-8*max(1, math.Abs(want)) {
			t.Errorf("%s: Lanczos %.12f, reference %.12f", name, g.Energy, want)
		}
	}
	for _, c := range []struct {
		n    int
		j, h float64
	}{{4, 1, 0.5}, {8, 1, 1}, {10, 1, 0.3}, {10, 0.5, 2}, {6, 0, 1}} {
		h, e, err := IsingRing(c.n, c.j, c.h)
		check("IsingRing", h, e, err)
	}
	// At h = 0 the energy is −nJ, at J = 0 it is −nh (product states).
	if _, e, _ := IsingRing(6, 1.5, 0); e != -9 {
		t.Errorf("IsingRing(6, 1.5, 0) energy = %v, want −9", e)
	}
	for _, n := range []int{4, 6, 8, 10} {
		h, e, err := HeisenbergRing(n)
		check("HeisenbergRing", h, e, err)
	}
	if _, _, err := IsingRing(5, 1, 1); err == nil {
		t.Error("IsingRing(5): no error for an odd ring")
	}
	if _, _, err := HeisenbergRing(12); err == nil {
		t.Error("HeisenbergRing(12): no error")
	}
}
