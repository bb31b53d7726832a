package guarantee_test

import (
	"fmt"
	"log"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
)

// A four-site transverse-field Ising ring (energies in units of the
// coupling): certify its ground energy to ±0.05 at 95% confidence,
// stopping as soon as the data allow.
func ExampleAnytime() {
	h, err := hamiltonian.TransverseFieldIsing(hamiltonian.Ring(4), 1, 1)
	if err != nil {
		log.Fatal(err)
	}
	// Any plan becomes a distribution over its settings (MATH.md §4.1).
	plan, err := allocate.Run(h, 100, &allocate.Greedy{}, nil)
	if err != nil {
		log.Fatal(err)
	}
	d, err := guarantee.IIDOf(h, plan)
	if err != nil {
		log.Fatal(err)
	}
	// The simulator stands in for the hardware adapter.
	dev, ground, err := estimate.GroundStateSimulator(h, 1, nil)
	if err != nil {
		log.Fatal(err)
	}
	res, err := guarantee.Anytime(h, dev, &guarantee.AnytimeOptions{
		Plan: d, Target: 0.05, Delta: 0.05, MaxShots: 1000000, Seed: 2,
		Pilot: 500, // re-weights π from 500 shots that the certificate never uses
	})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println("certified:", res.Certified, "bound ≤ 0.05:", res.Bound <= 0.05)
	fmt.Println("interval contains the exact energy:", res.Interval[0] <= ground.Energy && ground.Energy <= res.Interval[1])
	// Output:
	// certified: true bound ≤ 0.05: true
	// interval contains the exact energy: true
}

// The betting confidence sequence on its own: feed samples in a known
// range, read an interval that is valid whenever you stop.
func ExampleBettingCS() {
	cs, err := guarantee.NewBettingCS(0, 1, 0.05, nil)
	if err != nil {
		log.Fatal(err)
	}
	for k := range 2000 {
		x := float64(k%4) / 4 // 0, 0.25, 0.5, 0.75, ... mean 0.375
		if err := cs.Add(x); err != nil {
			log.Fatal(err)
		}
	}
	lo, hi := cs.Interval()
	fmt.Printf("after %d samples: contains 0.375: %v, width below 0.1: %v\n", cs.Len(), lo <= 0.375 && 0.375 <= hi, hi-lo < 0.1)
	// Output:
	// after 2000 samples: contains 0.375: true, width below 0.1: true
}
