package allocate_test

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"testing"

	gocmp "github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
)

// plainColorGroups is the reference for ColorGC's grouping, written straight
// from the definition of largest-degree-first greedy colouring (Welsh and
// Powell, "An upper bound for the chromatic number of a graph and its
// application to timetabling problems", Comput. J. 10, 1967; cited from
// memory) of the graph
// whose edges join anticommuting terms: the degree of a term is counted by
// testing it against every other term with pauli.String.Commutes; the
// terms are taken by degree descending, ties by |h_i| descending, then term
// index; each joins the first group every member of which it commutes with,
// checked member by member, or opens a new group. It is O(M²) and shares no
// code with the strategy beyond the Pauli algebra.
func plainColorGroups(h *hamiltonian.Hamiltonian) [][]int {
	m := h.Len()
	coef := h.Coeffs()
	deg := make([]int, m)
	for a := range m {
		pa := h.Term(a).Pauli
		for b := range m {
			if b != a && !pa.Commutes(h.Term(b).Pauli) {
				deg[a]++
			}
		}
	}
	order := make([]int, m)
	for i := range order {
		order[i] = i
	}
	slices.SortFunc(order, func(a, b int) int {
		if c := cmp.Compare(deg[b], deg[a]); c != 0 {
			return c
		}
		if c := cmp.Compare(math.Abs(coef[b]), math.Abs(coef[a])); c != 0 {
			return c
		}
		return cmp.Compare(a, b)
	})
	return plainFirstFit(h, order)
}

// plainFirstFit places the terms of h in the given order, each into the
// first group all of whose members it commutes with (String.Commutes,
// member by member) or into a new group: the textbook first-fit colouring
// (common practice), the reference of the GC strategies' groupings.
func plainFirstFit(h *hamiltonian.Hamiltonian, order []int) [][]int {
	var groups [][]int
	for _, i := range order {
		p := h.Term(i).Pauli
		k := 0
		for ; k < len(groups); k++ {
			fits := true
			for _, j := range groups[k] {
				if !p.Commutes(h.Term(j).Pauli) {
					fits = false
					break
				}
			}
			if fits {
				break
			}
		}
		if k == len(groups) {
			groups = append(groups, nil)
		}
		groups[k] = append(groups[k], i)
	}
	return groups
}

// TestColorGCMatchesPlainColouring checks that ColorGC forms exactly the
// groups of the plain reference, member order included, on random strings
// of one, two and three words per row (every branch of the degree count,
// with enough terms for the count to be split among workers) and on
// molecular Hamiltonians from random integrals.
func TestColorGCMatchesPlainColouring(t *testing.T) {
	type tc struct {
		name string
		h    func() (*hamiltonian.Hamiltonian, error)
	}
	var cases []tc
	for _, sz := range []struct{ n, m int }{{6, 300}, {20, 700}, {64, 300}, {100, 800}, {150, 600}} {
		for seed := uint64(1); seed <= 2; seed++ {
			cases = append(cases, tc{fmt.Sprintf("random/n=%d/m=%d/seed=%d", sz.n, sz.m, seed), func() (*hamiltonian.Hamiltonian, error) {
				return randomStrings(sz.n, sz.m, seed)
			}})
		}
	}
	for _, orb := range []int{4, 5, 6} {
		cases = append(cases, tc{fmt.Sprintf("molecule/orbitals=%d", orb), func() (*hamiltonian.Hamiltonian, error) {
			g, err := benchIntegrals(orb, 3)
			if err != nil {
				return nil, err
			}
			return g.QubitHamiltonian(fermion.JordanWigner)
		}})
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			h, err := c.h()
			if err != nil {
				t.Fatal(err)
			}
			a := &allocate.ColorGC{}
			if err := a.Init(h, 1000); err != nil {
				t.Fatal(err)
			}
			want := plainColorGroups(h)
			if d := gocmp.Diff(want, a.Members(), cmpopts.EquateEmpty()); d != "" {
				t.Errorf("%d terms: groups differ from the plain colouring (-want +got):\n%s", h.Len(), d)
			}
		})
	}
}
