package pauli

import (
	"math/rand/v2"
	"testing"
)

// The word-wise column path (Circuit.Tableau, conjugateAll) against the
// row-by-row path (Tableau.Apply, Circuit.Conjugate).
func TestTableauColumnsMatchRows(t *testing.T) {
	rng := rand.New(rand.NewPCG(17, 18))
	for _, n := range []int{0, 1, 2, 31, 32, 33, 64, 65, 130} {
		for range 5 {
			var c *Circuit
			if n == 0 {
				c = NewCircuit(0)
			} else {
				c = randomCircuit(rng, n, 4*n)
			}
			rows := newTableau(n)
			for _, g := range c.Gates() {
				rows.Apply(g)
			}
			if !c.toTableau().Equal(rows) {
				t.Fatalf("Circuit.Tableau() on %d qubits differs from gate-by-gate Apply for %v", n, c)
			}
			ps := make([]String, 1+rng.IntN(140))
			for i := range ps {
				ps[i] = randomString(rng, n)
			}
			cols := conjugateColumns(c, ps)
			for i, p := range ps {
				want, ws := c.Conjugate(p)
				img := Identity(n)
				s := 1 - 2*b2i(cols.get(i, img.x, img.z))
				if !img.Equal(want) || s != ws {
					t.Fatalf("conjugateColumns row %d (%s) = %s, want %s", i, p, signed(s, img), signed(ws, want))
				}
			}
		}
	}
}

func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}
