package estimate_test

import (
	"fmt"
	"os"
	"strings"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// A four-site transverse-field Ising ring measured with the all-Z and the
// all-X setting on the built-in simulator of its ground state.
func ExampleGrouped() {
	h, err := hamiltonian.TransverseFieldIsing(hamiltonian.Ring(4), 1, 0.5)
	if err != nil {
		fmt.Println(err)
		return
	}
	sim, exact, err := estimate.GroundStateSimulator(h, 1, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	settings := []pauli.Setting{pauli.MustParseSetting("ZZZZ"), pauli.MustParseSetting("XXXX")}
	rec := estimate.NewRecords(4)
	if err := sim.Run(settings, []int{500, 500}, rec); err != nil {
		fmt.Println(err)
		return
	}
	res, err := estimate.Grouped(h, rec, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("exact %.3f\n", exact.Energy)
	fmt.Printf("within the approximate 95%% interval: %v\n", res.ApproxInterval[0] <= exact.Energy && exact.Energy <= res.ApproxInterval[1])
	fmt.Printf("terms left out: %d, bias bound %.1f\n", countZero(res.Cover), res.Bias)
	// Output:
	// exact -4.272
	// within the approximate 95% interval: true
	// terms left out: 0, bias bound 0.0
}

func countZero(c []int) int {
	n := 0
	for _, v := range c {
		if v == 0 {
			n++
		}
	}
	return n
}

// A state that the setting measures with certainty gives its energy
// exactly, with zero spread.
func ExampleEigenState() {
	h, _ := hamiltonian.New(2, 0.5, []hamiltonian.Term{
		{Pauli: pauli.MustParse("XI"), Coeff: 1},
		{Pauli: pauli.MustParse("XY"), Coeff: -2},
	})
	s := pauli.MustParseSetting("XY")
	psi, _ := estimate.EigenState(s, pauli.Bits{0b10}) // |+⟩ ⊗ |−i⟩
	sim, _ := estimate.NewSimulator(psi, 7, nil)
	rec := estimate.NewRecords(2)
	sim.Run([]pauli.Setting{s}, []int{100}, rec)
	res, _ := estimate.Grouped(h, rec, nil)
	fmt.Printf("%.2f ± %.2f\n", res.Energy, res.StdErr)
	// Output:
	// 3.50 ± 0.00
}

// Hardware results come back as a CSV file whose rows name the settings
// by their index in the exported plan.
func ExampleReadCSV() {
	settings := []pauli.Setting{pauli.MustParseSetting("ZZ"), pauli.MustParseSetting("XX")}
	in := "setting,outcome\n0,00\n0,11\n1,01\n1,0x\n"
	_, err := estimate.ReadCSV(strings.NewReader(in), settings)
	fmt.Println(err)
	// Output:
	// estimate: line 5: outcome "0x": character 'x' at qubit 1 is not 0 or 1
}

func ExampleAppendQASM() {
	os.Stdout.Write(estimate.AppendQASM(nil, pauli.MustParseSetting("ZXY")))
	// Output:
	// OPENQASM 3.0;
	// include "stdgates.inc";
	// // setting ZXY; bit c[q] holds qubit q
	// qubit[3] q;
	// bit[3] c;
	// h q[1];
	// sdg q[2];
	// h q[2];
	// c = measure q;
}
