package estimate_test

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
)

// loadH2 returns the Jordan–Wigner H2 Hamiltonian at 0.74 Å
// (hamiltonian/hamiltoniantest, computed outside this project).
func loadH2(t *testing.T) *hamiltonian.Hamiltonian {
	t.Helper()
	h, _, err := hamiltoniantest.H2Qubit(hamiltoniantest.H2, "jw")
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// TestPlansEndToEnd plans 200 shots for the H2 ground state with allocate's
// strategies, runs them on the simulator and estimates with the estimator
// that fits each plan, 400 times with fresh seeds. The mean estimate must
// lie within 4 standard errors of the exact energy (the full-CI value of
// hamiltonian/hamiltoniantest/energies.json, psi4), widened by the mean
// bias bound (terms a random plan happened not to cover, for the grouped
// estimator); for a normal mean the false-failure rate is 6e-5 per case.
func TestPlansEndToEnd(t *testing.T) {
	if testing.Short() {
		t.Skip("400 repetitions per plan")
	}
	h := loadH2(t)
	sim, ev, err := estimate.GroundStateSimulator(h, 12, nil)
	if err != nil {
		t.Fatal(err)
	}
	fci, err := hamiltoniantest.FullCI(hamiltoniantest.H2)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(ev.Energy-fci) > 1e-8 {
		t.Fatalf("ground energy %v, want the full-CI %v", ev.Energy, fci)
	}
	beta, err := allocate.BiasedDistributions(h)
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name     string
		strategy func(seed uint64) allocate.Allocator
		estimate func(rec *estimate.Records, plan *allocate.Plan) (*estimate.Result, error)
	}{
		{"greedy plan, grouped estimator",
			func(uint64) allocate.Allocator { return &allocate.Greedy{} },
			func(rec *estimate.Records, _ *allocate.Plan) (*estimate.Result, error) {
				return estimate.Grouped(h, rec, nil)
			}},
		{"uniform random plan, classical shadows",
			func(seed uint64) allocate.Allocator { return &allocate.Random{Seed: seed} },
			func(rec *estimate.Records, _ *allocate.Plan) (*estimate.Result, error) {
				return estimate.UniformShadow(h, rec, nil)
			}},
		{"uniform random plan, grouped estimator",
			func(seed uint64) allocate.Allocator { return &allocate.Random{Seed: seed} },
			func(rec *estimate.Records, _ *allocate.Plan) (*estimate.Result, error) {
				return estimate.Grouped(h, rec, nil)
			}},
		{"biased random plan, locally biased shadows",
			func(seed uint64) allocate.Allocator { return &allocate.Biased{Seed: seed} },
			func(rec *estimate.Records, _ *allocate.Plan) (*estimate.Result, error) {
				return estimate.BiasedShadow(h, rec, beta, nil)
			}},
		{"importance plan, importance sampling",
			func(seed uint64) allocate.Allocator { return &allocate.Importance{Seed: seed} },
			func(rec *estimate.Records, plan *allocate.Plan) (*estimate.Result, error) {
				return estimate.ImportanceSampling(h, rec, plan.Drawn, nil)
			}},
	}
	const reps, budget = 400, 200
	for _, tc := range tests {
		es := make([]float64, 0, reps)
		bias := 0.0     // mean bias bound: uncovered terms of random plans
		reported := 0.0 // mean reported variance
		for r := range uint64(reps) {
			plan, err := allocate.Run(h, budget, tc.strategy(r), nil)
			if err != nil {
				t.Fatal(err)
			}
			rec := estimate.NewRecords(4)
			if err := sim.Run(plan.Settings, plan.Shots, rec); err != nil {
				t.Fatal(err)
			}
			res, err := tc.estimate(rec, plan)
			if err != nil {
				t.Fatalf("%s: %v", tc.name, err)
			}
			es = append(es, res.Energy)
			bias += res.Bias / reps
			reported += res.StdErr * res.StdErr / reps
		}
		mean, sd := meanSD(es)
		se := sd / math.Sqrt(reps)
		t.Logf("%s: mean %.5f, exact %.5f, %.2f standard errors apart; single-run spread %.4f, reported %.4f; mean bias bound %.4f", tc.name, mean, ev.Energy, (mean-ev.Energy)/se, sd, math.Sqrt(reported), bias)
		if math.Abs(mean-ev.Energy) > 4*se+bias {
			t.Errorf("%s: mean %v over %d runs is %.1f standard errors (plus bias bound %v) from %v, want at most 4", tc.name, mean, reps, (math.Abs(mean-ev.Energy)-bias)/se, bias, ev.Energy)
		}
	}
}

func meanSD(x []float64) (mean, sd float64) {
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	for _, v := range x {
		sd += (v - mean) * (v - mean)
	}
	return mean, math.Sqrt(sd / float64(len(x)-1))
}

// TestGroupedOneShotSettings checks the standard error of the grouped
// estimator when almost every setting has a single shot (a fixed uniform
// random plan of 200 shots for H2): over 400 runs of the same plan, the
// mean reported variance must be within [0.7, 1.4] of the observed
// variance of the estimates (the observed variance of 400 values has a
// relative standard deviation of about 7%).
func TestGroupedOneShotSettings(t *testing.T) {
	if testing.Short() {
		t.Skip("400 repetitions")
	}
	h := loadH2(t)
	sim, _, err := estimate.GroundStateSimulator(h, 3, nil)
	if err != nil {
		t.Fatal(err)
	}
	plan, err := allocate.Run(h, 200, &allocate.Random{Seed: 1}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(plan.Settings) < 150 {
		t.Fatalf("plan has %d distinct entries, want mostly one-shot settings", len(plan.Settings))
	}
	const reps = 400
	es := make([]float64, 0, reps)
	reported := 0.0
	for range reps {
		rec := estimate.NewRecords(4)
		if err := sim.Run(plan.Settings, plan.Shots, rec); err != nil {
			t.Fatal(err)
		}
		res, err := estimate.Grouped(h, rec, nil)
		if err != nil {
			t.Fatal(err)
		}
		es = append(es, res.Energy)
		reported += res.StdErr * res.StdErr / reps
	}
	_, sd := meanSD(es)
	r := reported / (sd * sd)
	t.Logf("observed variance %.3g, mean reported %.3g, ratio %.3f", sd*sd, reported, r)
	if r < 0.7 || r > 1.4 {
		t.Errorf("mean reported variance %v, observed %v: ratio %.2f, want [0.7, 1.4]", reported, sd*sd, r)
	}
}
