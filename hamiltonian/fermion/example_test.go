package fermion_test

import (
	"fmt"

	"github.com/shotplan/shotplan/hamiltonian/fermion"
)

func ExampleOperator_QubitHamiltonian() {
	// Hopping between modes 0 and 3 plus its Hermitian conjugate.
	o := fermion.NewOperator(4)
	o.Add(1, fermion.Create(0), fermion.Annihilate(3))
	o.Add(1, fermion.Create(3), fermion.Annihilate(0))
	for _, enc := range []fermion.Encoding{fermion.JordanWigner, fermion.BravyiKitaev, fermion.Parity} {
		h, err := o.QubitHamiltonian(enc)
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("%-6s", enc)
		for _, t := range h.Terms() {
			fmt.Printf(" %+g %s", t.Coeff, t.Pauli)
		}
		fmt.Println()
	}
	// Output:
	// jw     +0.5 YZZY +0.5 XZZX
	// bk     -0.5 XXIZ -0.5 YYZI
	// parity -0.5 XXXZ -0.5 YXYI
}

func ExampleOperator_NormalOrder() {
	o := fermion.NewOperator(2)
	o.Add(1, fermion.Annihilate(0), fermion.Create(0), fermion.Create(1))
	fmt.Println(o.NormalOrder())
	// Output:
	// (1+0i) a1† + (1+0i) a0† a1† a0
}

func ExampleHubbard() {
	m := fermion.Hubbard{Width: 2, Height: 2, Hopping: 1, Interaction: 4, ChemicalPotential: 2}
	o, err := m.Operator()
	if err != nil {
		fmt.Println(err)
		return
	}
	h, err := o.QubitHamiltonian(fermion.JordanWigner)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d sites, %d modes, %d Pauli terms\n", m.Sites(), o.Modes(), h.Len())
	// At μ = U/2 the single-Z terms cancel: 16 hopping and 4 ZZ strings.
	// Output:
	// 4 sites, 8 modes, 20 Pauli terms
}

func ExampleParseEncoding() {
	enc, err := fermion.ParseEncoding("bk")
	fmt.Println(enc, err)
	// Output:
	// bk <nil>
}
