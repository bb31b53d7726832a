package guarantee

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/internal/scenario"
)

// asymmetricReadout returns per-qubit rates between 1% and 6%, different
// in the two directions and from qubit to qubit (the range typical of
// superconducting devices is a fact of the trade, common practice).
func asymmetricReadout(n int) []estimate.Readout {
	r := make([]estimate.Readout, n)
	for q := range r {
		r[q] = estimate.Readout{P01: 0.01 + 0.01*float64(q%3), P10: 0.03 + 0.01*float64(q%4)}
	}
	return r
}

type readoutCase struct {
	name     string
	h        *hamiltonian.Hamiltonian
	strategy string
}

func readoutCases(t *testing.T) []readoutCase {
	h2, err := hamiltoniantest.Molecule("h2_sto3g_0.7414A", fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	lih, err := hamiltoniantest.Molecule("lih_sto3g_1.5949A", fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	return []readoutCase{
		{"H2 (entangled settings)", h2, "sorted-gc"},
		{"LiH", lih, "greedy"},
		{"spin ladder", scenario.Ladder(), "sorted"},
	}
}

// simulateRun measures plan p on state psi through readout error ro with
// the given seed.
func simulateRun(t *testing.T, psi []complex128, ro []estimate.Readout, p *allocate.Plan, seed uint64) *estimate.Records {
	t.Helper()
	sim, err := estimate.NewSimulator(psi, seed, &estimate.SimulatorOptions{Readout: ro, CacheBytes: -1})
	if err != nil {
		t.Fatal(err)
	}
	rec := estimate.NewRecords(len(ro))
	if err := sim.Run(p.Settings, p.Shots, rec); err != nil {
		t.Fatal(err)
	}
	return rec
}

// TestCalibratedBoundsCover checks by seeded simulation that, under
// asymmetric per-qubit readout error, the readout-aware certificate and
// data bound of CalibratedBounds cover the exact ground energy in at least
// a fraction 1 − δ of 200 repetitions (δ = 0.1), on three systems: H2 with
// entangled settings, LiH and the spin ladder. Each repetition
// draws fresh calibration shots and fresh measurement shots. A correct
// bound exceeds the binomial limit below with probability at most 1e-4
// per bound and system (the limit is the (1 − 1e-4) quantile of
// Binomial(reps, δ), gonum's CDF), so the test fails falsely with
// probability at most 6e-4. Under -short it runs 6 repetitions per system
// (limit 4).
func TestCalibratedBoundsCover(t *testing.T) {
	reps := 200
	if testing.Short() {
		reps = 6
	}
	const delta, shots, calShots = 0.1, 3000, 4000
	limit := binomialLimit(reps, delta, 1e-4)
	for ci, cc := range readoutCases(t) {
		a, err := allocate.ByName(cc.strategy, 1)
		if err != nil {
			t.Fatal(err)
		}
		p, err := allocate.Run(cc.h, shots, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		ground, err := hamiltonian.GroundState(cc.h, nil)
		if err != nil {
			t.Fatal(err)
		}
		ro := asymmetricReadout(cc.h.Qubits())
		certFail, dataFail := 0, 0
		var last *ReadoutBound
		worst := 0.0
		for r := range reps {
			seed := uint64(1000*ci + r)
			rec := simulateRun(t, ground.State, ro, p, seed)
			cal, err := estimate.SimulateCalibration(ro, calShots, seed^0x5eed)
			if err != nil {
				t.Fatal(err)
			}
			b, err := CalibratedBounds(cc.h, rec, cal, delta, nil)
			if err != nil {
				t.Fatal(err)
			}
			if r == 0 {
				// The bound is about estimate.Mitigated's estimate.
				est, err := estimate.Mitigated(cc.h, rec, b.Mitigation, nil)
				if err != nil {
					t.Fatal(err)
				}
				if !near(est.Energy, b.Energy, 1e-12) || !near(est.ReadoutBias, b.CalibrationBias, 1e-12) || est.Bias != b.Bias {
					t.Errorf("%s: Mitigated %v (readout bias %v, bias %v), bound about %v (%v, %v)", cc.name, est.Energy, est.ReadoutBias, est.Bias, b.Energy, b.CalibrationBias, b.Bias)
				}
			}
			e := math.Abs(b.Energy - ground.Energy)
			worst = max(worst, e)
			if e > b.Certified {
				certFail++
			}
			if e > b.Data.Bound {
				dataFail++
			}
			last = b
		}
		t.Logf("%s: %d reps, max |Ê−E| %.4g; last: certified %.4g (radius %.4g, calibration bias %.4g), data %.4g; fails %d, %d (limit %d)",
			cc.name, reps, worst, last.Certified, last.Radius, last.CalibrationBias, last.Data.Bound, certFail, dataFail, limit)
		if certFail > limit || dataFail > limit {
			t.Errorf("%s: certificate failed %d, data bound %d times in %d repetitions; limit %d", cc.name, certFail, dataFail, reps, limit)
		}
	}
}

// TestPlainBoundsFailUnderReadout is the test that motivates the
// readout-aware bounds: with the same asymmetric readout error and enough
// shots, the bias of the raw grouped estimate exceeds both the plain
// certificate and the plain data bound, each stated at δ = 0.1, in every
// one of 5 seeded repetitions, while the readout-aware bounds cover. (A
// plain bound that held at its level would be exceeded with probability at
// most 0.1 in each repetition, 1e-5 for all five.)
func TestPlainBoundsFailUnderReadout(t *testing.T) {
	const delta, shots, calShots, reps = 0.1, 200000, 200000, 5
	h, err := hamiltoniantest.Molecule("h2_sto3g_0.7414A", fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(h, shots, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	ground, err := hamiltonian.GroundState(h, nil)
	if err != nil {
		t.Fatal(err)
	}
	ro := asymmetricReadout(h.Qubits())
	cert, err := CertifyPlan(h, p, delta, nil)
	if err != nil {
		t.Fatal(err)
	}
	for r := range reps {
		rec := simulateRun(t, ground.State, ro, p, uint64(r+1))
		raw, err := estimate.Grouped(h, rec, nil)
		if err != nil {
			t.Fatal(err)
		}
		data, err := Empirical(h, rec, delta, nil)
		if err != nil {
			t.Fatal(err)
		}
		e := math.Abs(raw.Energy - ground.Energy)
		if e <= cert.Bound || e <= data.Bound {
			t.Errorf("rep %d: raw error %.4g within the plain certificate %.4g or data bound %.4g", r, e, cert.Bound, data.Bound)
		}
		cal, err := estimate.SimulateCalibration(ro, calShots, uint64(r+100))
		if err != nil {
			t.Fatal(err)
		}
		b, err := CalibratedBounds(h, rec, cal, delta, nil)
		if err != nil {
			t.Fatal(err)
		}
		em := math.Abs(b.Energy - ground.Energy)
		if em > b.Certified || em > b.Data.Bound {
			t.Errorf("rep %d: mitigated error %.4g above the readout-aware certificate %.4g or data bound %.4g", r, em, b.Certified, b.Data.Bound)
		}
		if r == 0 {
			t.Logf("raw error %.4g, plain certificate %.4g, plain data %.4g; mitigated error %.4g, certificate %.4g, data %.4g",
				e, cert.Bound, data.Bound, em, b.Certified, b.Data.Bound)
		}
	}
}

// TestMitigatedDataWithoutErrorIsEmpirical: with exact zero rates every
// mitigated sample is the ±1 sample, so MitigatedData must give Empirical's
// pooled bound, MitigatedRadius the certificate's radius (MATH.md §3.1),
// and the calibration bias must be zero, on local and entangled plans.
func TestMitigatedDataWithoutErrorIsEmpirical(t *testing.T) {
	for _, cc := range readoutCases(t)[:2] {
		a, _ := allocate.ByName(cc.strategy, 1)
		p, err := allocate.Run(cc.h, 500, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		ground, err := hamiltonian.GroundState(cc.h, nil)
		if err != nil {
			t.Fatal(err)
		}
		rec := simulateRun(t, ground.State, make([]estimate.Readout, cc.h.Qubits()), p, 4)
		m, err := estimate.NewMitigation(estimate.KnownRates(make([]estimate.Readout, cc.h.Qubits())))
		if err != nil {
			t.Fatal(err)
		}
		got, calBias, err := MitigatedData(cc.h, rec, m, 0.05, nil)
		if err != nil {
			t.Fatal(err)
		}
		want, err := Empirical(cc.h, rec, 0.05, nil)
		if err != nil {
			t.Fatal(err)
		}
		if calBias != 0 || !near(got.Energy, want.Energy, 1e-12) || !near(got.Bound, want.Bound, 1e-12) {
			t.Errorf("%s: MitigatedData %v ± %v (calibration bias %v), Empirical %v ± %v", cc.name, got.Energy, got.Bound, calBias, want.Energy, want.Bound)
		}
		settings, shots := p.Distinct()
		r, bias, err := MitigatedRadius(cc.h, settings, shots, m, 0.05, nil)
		if err != nil {
			t.Fatal(err)
		}
		cert, err := Certify(cc.h, settings, shots, 0.05, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !near(r, cert.Radius, 1e-12) || bias != cert.Bias {
			t.Errorf("%s: MitigatedRadius %v + %v, certificate %v + %v", cc.name, r, bias, cert.Radius, cert.Bias)
		}
	}
}
