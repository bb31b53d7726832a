package pauli_test

import (
	"fmt"

	"github.com/shotplan/shotplan/pauli"
)

// Measuring the two-qubit family XX, YY, ZZ in one shot: the circuit maps
// each member to ±(a Z-string), and an outcome gives every member's sample.
func ExampleDiagonalize() {
	fam := []pauli.String{pauli.MustParse("XX"), pauli.MustParse("YY"), pauli.MustParse("ZZ")}
	d, err := pauli.Diagonalize(fam)
	if err != nil {
		fmt.Println(err)
		return
	}
	c := d.Circuit()
	fmt.Printf("circuit %v: %d gates, %d two-qubit, depth %d\n", c, c.Len(), c.TwoQubitGates(), c.Depth())
	b, _ := pauli.ParseBits("10")
	for i := range d.Len() {
		z, s := d.Image(i)
		fmt.Printf("%v -> %+d·%v, sample on 10: %+d\n", d.Member(i), s, z, d.Sample(i, b))
	}
	// Output:
	// circuit H(1) CZ(0,1) H(0) H(1): 4 gates, 1 two-qubit, depth 3
	// XX -> +1·ZI, sample on 10: -1
	// YY -> -1·ZZ, sample on 10: +1
	// ZZ -> +1·IZ, sample on 10: +1
}

func ExampleDiagonalize_notCommuting() {
	_, err := pauli.Diagonalize([]pauli.String{pauli.MustParse("XI"), pauli.MustParse("IZ"), pauli.MustParse("ZZ")})
	fmt.Println(err)
	// Output:
	// pauli: family members 0 (XI) and 2 (ZZ) do not commute
}

func ExampleCircuit_Conjugate() {
	c := pauli.NewCircuit(2).H(0).CNOT(0, 1)
	for _, s := range []string{"XI", "ZI", "IZ", "YY"} {
		p, sign := c.Conjugate(pauli.MustParse(s))
		fmt.Printf("%s -> %+d·%v\n", s, sign, p)
	}
	// Output:
	// XI -> +1·ZI
	// ZI -> +1·XX
	// IZ -> +1·ZZ
	// YY -> +1·XZ
}

// Which terms of a table one entangled setting measures: after the circuit
// that diagonalises XX and ZZ, every product of them is read too (YY), while
// strings that fail to commute with the family are not.
func ExampleDiagonalization_Covered() {
	d, err := pauli.Diagonalize([]pauli.String{pauli.MustParse("XXI"), pauli.MustParse("ZZI")})
	if err != nil {
		fmt.Println(err)
		return
	}
	terms := pauli.TableOf(3, pauli.MustParse("YYI"), pauli.MustParse("XII"), pauli.MustParse("ZZZ"), pauli.MustParse("IIX"))
	for _, r := range d.Covered(nil, terms) {
		z, s, _ := d.Diagonal(terms.At(r))
		fmt.Printf("%v -> %+d·%v\n", terms.At(r), s, z)
	}
	// Output:
	// YYI -> -1·ZZI
	// ZZZ -> +1·IZZ
}
