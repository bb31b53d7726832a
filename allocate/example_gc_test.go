package allocate_test

import (
	"fmt"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Sorted insertion by general commutation on an invented two-spin exchange
// model with fields: XX, YY and ZZ (= −XX·YY) form one group, measured by
// the entangled setting of generators XX and YY; the fields ZI and IZ form
// a qubit-wise group, measured locally as ZZ. The shots follow the groups'
// one-norms, 2.5 : 0.4. Qubit-wise sorted insertion needs three groups.
func ExampleSortedGC() {
	// A slice, not a map: ties in |h_i| are broken by term index, so the
	// order of XX and YY decides how the group's setting prints.
	var terms []hamiltonian.Term
	for _, t := range []struct {
		p string
		c float64
	}{{"XX", 1}, {"YY", 1}, {"ZZ", 0.5}, {"ZI", 0.2}, {"IZ", 0.2}} {
		terms = append(terms, hamiltonian.Term{Pauli: pauli.MustParse(t.p), Coeff: t.c})
	}
	h, err := hamiltonian.New(2, 0, terms)
	if err != nil {
		fmt.Println(err)
		return
	}
	p, err := allocate.Run(h, 100, &allocate.SortedGC{}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	for k, s := range p.Settings {
		fmt.Printf("%s local=%v shots=%d\n", s, s.IsLocal(), p.Shots[k])
	}
	qw := &allocate.Sorted{}
	if err := qw.Init(h, 100); err != nil {
		fmt.Println(err)
		return
	}
	groups, _ := qw.Groups()
	fmt.Println("qubit-wise groups:", len(groups))
	// Output:
	// XX|YY local=false shots=86
	// ZZ local=true shots=14
	// qubit-wise groups: 3
}
