package allocate_test

import (
	"cmp"
	"fmt"
	"math"
	"runtime"
	"slices"
	"testing"

	gocmp "github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
)

// plainSortedGroups is the reference for SortedGC's grouping, written
// straight from sorted insertion (Crawford et al., arXiv:1908.06942): the
// terms are taken by |h_i| descending, ties by term index; each joins the
// first group every member of which it commutes with
// (pauli.String.Commutes, member by member), or opens a new group. It is
// serial first fit, O(M²), and shares no code with the strategy beyond the
// Pauli algebra.
func plainSortedGroups(h *hamiltonian.Hamiltonian) [][]int {
	coef := h.Coeffs()
	order := make([]int, h.Len())
	for i := range order {
		order[i] = i
	}
	slices.SortFunc(order, func(a, b int) int {
		if c := cmp.Compare(math.Abs(coef[b]), math.Abs(coef[a])); c != 0 {
			return c
		}
		return cmp.Compare(a, b)
	})
	return plainFirstFit(h, order)
}

// TestSortedGCMatchesSerialFirstFit checks that SortedGC, whose first fit
// tests batches of terms against the groups on all cores, forms exactly the
// groups of serial first fit (plainSortedGroups), member order included,
// with GOMAXPROCS 1, 2 and 3, and that the settings and shots do not depend
// on the number of cores either. The cases have several batches of terms
// (more than 512), one to three words per row, and molecular Hamiltonians
// from random integrals, where many terms join groups opened within their
// own batch. Correctness only: no timing.
func TestSortedGCMatchesSerialFirstFit(t *testing.T) {
	type tc struct {
		name string
		h    func() (*hamiltonian.Hamiltonian, error)
	}
	var cases []tc
	for _, sz := range []struct{ n, m int }{{6, 600}, {20, 1500}, {100, 1200}, {150, 700}} {
		cases = append(cases, tc{fmt.Sprintf("random/n=%d/m=%d", sz.n, sz.m), func() (*hamiltonian.Hamiltonian, error) {
			return randomStrings(sz.n, sz.m, 5)
		}})
	}
	for _, orb := range []int{5, 6} {
		cases = append(cases, tc{fmt.Sprintf("molecule/orbitals=%d", orb), func() (*hamiltonian.Hamiltonian, error) {
			g, err := benchIntegrals(orb, 4)
			if err != nil {
				return nil, err
			}
			return g.QubitHamiltonian(fermion.JordanWigner)
		}})
	}
	type result struct {
		Members  [][]int
		Settings []string
		Shots    []int
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			h, err := c.h()
			if err != nil {
				t.Fatal(err)
			}
			if h.Len() <= 512 {
				t.Fatalf("%d terms: one batch of first fit only", h.Len())
			}
			want := plainSortedGroups(h)
			var first *result
			for _, procs := range []int{1, 2, 3} {
				a := &allocate.SortedGC{}
				old := runtime.GOMAXPROCS(procs)
				err := a.Init(h, 5000)
				runtime.GOMAXPROCS(old)
				if err != nil {
					t.Fatal(err)
				}
				if d := gocmp.Diff(want, a.Members(), cmpopts.EquateEmpty()); d != "" {
					t.Fatalf("GOMAXPROCS %d, %d terms: groups differ from serial first fit (-want +got):\n%s", procs, h.Len(), d)
				}
				settings, shots := a.Groups()
				r := &result{Members: a.Members(), Shots: shots}
				for _, s := range settings {
					r.Settings = append(r.Settings, s.String())
				}
				if first == nil {
					first = r
				} else if d := gocmp.Diff(first, r); d != "" {
					t.Errorf("GOMAXPROCS %d: groups, settings or shots differ from GOMAXPROCS 1 (-1 +%d):\n%s", procs, procs, d)
				}
			}
		})
	}
}
