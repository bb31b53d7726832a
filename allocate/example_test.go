package allocate_test

import (
	"fmt"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// twoSpins is an invented two-qubit model used by the examples.
func twoSpins() *hamiltonian.Hamiltonian {
	h, err := hamiltonian.New(2, -0.5, []hamiltonian.Term{
		{Pauli: pauli.MustParse("ZZ"), Coeff: -1},
		{Pauli: pauli.MustParse("XI"), Coeff: -0.7},
		{Pauli: pauli.MustParse("IX"), Coeff: -0.7},
	})
	if err != nil {
		panic(err)
	}
	return h
}

func ExampleRun() {
	h := twoSpins()
	p, err := allocate.Run(h, 6, &allocate.Greedy{}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	for k, s := range p.Settings {
		fmt.Println(s, p.Shots[k])
	}
	fmt.Println("cover:", p.Cover, "total:", p.TotalShots())
	// Output:
	// ZZ 1
	// XX 1
	// ZZ 1
	// XX 1
	// ZZ 1
	// XX 1
	// cover: [3 3 3] total: 6
}

func ExampleByName() {
	for _, name := range []string{"biased", "derand", "fixed", "greedy", "importance", "random", "sorted"} {
		a, err := allocate.ByName(name, 1)
		if err != nil {
			fmt.Println(err)
			return
		}
		if f, ok := a.(*allocate.Fixed); ok {
			f.Settings = []pauli.Setting{pauli.MustParseSetting("ZZ"), pauli.MustParseSetting("XX")}
		}
		p, err := allocate.Run(twoSpins(), 100, a, nil)
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Println(name, p.TotalShots())
	}
	// Output:
	// biased 100
	// derand 100
	// fixed 100
	// greedy 100
	// importance 100
	// random 100
	// sorted 100
}

func ExampleScaledOneNorm() {
	h := twoSpins()
	p, err := allocate.Run(h, 100, &allocate.Sorted{}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	// Sorted insertion opens group ZZ (one-norm 1), then XX for XI and IX
	// (one-norm 1.4), and gives them 100·1/2.4 = 41.67 → 42 and
	// 100·1.4/2.4 = 58.33 → 58 shots; 0.3381 = 1/√42 + 1.4/√58.
	norm, missing, _, err := allocate.ScaledOneNorm(h, p.Cover)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(p.Settings, p.Shots)
	fmt.Printf("Σ|h_i|/sqrt(N_i) = %.4f, uncovered terms: %d\n", norm, missing)
	// Output:
	// [ZZ XX] [42 58]
	// Σ|h_i|/sqrt(N_i) = 0.3381, uncovered terms: 0
}

func ExampleBiasedDistributions() {
	// One qubit, h = 0.6 X − 0.2 Z: the proxy 0.36/β_X + 0.04/β_Z is least
	// at β ∝ |h| = (0.75, 0, 0.25).
	h, _ := hamiltonian.New(1, 0, []hamiltonian.Term{
		{Pauli: pauli.MustParse("X"), Coeff: 0.6},
		{Pauli: pauli.MustParse("Z"), Coeff: -0.2},
	})
	beta, err := allocate.BiasedDistributions(h)
	fmt.Printf("X %.2f Y %.2f Z %.2f %v\n", beta[0][0], beta[0][1], beta[0][2], err)
	// Output:
	// X 0.75 Y 0.00 Z 0.25 <nil>
}
