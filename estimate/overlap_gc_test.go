package estimate_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// gcSplitHamiltonian is an invented 4-qubit Hamiltonian of the shape of a
// small molecule's (number, hopping and exchange terms): the overlap-gc
// strategy splits its coefficients between entangled settings.
func gcSplitHamiltonian(t *testing.T) *hamiltonian.Hamiltonian {
	t.Helper()
	var terms []hamiltonian.Term
	for _, c := range []struct {
		p string
		h float64
	}{
		{"ZIII", 0.8}, {"IZII", 0.8}, {"IIZI", -0.45}, {"IIIZ", -0.45},
		{"ZZII", 0.17}, {"IIZZ", 0.18}, {"ZIZI", 0.12}, {"IZIZ", 0.12}, {"ZIIZ", 0.16}, {"IZZI", 0.16},
		{"XXYY", -0.045}, {"YYXX", -0.045}, {"XYYX", 0.045}, {"YXXY", 0.045},
		{"XXII", 0.21}, {"YYII", 0.21}, {"IIXX", -0.13}, {"IIYY", -0.13}, {"XZXI", 0.07}, {"YZYI", 0.07},
	} {
		terms = append(terms, hamiltonian.Term{Pauli: pauli.MustParse(c.p), Coeff: c.h})
	}
	h, err := hamiltonian.New(4, -0.3, terms)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// TestGroupedSplitUnbiasedEntangled is TestGroupedSplitUnbiased for the
// overlap-gc strategy, whose split weighs terms between entangled
// settings, on gcSplitHamiltonian (worst-case model and state proxies)
// and on two random 6-qubit Hamiltonians (state proxies): E[Ê] = E_0 + Σ_g Σ_b p_g(b)(E_g(b) − E_0) with p_g the Born
// probabilities of setting g after its circuit (the simulator's, checked
// against the direct action of the Pauli strings in
// TestSimulatorEntangledExpectation), against ⟨ψ|H|ψ⟩ from the Pauli
// matrices (hamiltoniantest.ApplyString). The tolerance follows the
// rounding argument of TestGroupedSplitUnbiased: each estimate is a sum of
// about 10^3 products of numbers at most ‖h‖_1 in size, and the expectation
// sums 2^n·G of them, so the rounding error is below 10^3·2^n·G·2^−53·‖h‖_1.
func TestGroupedSplitUnbiasedEntangled(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 13))
	for trial := range 5 {
		h := gcSplitHamiltonian(t)
		if trial >= 3 {
			h = randomSixQubit(t, rng)
		}
		n := h.Qubits()
		psi := randomState(rng, n)
		var a allocate.Allocator = &allocate.OverlapGC{}
		if trial > 0 {
			px, err := allocate.NewStateProxy(psi)
			if err != nil {
				t.Fatal(err)
			}
			a = &allocate.OverlapGC{Proxy: px}
		}
		budget := 29 + 10*trial
		p, err := allocate.Run(h, budget, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		settings, shots := p.Distinct()
		if !splitDiffers(p, settings, shots) {
			t.Fatalf("trial %d: the split is the implicit one; the test needs a real split", trial)
		}
		entangled := false
		for _, gr := range p.Split {
			entangled = entangled || !gr.Setting.IsLocal()
		}
		if !entangled {
			t.Fatalf("trial %d: the split has no entangled setting", trial)
		}
		energy := func(g int, b uint64) float64 {
			rec := estimate.NewRecords(n)
			for k, s := range settings {
				out := pauli.Bits{0}
				if k == g {
					out[0] = b
				}
				for range shots[k] {
					if err := rec.Add(s, out); err != nil {
						t.Fatal(err)
					}
				}
			}
			r, err := estimate.Grouped(h, rec, &estimate.Options{Split: p.Split})
			if err != nil {
				t.Fatal(err)
			}
			return r.Energy
		}
		sim, err := estimate.NewSimulator(psi, 1, nil)
		if err != nil {
			t.Fatal(err)
		}
		e0 := energy(-1, 0)
		mean := e0
		for g, s := range settings {
			for b, pb := range sim.Probabilities(nil, s) {
				mean += pb * (energy(g, uint64(b)) - e0)
			}
		}
		want := denseEnergy(h, psi)
		tol := 1e3 * float64(len(psi)*len(settings)) * 0x1p-53 * h.OneNorm()
		if math.Abs(mean-want) > tol {
			t.Errorf("trial %d: E[Ê] = %.15g, ⟨ψ|H|ψ⟩ = %.15g (difference %.3g, tolerance %.3g)", trial, mean, want, mean-want, tol)
		}
	}
}

// randomSixQubit returns 40 random Pauli strings on 6 qubits, of weight 2
// to 4 with letters drawn uniformly, coefficients uniform in ±[0.05, 1)
// (duplicates merge).
func randomSixQubit(t *testing.T, rng *rand.Rand) *hamiltonian.Hamiltonian {
	t.Helper()
	var terms []hamiltonian.Term
	for range 40 {
		b := []byte("IIIIII")
		for range 2 + rng.IntN(3) {
			b[rng.IntN(6)] = "XYZ"[rng.IntN(3)]
		}
		c := 0.05 + 0.95*rng.Float64()
		if rng.IntN(2) == 0 {
			c = -c
		}
		terms = append(terms, hamiltonian.Term{Pauli: pauli.MustParse(string(b)), Coeff: c})
	}
	h, err := hamiltonian.New(6, 0.2, terms)
	if err != nil {
		t.Fatal(err)
	}
	return h
}
