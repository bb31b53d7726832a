package pauli_test

import (
	"fmt"

	"github.com/shotplan/shotplan/pauli"
)

func ExampleMul() {
	// XY = iZ on each qubit (Nielsen & Chuang §2.1.3), so XX·YY = i²·ZZ.
	c, ph := pauli.Mul(pauli.MustParse("XX"), pauli.MustParse("YY"))
	fmt.Println(ph, c)
	// Output: -1 ZZ
}

func ExampleString_Commutes() {
	a, b := pauli.MustParse("XX"), pauli.MustParse("ZZ")
	fmt.Println(a.Commutes(b), a.QubitwiseCommutes(b))
	// Output: true false
}

func ExampleParseSparse() {
	p, err := pauli.ParseSparse("X_0 Z_2 Y_3", 5)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(p, p.Weight(), p.Sparse())
	_, err = pauli.ParseSparse("X_0 Z_7", 5)
	fmt.Println(err)
	// Output:
	// XIZYI 3 X_0 Z_2 Y_3
	// pauli: parsing "X_0 Z_7": offset 6: qubit 7 beyond the qubit count 5
}

func ExampleSetting_Covers() {
	s := pauli.MustParseSetting("XYZ")
	bits, _ := pauli.ParseBits("011")
	for _, p := range []string{"XIZ", "XZZ"} {
		q := pauli.MustParse(p)
		if s.Covers(q) {
			fmt.Println(p, "covered, sample", s.Sample(q, bits))
		} else {
			fmt.Println(p, "not covered")
		}
	}
	// Output:
	// XIZ covered, sample -1
	// XZZ not covered
}

func ExampleTable_Covered() {
	t := pauli.TableOf(3,
		pauli.MustParse("ZZI"),
		pauli.MustParse("XII"),
		pauli.MustParse("IZZ"),
	)
	s := pauli.MustParseSetting("ZZZ")
	rows := t.Covered(make([]int, 0, t.Len()), s) // no allocation: dst has room
	bits, _ := pauli.ParseBits("010")
	samples := make([]int8, len(rows))
	t.Samples(samples, rows, bits)
	fmt.Println(rows, samples)
	// Output: [0 2] [-1 -1]
}
