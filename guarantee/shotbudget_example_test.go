package guarantee_test

import (
	"fmt"
	"log"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
)

// How many shots for ±0.1 at 95%? Plan once at a small reference budget and
// count copies of that plan; the exact ground state serves as the proxy for
// the expected figures. (PlanBudget's exhaustive search finds 7941 shots for
// greedy's own plan on this chain: copies cost little precision.)
func ExampleBudgetOf() {
	h := mustRead(chain)
	p, err := allocate.Run(h, 100, &allocate.Greedy{}, nil)
	if err != nil {
		log.Fatal(err)
	}
	ground, err := hamiltonian.GroundState(h, nil)
	if err != nil {
		log.Fatal(err)
	}
	b, err := guarantee.BudgetOf(h, p, 0.1, 0.05, ground.State)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("certified: %d copies of %d shots = %d shots\n", b.Copies, b.Reference, b.Shots)
	c, err := guarantee.Certify(h, p.Settings, scaled(p.Shots, b.Copies), 0.05, nil)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("their certificate: ±%.4f\n", c.Bound)
	fmt.Printf("expected on the ground state: %d shots (error bar), %d shots (anytime route)\n", b.ProxyShots, b.AnytimeShots)
	// Output:
	// certified: 80 copies of 100 shots = 8000 shots
	// their certificate: ±0.0999
	// expected on the ground state: 1100 shots (error bar), 2514 shots (anytime route)
}

func scaled(shots []int, r int) []int {
	out := make([]int, len(shots))
	for k, n := range shots {
		out[k] = r * n
	}
	return out
}
