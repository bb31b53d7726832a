package guarantee_test

import (
	"fmt"
	"log"
	"strings"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// A made-up three-qubit chain: a strong ZZ coupling, weaker fields, and a
// tiny three-body term.
const chain = `qubits 3
-1.0 ZZI
-1.0 IZZ
-0.4 XII
-0.4 IXI
-0.4 IIX
0.02 YYY
`

func mustRead(text string) *hamiltonian.Hamiltonian {
	h, err := hamiltonian.Read(strings.NewReader(text))
	if err != nil {
		log.Fatal(err)
	}
	return h
}

// Certify a hand-written list of settings before any shot.
func ExampleCertify() {
	h := mustRead(chain)
	settings := []pauli.Setting{pauli.MustParseSetting("ZZZ"), pauli.MustParseSetting("XXX"), pauli.MustParseSetting("YYY")}
	shots := []int{300, 200, 3}
	c, err := guarantee.Certify(h, settings, shots, 0.05, nil)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("radius %.4f (relaxed %.4f), bias %.4f, certified bound %.4f\n", c.Radius, c.RelaxedRadius, c.Bias, c.Bound)
	fmt.Printf("largest share: term %s, %.4f\n", c.Top[0].Pauli, c.Top[0].Share)
	fmt.Printf("threshold rule drops %d term(s): total %.4f\n", c.Threshold.Dropped, c.Threshold.Bound)
	fmt.Printf("optimal drop set (exact %v): %d term(s), total %.4f\n", c.Optimal.Exact, c.Optimal.Dropped, c.Optimal.Bound)
	// Output:
	// radius 0.3905 (relaxed 0.5755), bias 0.0000, certified bound 0.3905
	// largest share: term ZZI, 0.1260
	// threshold rule drops 1 term(s): total 0.4092
	// optimal drop set (exact true): 0 term(s), total 0.3905
}

// The smallest budget for which the greedy strategy's plan certifies
// ±0.1 at 95% confidence. Here every term is covered by one setting only, so
// V ≥ ‖h‖_1²/N and no plan certifies with fewer shots than importance
// sampling's closed form; plans gain in the data bounds instead.
func ExamplePlanBudget() {
	h := mustRead(chain)
	b, err := guarantee.PlanBudget(h, &allocate.Greedy{}, 0.1, 0.05, &guarantee.BudgetOptions{MaxShots: 100_000})
	if err != nil {
		log.Fatal(err)
	}
	n, _ := guarantee.ImportanceShots(h, 0.1, 0.05)
	fmt.Printf("greedy: %d shots (certified %v, total %.4f)\n", b.Shots, b.Certified, b.Certificate.Bound)
	fmt.Printf("importance sampling, closed form: %d shots\n", n)
	// Output:
	// greedy: 7941 shots (certified true, total 0.1000)
	// importance sampling, closed form: 7650 shots
}

// After the shots: a data bound for a state with little spread, using a
// certificate's truncation in the estimator too.
func ExampleEmpirical() {
	h := mustRead(chain)
	settings := []pauli.Setting{pauli.MustParseSetting("ZZZ"), pauli.MustParseSetting("XXX"), pauli.MustParseSetting("YYY")}
	shots := []int{300, 200, 3}
	c, err := guarantee.Certify(h, settings, shots, 0.05, nil)
	if err != nil {
		log.Fatal(err)
	}
	// The state |000⟩: every Z reading is +1, X and Y readings are coin flips.
	psi, err := estimate.BasisState(3, pauli.NewBits(3))
	if err != nil {
		log.Fatal(err)
	}
	sim, err := estimate.NewSimulator(psi, 1, nil)
	if err != nil {
		log.Fatal(err)
	}
	rec := estimate.NewRecords(3)
	if err := sim.Run(settings, shots, rec); err != nil {
		log.Fatal(err)
	}
	b, err := guarantee.Empirical(h, rec, 0.05, &guarantee.EmpiricalOptions{Exclude: c.Optimal.Drop, Form: guarantee.Pooled})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("data bound below the a-priori bound: %v\n", b.Bound < c.Optimal.Bound)
	fmt.Println(b.Form)
	// Output:
	// data bound below the a-priori bound: true
	// pooled: variance bounds (Maurer & Pontil 2009, Thm 10) and Bernstein's inequality for the sum
}

// Measure in rounds until the data certify ±0.2 at 95% confidence.
func ExampleSequential() {
	h := mustRead(chain)
	base, err := allocate.Run(h, 100, &allocate.Greedy{}, nil)
	if err != nil {
		log.Fatal(err)
	}
	psi, err := estimate.BasisState(3, pauli.NewBits(3))
	if err != nil {
		log.Fatal(err)
	}
	sim, err := estimate.NewSimulator(psi, 2, nil)
	if err != nil {
		log.Fatal(err)
	}
	res, err := guarantee.Sequential(h, sim, &guarantee.SequentialOptions{
		Settings: base.Settings, Shots: base.Shots,
		Target: 0.2, Delta: 0.05, MaxShots: 100_000, Growth: 2, Form: guarantee.Pooled,
	})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println("certified:", res.Certified, "within", res.Records.Len() <= 100_000, "shots")
	// Output:
	// certified: true within true shots
}
