package shotplan_test

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
)

// The whole job on a small transverse-field Ising ring: plan, certify before
// any shot, simulate the device, estimate, and bound the error from the data.
func Example() {
	h, err := hamiltonian.TransverseFieldIsing(hamiltonian.Ring(6), 1, 1)
	if err != nil {
		panic(err)
	}
	plan, err := allocate.Run(h, 1000, &allocate.Greedy{}, nil) // the setting of every shot
	if err != nil {
		panic(err)
	}
	cert, err := guarantee.CertifyPlan(h, plan, 0.05, nil) // holds for every state
	if err != nil {
		panic(err)
	}
	sim, ground, err := estimate.GroundStateSimulator(h, 7, nil) // or your own estimate.Device
	if err != nil {
		panic(err)
	}
	rec := estimate.NewRecords(h.Qubits())
	if err := sim.Run(plan.Settings, plan.Shots, rec); err != nil {
		panic(err)
	}
	res, err := estimate.Grouped(h, rec, nil) // res.StdErr is approximate
	if err != nil {
		panic(err)
	}
	data, err := guarantee.Empirical(h, rec, 0.05, nil) // rigorous, from the data
	if err != nil {
		panic(err)
	}
	// −2/sin(π/12) for the ring of six (Pfeuty 1970; REFERENCE_VALUES.md).
	fmt.Printf("exact %.6f (closed form %.6f)\n", ground.Energy, -2/math.Sin(math.Pi/12))
	distinct, _ := plan.Distinct()
	fmt.Printf("plan: %d shots on %d distinct settings\n", plan.TotalShots(), len(distinct))
	fmt.Println("estimate within the certified bound:", math.Abs(res.Energy-ground.Energy) <= cert.Bound)
	fmt.Println("data bound tighter than the certificate:", data.Bound < cert.Bound)
	// Output:
	// exact -7.727407 (closed form -7.727407)
	// plan: 1000 shots on 2 distinct settings
	// estimate within the certified bound: true
	// data bound tighter than the certificate: true
}
