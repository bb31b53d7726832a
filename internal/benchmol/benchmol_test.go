package benchmol

import "testing"

// TestFixtures checks the small fixture: 20 qubits and the recorded 14 250
// terms, built once (the second call returns the cached Hamiltonian), and
// integrals with the eight-fold symmetry of real orbitals
// (pq|rs) = (qp|rs) = (pq|sr) = (rs|pq) and h_pq = h_qp (Szabo & Ostlund,
// Modern Quantum Chemistry, §2.3 and §3.4; common practice), every value
// drawn non-zero. A size that is not a fixture is refused.
func TestFixtures(t *testing.T) {
	h, err := Hamiltonian(10)
	if err != nil {
		t.Fatal(err)
	}
	if h.Qubits() != 20 || h.Len() != Terms(10) || Terms(10) != 14_250 {
		t.Fatalf("10-orbital fixture: %d qubits, %d terms, want 20 and 14 250", h.Qubits(), h.Len())
	}
	if again, _ := Hamiltonian(10); again != h {
		t.Error("second call built the fixture again")
	}
	if _, err := Hamiltonian(11); err == nil {
		t.Error("11 orbitals: no error")
	}
	const o = 4
	g, err := Integrals(o, 3)
	if err != nil {
		t.Fatal(err)
	}
	for p := range o {
		for q := range o {
			if g.One(p, q) != g.One(q, p) || g.One(p, q) == 0 {
				t.Errorf("h_%d%d = %v, h_%d%d = %v", p, q, g.One(p, q), q, p, g.One(q, p))
			}
			for r := range o {
				for s := range o {
					v := g.Two(p, q, r, s)
					if v == 0 || v != g.Two(q, p, r, s) || v != g.Two(p, q, s, r) || v != g.Two(r, s, p, q) {
						t.Errorf("(%d%d|%d%d) = %v breaks the symmetry or is zero", p, q, r, s, v)
					}
				}
			}
		}
	}
}
