package pauli_test

import (
	"fmt"

	"github.com/shotplan/shotplan/pauli"
)

// A Bell-basis measurement: XX and ZZ commute but not qubit-wise, so one
// shot of their entangled setting reads both, and their product YY too.
func ExampleNewFamilySetting() {
	s, err := pauli.NewFamilySetting([]pauli.String{pauli.MustParse("XX"), pauli.MustParse("ZZ")})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(s, s.IsLocal(), s.Circuit())
	for _, p := range []string{"XX", "ZZ", "YY", "XI"} {
		fmt.Println(p, s.Covers(pauli.MustParse(p)))
	}
	// Output:
	// XX|ZZ false H(1) CZ(0,1) H(0) H(1)
	// XX true
	// ZZ true
	// YY true
	// XI false
}
