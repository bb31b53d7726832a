package guarantee

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/pauli"
)

// pairNoise is the simulated device of the pair tests: asymmetric
// per-qubit flips and, on the pairs (0, 1) and (2, 3), both bits flipping
// together with probability 0.04 (the simulator's correlated pair readout,
// MATH.md §2.1.4; pair (1, 2) has none, so the pairs are disjoint).
func pairNoise() *estimate.SimulatorOptions {
	return &estimate.SimulatorOptions{Readout: asymmetricReadout(4), PairFlip: []float64{0.04, 0, 0.04}, CacheBytes: -1}
}

var testPairs = [][2]int{{0, 1}, {2, 3}}

// simulatePairCalibration prepares each state of
// estimate.PairCalibrationPreparations of n qubits with the given pairs
// shots times on the simulator (a basis state read in Z through noise) and
// counts the shots in a calibration with pairs and one without.
func simulatePairCalibration(t *testing.T, n int, pairs [][2]int, noise *estimate.SimulatorOptions, shots int, seed uint64) (withPairs, perQubit *estimate.Calibration) {
	t.Helper()
	preps, err := estimate.PairCalibrationPreparations(n, pairs)
	if err != nil {
		t.Fatal(err)
	}
	if withPairs, err = estimate.NewPairCalibration(n, pairs); err != nil {
		t.Fatal(err)
	}
	perQubit = estimate.NewCalibration(n)
	z := pauli.Complete(pauli.Identity(n), pauli.Z)
	for k, p := range preps {
		psi := make([]complex128, 1<<n)
		idx := 0
		for q := range n {
			idx |= int(p.Get(q)) << q
		}
		psi[idx] = 1
		sim, err := estimate.NewSimulator(psi, seed*8+uint64(k), noise)
		if err != nil {
			t.Fatal(err)
		}
		rec := estimate.NewRecords(n)
		if err := sim.Run([]pauli.Setting{z}, []int{shots}, rec); err != nil {
			t.Fatal(err)
		}
		for s := range rec.GroupLen(0) {
			withPairs.Add(p, rec.Outcome(0, s))
			perQubit.Add(p, rec.Outcome(0, s))
		}
	}
	return withPairs, perQubit
}

// h2Plans returns H2 (4 qubits, Jordan–Wigner), its ground state, and a
// local (greedy) and an entangled (sorted-gc) plan of shots shots.
func h2Plans(t *testing.T, shots int) (*hamiltonian.Hamiltonian, hamiltonian.Eigenpair, []*allocate.Plan) {
	t.Helper()
	h, err := hamiltoniantest.Molecule("h2_sto3g_0.7414A", fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	ground, err := hamiltonian.GroundState(h, nil)
	if err != nil {
		t.Fatal(err)
	}
	var plans []*allocate.Plan
	for _, name := range []string{"greedy", "sorted-gc"} {
		a, _ := allocate.ByName(name, 1)
		p, err := allocate.Run(h, shots, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		plans = append(plans, p)
	}
	return h, ground, plans
}

// TestPairReadoutBoundsCover checks by seeded simulation that, under
// correlated pair readout on two disjoint pairs, the certificate and the
// data bound of CalibratedBounds with a pair calibration (MATH.md §2.1.5)
// cover H2's exact ground energy in at least a fraction 1 − δ of the
// repetitions (δ = 0.1), on a local and an entangled plan, each
// repetition with fresh calibration and measurement shots. A correct bound
// exceeds the binomial limit (the (1 − 1e-4) quantile of Binomial(reps,
// δ), gonum's CDF) with probability at most 1e-4, so the test fails
// falsely with probability at most 4e-4. Under -short: 4 repetitions.
func TestPairReadoutBoundsCover(t *testing.T) {
	reps := 150
	if testing.Short() {
		reps = 4
	}
	const delta, shots, calShots = 0.1, 3000, 4000
	limit := binomialLimit(reps, delta, 1e-4)
	h, ground, plans := h2Plans(t, shots)
	for pi, p := range plans {
		certFail, dataFail := 0, 0
		var last *ReadoutBound
		for r := range reps {
			seed := uint64(1000*pi + r + 1)
			sim, err := estimate.NewSimulator(ground.State, seed, pairNoise())
			if err != nil {
				t.Fatal(err)
			}
			rec := estimate.NewRecords(4)
			if err := sim.Run(p.Settings, p.Shots, rec); err != nil {
				t.Fatal(err)
			}
			cal, _ := simulatePairCalibration(t, 4, testPairs, pairNoise(), calShots, seed<<16)
			b, err := CalibratedBounds(h, rec, cal, delta, nil)
			if err != nil {
				t.Fatal(err)
			}
			e := math.Abs(b.Energy - ground.Energy)
			if e > b.Certified {
				certFail++
			}
			if e > b.Data.Bound {
				dataFail++
			}
			last = b
		}
		t.Logf("plan %d: certified %.4g (calibration bias %.4g), data %.4g; fails %d, %d of %d (limit %d)",
			pi, last.Certified, last.CalibrationBias, last.Data.Bound, certFail, dataFail, reps, limit)
		if certFail > limit || dataFail > limit {
			t.Errorf("plan %d: certificate failed %d, data bound %d times in %d; limit %d", pi, certFail, dataFail, reps, limit)
		}
	}
}

// TestPerQubitBoundsFailUnderPairReadout is the test that motivates the
// pair model: with the same correlated pair readout and many shots, the
// bounds made from a per-qubit calibration (MATH.md §2.1.1–§2.1.2, whose
// model has no joint flips) exclude H2's exact energy in every one of 4
// seeded repetitions, each bound stated at δ = 0.1 (a bound that held at
// its level would fail all 4 with probability at most 1e-4), while the
// pair-aware bounds from the same calibration shots cover it. Joint flips
// leave the parity of the pair unchanged, so the per-qubit model, which
// sees them as independent flips of each qubit, over-corrects every term
// that reads both qubits of a pair.
func TestPerQubitBoundsFailUnderPairReadout(t *testing.T) {
	if testing.Short() {
		t.Skip("200 000 shots per repetition")
	}
	const delta, shots, calShots, reps = 0.1, 200000, 100000, 4
	h, ground, plans := h2Plans(t, shots)
	p := plans[0]
	for r := range reps {
		sim, err := estimate.NewSimulator(ground.State, uint64(r+1), pairNoise())
		if err != nil {
			t.Fatal(err)
		}
		rec := estimate.NewRecords(4)
		if err := sim.Run(p.Settings, p.Shots, rec); err != nil {
			t.Fatal(err)
		}
		withPairs, perQubit := simulatePairCalibration(t, 4, testPairs, pairNoise(), calShots, uint64(r+100))
		single, err := CalibratedBounds(h, rec, perQubit, delta, nil)
		if err != nil {
			t.Fatal(err)
		}
		es := math.Abs(single.Energy - ground.Energy)
		if es <= single.Certified || es <= single.Data.Bound {
			t.Errorf("rep %d: per-qubit error %.4g within its certificate %.4g or data bound %.4g", r, es, single.Certified, single.Data.Bound)
		}
		pair, err := CalibratedBounds(h, rec, withPairs, delta, nil)
		if err != nil {
			t.Fatal(err)
		}
		ep := math.Abs(pair.Energy - ground.Energy)
		if ep > pair.Certified || ep > pair.Data.Bound {
			t.Errorf("rep %d: pair-aware error %.4g above its certificate %.4g or data bound %.4g", r, ep, pair.Certified, pair.Data.Bound)
		}
		if r == 0 {
			t.Logf("per-qubit: error %.4g, certificate %.4g, data %.4g; pairs: error %.4g, certificate %.4g, data %.4g",
				es, single.Certified, single.Data.Bound, ep, pair.Certified, pair.Data.Bound)
		}
	}
}
