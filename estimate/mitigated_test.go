package estimate_test

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
)

// TestMitigatedWithoutErrorIsGrouped: with exact zero rates every factor is
// ±1, so Mitigated must reproduce Grouped's energy and means (an
// independent implementation of MATH.md §2), on local and entangled plans.
func TestMitigatedWithoutErrorIsGrouped(t *testing.T) {
	h, err := hamiltoniantest.Molecule("h2_sto3g_0.7414A", fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"greedy", "sorted-gc"} {
		a, err := allocate.ByName(name, 3)
		if err != nil {
			t.Fatal(err)
		}
		p, err := allocate.Run(h, 300, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		entangled := false
		for _, s := range p.Settings {
			entangled = entangled || !s.IsLocal()
		}
		if entangled != (name == "sorted-gc") {
			t.Fatalf("%s: entangled settings %v", name, entangled)
		}
		sim, _, err := estimate.GroundStateSimulator(h, 5, nil)
		if err != nil {
			t.Fatal(err)
		}
		rec := estimate.NewRecords(h.Qubits())
		if err := sim.Run(p.Settings, p.Shots, rec); err != nil {
			t.Fatal(err)
		}
		m, err := estimate.NewMitigation(estimate.KnownRates(make([]estimate.Readout, h.Qubits())))
		if err != nil {
			t.Fatal(err)
		}
		got, err := estimate.Mitigated(h, rec, m, nil)
		if err != nil {
			t.Fatal(err)
		}
		want, err := estimate.Grouped(h, rec, nil)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got.Energy-want.Energy) > 1e-12 || got.ReadoutBias != 0 || got.Bias != want.Bias {
			t.Errorf("%s: Mitigated %v (bias %v, readout %v), Grouped %v (bias %v)", name, got.Energy, got.Bias, got.ReadoutBias, want.Energy, want.Bias)
		}
		for i := range want.Means {
			if got.Cover[i] != want.Cover[i] || !(math.Abs(got.Means[i]-want.Means[i]) <= 1e-12 || math.IsNaN(want.Means[i]) && math.IsNaN(got.Means[i])) {
				t.Fatalf("%s: term %d: %v/%d vs %v/%d", name, i, got.Means[i], got.Cover[i], want.Means[i], want.Cover[i])
			}
		}
	}
}

// TestMitigatedRemovesAsymmetricBias: under asymmetric readout with known
// rates the mitigated estimate is unbiased (MATH.md §2.1a), so on 40 000
// shots it lies within 5 of its own standard errors of the exact energy
// (false failure ≈ 6e-7 under the normal approximation), while the raw
// estimate is off by more than 5 standard errors (the bias it must remove).
func TestMitigatedRemovesAsymmetricBias(t *testing.T) {
	h, err := hamiltoniantest.Molecule("h2_sto3g_0.7414A", fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	ro := make([]estimate.Readout, h.Qubits())
	for q := range ro {
		ro[q] = estimate.Readout{P01: 0.01 + 0.01*float64(q), P10: 0.08 - 0.01*float64(q)}
	}
	a, _ := allocate.ByName("sorted-gc", 1)
	p, err := allocate.Run(h, 40000, a, nil)
	if err != nil {
		t.Fatal(err)
	}
	sim, ground, err := estimate.GroundStateSimulator(h, 11, &estimate.SimulatorOptions{Readout: ro})
	if err != nil {
		t.Fatal(err)
	}
	rec := estimate.NewRecords(h.Qubits())
	if err := sim.Run(p.Settings, p.Shots, rec); err != nil {
		t.Fatal(err)
	}
	m, err := estimate.NewMitigation(estimate.KnownRates(ro))
	if err != nil {
		t.Fatal(err)
	}
	res, err := estimate.Mitigated(h, rec, m, nil)
	if err != nil {
		t.Fatal(err)
	}
	if d := math.Abs(res.Energy - ground.Energy); d > 5*res.StdErr+res.Bias {
		t.Errorf("mitigated %v, exact %v: off by %v, 5σ = %v", res.Energy, ground.Energy, d, 5*res.StdErr)
	}
	raw, err := estimate.Grouped(h, rec, nil)
	if err != nil {
		t.Fatal(err)
	}
	if d := math.Abs(raw.Energy - ground.Energy); d < 5*raw.StdErr {
		t.Errorf("raw estimate %v within 5σ (%v) of the exact %v: the readout error in this test is too weak to matter", raw.Energy, 5*raw.StdErr, ground.Energy)
	}
}
