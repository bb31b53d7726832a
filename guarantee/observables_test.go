package guarantee

import (
	"bytes"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
)

// h2Observables returns the energy, N, S_z and S² of H2/STO-3G (4 qubits,
// Jordan–Wigner).
func h2Observables(t testing.TB) []Observable {
	t.Helper()
	b, err := hamiltoniantest.FCIDUMP(hamiltoniantest.H2)
	if err != nil {
		t.Fatal(err)
	}
	g, err := molecule.ReadFCIDUMP(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	h, err := g.QubitHamiltonian(fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	obs := []Observable{{Name: "E", H: h}}
	for _, o := range molecule.Observables {
		q, err := g.QubitObservable(o, fermion.JordanWigner)
		if err != nil {
			t.Fatal(err)
		}
		obs = append(obs, Observable{Name: o.String(), H: q})
	}
	return obs
}

// randomState returns a normalised random state of n qubits, so that no
// observable has a deterministic value.
func randomState(rng *rand.Rand, n int) []complex128 {
	psi := make([]complex128, 1<<n)
	s := 0.0
	for i := range psi {
		psi[i] = complex(rng.NormFloat64(), rng.NormFloat64())
		s += real(psi[i])*real(psi[i]) + imag(psi[i])*imag(psi[i])
	}
	for i := range psi {
		psi[i] /= complex(math.Sqrt(s), 0)
	}
	return psi
}

// TestCertifyAllCoverage checks by seeded simulation that the simultaneous
// bounds hold together: on a random state of H2's 4 qubits, with a greedy
// plan for the union of E, N, S_z and S², the event "every data bound
// holds" and the event "every a-priori certificate holds" each have
// probability at least 1 − δ (union bound over the observables at δ/4 each,
// MATH.md §4.8). Over T trials the failures of each are at most
// Binomial(T, δ); the test fails when a count exceeds the binomial limit at
// level 1e-4, so its false-failure rate is below 2e-4. T = 60 under -short,
// 1000 otherwise.
func TestCertifyAllCoverage(t *testing.T) {
	const delta = 0.2
	trials := 1000
	if testing.Short() {
		trials = 60
	}
	obs := h2Observables(t)
	union, err := UnionHamiltonian(obs, []float64{1, 1, 1, 1})
	if err != nil {
		t.Fatal(err)
	}
	a, err := allocate.ByName("greedy", 1)
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(union, 200, a, nil)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(7, 11))
	psi := randomState(rng, 4)
	truth := make([]float64, len(obs))
	for k, o := range obs {
		truth[k] = o.H.Energy(psi)
	}
	dataFail, certFail := 0, 0
	for trial := range trials {
		sim, err := estimate.NewSimulator(psi, uint64(trial)+1, nil)
		if err != nil {
			t.Fatal(err)
		}
		rec := estimate.NewRecords(4)
		if err := sim.Run(p.Settings, p.Shots, rec); err != nil {
			t.Fatal(err)
		}
		s, err := CertifyAll(obs, p, rec, delta, nil)
		if err != nil {
			t.Fatal(err)
		}
		if len(s.Split) != len(obs) || s.Bounds[0].Delta != delta/4 {
			t.Fatalf("split %v, δ_0 = %v; want equal shares δ/4", s.Split, s.Bounds[0].Delta)
		}
		dOK, cOK := true, true
		for k, b := range s.Bounds {
			if math.Abs(b.Data.Energy-b.Estimate.Energy) > 1e-9*max(1, math.Abs(truth[k])) {
				t.Fatalf("%s: data bound about %g, estimate %g", b.Name, b.Data.Energy, b.Estimate.Energy)
			}
			dOK = dOK && math.Abs(b.Data.Energy-truth[k]) <= b.Data.Bound
			cOK = cOK && math.Abs(b.Estimate.Energy-truth[k]) <= b.Certificate.Bound
		}
		if !dOK {
			dataFail++
		}
		if !cOK {
			certFail++
		}
	}
	limit := binomialLimit(trials, delta, 1e-4)
	if dataFail > limit || certFail > limit {
		t.Errorf("over %d trials the simultaneous data bounds failed %d times, the certificates %d times; limit %d at δ = %g", trials, dataFail, certFail, limit, delta)
	}
}

// TestCertifyAllSplit checks a stated split and the errors.
func TestCertifyAllSplit(t *testing.T) {
	obs := h2Observables(t)
	a, _ := allocate.ByName("greedy", 1)
	p, err := allocate.Run(obs[0].H, 50, a, nil)
	if err != nil {
		t.Fatal(err)
	}
	s, err := CertifyAll(obs, p, nil, 0.1, &AllOptions{Split: []float64{5, 1, 2, 2}})
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{0.05, 0.01, 0.02, 0.02}
	for k, b := range s.Bounds {
		if math.Abs(b.Delta-want[k]) > 1e-15 || b.Certificate.Delta != b.Delta {
			t.Errorf("%s: δ_k = %v (certificate %v), want %v", b.Name, b.Delta, b.Certificate.Delta, want[k])
		}
		// The certificate at δ_k is the single-observable certificate at δ_k.
		c, err := Certify(obs[k].H, p.Settings, p.Shots, want[k], nil)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(c.Bound-b.Certificate.Bound) > 1e-12*c.Bound {
			t.Errorf("%s: bound %v, Certify gives %v", b.Name, b.Certificate.Bound, c.Bound)
		}
	}
	for _, bad := range [][]float64{{1, 1}, {1, 0, 1, 1}, {1, math.NaN(), 1, 1}} {
		if _, err := CertifyAll(obs, p, nil, 0.1, &AllOptions{Split: bad}); err == nil {
			t.Errorf("split %v: no error", bad)
		}
	}
	if _, err := CertifyAll(obs, nil, nil, 0.1, nil); err == nil {
		t.Error("no plan and no records: no error")
	}
	if _, err := CertifyAll(nil, p, nil, 0.1, nil); err == nil {
		t.Error("no observables: no error")
	}
	other, _ := hamiltonian.New(2, 0, nil)
	if _, err := CertifyAll(append(obs, Observable{Name: "x", H: other}), p, nil, 0.1, nil); err == nil {
		t.Error("mixed widths: no error")
	}
}

// TestPlanAll checks that the plan PlanAll returns meets every target: each
// observable's certificate, recomputed with Certify at its δ_k = δ/4, is
// within its target; an unreachable target returns the plan of maxShots
// with Met false.
func TestPlanAll(t *testing.T) {
	obs := h2Observables(t)
	targets := []float64{0.5, 1, 0.5, 2}
	const delta = 0.05
	a, _ := allocate.ByName("greedy", 1)
	m, err := PlanAll(obs, targets, a, delta, 1<<16, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !m.Met {
		t.Fatalf("targets not met within 2^16 shots (budget %d)", m.Shots)
	}
	check := func(p *allocate.Plan) bool {
		ok := true
		for k, o := range obs {
			c, err := Certify(o.H, p.Settings, p.Shots, delta/4, nil)
			if err != nil {
				t.Fatal(err)
			}
			ok = ok && c.Bound <= targets[k]
		}
		return ok
	}
	if !check(m.Plan) {
		t.Errorf("plan of %d shots: some certificate above its target", m.Shots)
	}
	if m.Shots > 1 {
		p, err := allocate.Run(m.Union, m.Shots-1, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		if check(p) {
			t.Logf("note: %d shots also meet the targets (bounds need not fall with every shot)", m.Shots-1)
		}
	}
	coarse, err := PlanAll(obs, targets, a, delta, 1<<16, &AllOptions{Resolution: 0.1})
	if err != nil {
		t.Fatal(err)
	}
	if !coarse.Met || !check(coarse.Plan) || coarse.Evaluated > m.Evaluated {
		t.Errorf("Resolution 0.1: met %v at %d shots after %d budgets; exact search: %d shots after %d", coarse.Met, coarse.Shots, coarse.Evaluated, m.Shots, m.Evaluated)
	}
	if _, err := PlanAll(obs, targets, a, delta, 100, &AllOptions{Resolution: -1}); err == nil {
		t.Error("negative resolution: no error")
	}
	if _, err := PlanAll(obs, targets[:2], a, delta, 100, nil); err == nil {
		t.Error("too few targets: no error")
	}
	if _, err := PlanAll(obs, []float64{1, 0, 1, 1}, a, delta, 100, nil); err == nil {
		t.Error("zero target: no error")
	}
	m, err = PlanAll(obs, []float64{1e-6, 1, 1, 1}, a, delta, 64, nil)
	if err != nil || m.Met || m.Shots != 64 {
		t.Errorf("unreachable target: met %v at %d shots, err %v; want not met at 64", m != nil && m.Met, m.Shots, err)
	}
}
