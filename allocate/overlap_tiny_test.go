package allocate_test

import (
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
)

// The Bravyi–Kitaev NH3 Hamiltonian has terms with coefficients near 1e-16
// covered by many groups; their weight step once returned NaN and a
// setting got a negative shot count (the driver checks the contract).
func TestOverlapTinyCoefficients(t *testing.T) {
	h, err := hamiltoniantest.Molecule(hamiltoniantest.NH3, fermion.BravyiKitaev)
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(h, 10000, &allocate.Overlap{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if err := p.Split.Check(h, p.Settings, p.Shots); err != nil {
		t.Fatal(err)
	}
}
