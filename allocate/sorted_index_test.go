package allocate_test

import (
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// TestSortedSameGroupsAsReference checks that Sorted's indexed first fit
// forms exactly the groups of sortedReference, which tests a term against
// every member of every earlier group (MATH §5.5): the same groups in the
// same order, each measured by its members' letters with Z elsewhere. The
// cases include Hamiltonians of hundreds of groups, past one word of
// groups.
func TestSortedSameGroupsAsReference(t *testing.T) {
	cases := checkCases(t)
	for _, c := range referenceCases(t) {
		cases = append(cases, checkCase{c.Name, c.H})
	}
	for _, sz := range []struct{ n, m, k int }{{12, 2000, 6}, {70, 3000, 5}} {
		h, err := hamiltonian.RandomLocal(sz.n, sz.m, sz.k, 9)
		if err != nil {
			t.Fatal(err)
		}
		cases = append(cases, checkCase{"random", h})
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			groups := sortedReference(c.h)
			s := &allocate.Sorted{}
			if err := s.Init(c.h, 10*len(groups)); err != nil {
				t.Fatal(err)
			}
			settings, _ := s.Groups()
			if len(settings) != len(groups) {
				t.Fatalf("%d groups, reference forms %d", len(settings), len(groups))
			}
			for g, members := range groups {
				letters := make([]pauli.Letter, c.h.Qubits())
				for _, i := range members {
					for q, l := range c.h.Pauli(i).Letters() {
						if l != pauli.I {
							letters[q] = l
						}
					}
				}
				for q := range letters {
					if letters[q] == pauli.I {
						letters[q] = pauli.Z
					}
				}
				want := pauli.FromLetters(letters).String()
				if got := settings[g].String(); got != want {
					t.Fatalf("group %d of %d: setting %s, reference %s", g, len(groups), got, want)
				}
			}
		})
	}
}
