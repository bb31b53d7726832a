package allocate_test

import (
	"fmt"
	"testing"

	gocmp "github.com/google/go-cmp/cmp"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
)

// TestNarrowedGreedyGCMatchesWalk plans with greedy-gc whose walks narrow
// (keep the set of terms commuting with every accepted term and read only
// those, and take a full family's covered terms from that set) after
// reading 0, 1 or 40 entries, and with walks that never narrow, which test
// every term in walk order and scan every term for coverage (MATH §8), and
// requires the same settings, shots and cover counts. The set of covered
// terms equals the commuting set because a maximal commuting subspace is
// its own commutant (symplectic linear algebra, common practice).
func TestNarrowedGreedyGCMatchesWalk(t *testing.T) {
	type tc struct {
		name     string
		h        *hamiltonian.Hamiltonian
		settings int
	}
	var cases []tc
	for _, c := range []struct{ n, m, k int }{{6, 40, 3}, {12, 400, 4}, {70, 300, 5}, {130, 200, 4}} {
		h, err := hamiltonian.RandomLocal(c.n, c.m, c.k, uint64(c.n))
		if err != nil {
			t.Fatal(err)
		}
		cases = append(cases, tc{fmt.Sprintf("random/n=%d", c.n), h, 300})
	}
	if !testing.Short() {
		cases = append(cases, tc{"molecule/qubits=20", moleculeFixture(t, 10), 400})
	}
	plan := func(t *testing.T, h *hamiltonian.Hamiltonian, settings, read int) []string {
		p, err := allocate.Run(h, settings, allocate.NarrowedGreedyGC(read), nil)
		if err != nil {
			t.Fatal(err)
		}
		var out []string
		for k, s := range p.Settings {
			out = append(out, fmt.Sprintf("%s %d", s, p.Shots[k]))
		}
		return append(out, fmt.Sprint(p.Cover))
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			want := plan(t, c.h, c.settings, -1)
			for _, read := range []int{0, 1, 40} {
				if d := gocmp.Diff(want, plan(t, c.h, c.settings, read)); d != "" {
					t.Errorf("narrowing after %d entries: plan differs (-walk +narrowed):\n%s", read, d)
				}
			}
		})
	}
}
