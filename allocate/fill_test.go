package allocate_test

import (
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// TestFillLetter: the strategies with a Fill letter reject a value that is
// not a letter, naming themselves, and read the zero value as Z.
func TestFillLetter(t *testing.T) {
	h, err := hamiltonian.New(2, 0, []hamiltonian.Term{{Pauli: pauli.MustParse("XI"), Coeff: 1}})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name string
		mk   func(pauli.Letter) allocate.Allocator
	}{
		{"sorted", func(l pauli.Letter) allocate.Allocator { return &allocate.Sorted{Fill: l} }},
		{"greedy", func(l pauli.Letter) allocate.Allocator { return &allocate.Greedy{Fill: l} }},
		{"importance", func(l pauli.Letter) allocate.Allocator { return &allocate.Importance{Fill: l} }},
	} {
		t.Run(c.name, func(t *testing.T) {
			err := c.mk(pauli.Z+1).Init(h, 1)
			if err == nil || !strings.HasPrefix(err.Error(), c.name+": fill letter") {
				t.Errorf("Init with Fill = %d: error %v, want one starting %q", pauli.Z+1, err, c.name+": fill letter")
			}
			for _, tc := range []struct{ fill, want pauli.Letter }{{pauli.I, pauli.Z}, {pauli.Y, pauli.Y}} {
				p, err := allocate.Run(h, 1, c.mk(tc.fill), nil)
				if err != nil {
					t.Fatal(err)
				}
				// Only XI has a letter on qubit 0; qubit 1 is free.
				want := pauli.Complete(pauli.Identity(2).With(0, pauli.X), tc.want)
				if got := p.Settings[0]; !got.Equal(want) {
					t.Errorf("Fill = %v: first setting %v, want %v", tc.fill, got, want)
				}
			}
		})
	}
}
