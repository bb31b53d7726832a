package molecule_test

import (
	"fmt"

	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
)

func ExampleIntegrals_ActiveSpace() {
	g, err := molecule.ReadFCIDUMPFile("testdata/lih_sto3g_1.5949A.fcidump")
	if err != nil {
		fmt.Println(err)
		return
	}
	// Freeze the lithium 1s orbital, keep the other five.
	a, err := g.ActiveSpace(1, 5)
	if err != nil {
		fmt.Println(err)
		return
	}
	h, err := a.QubitHamiltonian(fermion.Parity)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d electrons in %d orbitals, %d qubits, constant %.6f hartree\n", a.Electrons, a.Orbitals(), h.Qubits(), a.Core())
	// Output:
	// 2 electrons in 5 orbitals, 10 qubits, constant -6.802953 hartree
}
