package guarantee

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/pauli"
)

// TestCertifyAllReadoutCoverage checks by seeded simulation that the
// readout-mitigated simultaneous bounds hold together under asymmetric
// per-qubit readout error (MATH.md §2.1.2, §4.8): on a random state of H2's
// 4 qubits with E, N, S_z and S² and fresh calibration and measurement
// shots per trial, the event "every certificate holds" and the event
// "every data bound holds" each fail with probability at most δ. The test
// fails when a failure count exceeds the binomial limit at level 1e-4
// (gonum's binomial CDF), so its false-failure rate is below 2e-4. T = 40
// under -short, 400 otherwise. It also checks the δ split: the
// calibration's share δ/4 once, the rest split equally.
func TestCertifyAllReadoutCoverage(t *testing.T) {
	const delta, shots, calShots = 0.2, 2000, 4000
	trials := 400
	if testing.Short() {
		trials = 40
	}
	obs := h2Observables(t)
	union, err := UnionHamiltonian(obs, []float64{1, 1, 1, 1})
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(union, shots, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 5))
	psi := randomState(rng, 4)
	truth := make([]float64, len(obs))
	for k, o := range obs {
		truth[k] = o.H.Energy(psi)
	}
	ro := asymmetricReadout(4)
	certFail, dataFail := 0, 0
	for trial := range trials {
		rec := simulateRun(t, psi, ro, p, uint64(trial)+1)
		cal, err := estimate.SimulateCalibration(ro, calShots, uint64(trial)+1<<20)
		if err != nil {
			t.Fatal(err)
		}
		s, err := CertifyAll(obs, p, rec, delta, &AllOptions{Calibration: cal})
		if err != nil {
			t.Fatal(err)
		}
		if s.CalibrationDelta != delta/4 || math.Abs(s.Bounds[0].Delta-3*delta/16) > 1e-15 {
			t.Fatalf("calibration δ %v, δ_0 = %v; want δ/4 and (3δ/4)/4", s.CalibrationDelta, s.Bounds[0].Delta)
		}
		cOK, dOK := true, true
		for k, b := range s.Bounds {
			if b.Certificate != nil || b.Readout == nil {
				t.Fatal("mitigated bounds: want Readout set and Certificate nil")
			}
			e := math.Abs(b.Estimate.Energy - truth[k])
			cOK = cOK && e <= b.Readout.Certified
			dOK = dOK && math.Abs(b.Data.Energy-truth[k]) <= b.Data.Bound
		}
		if !cOK {
			certFail++
		}
		if !dOK {
			dataFail++
		}
	}
	limit := binomialLimit(trials, delta, 1e-4)
	t.Logf("%d trials: certificates failed %d, data bounds %d (limit %d)", trials, certFail, dataFail, limit)
	if certFail > limit || dataFail > limit {
		t.Errorf("over %d trials the mitigated certificates failed %d times, the data bounds %d times; limit %d at δ = %g", trials, certFail, dataFail, limit, delta)
	}
}

// TestCertifyAllReadoutExactExpectation checks that each observable's
// mitigated estimate is exactly its expectation when the records hold the
// noisy outcome distribution exactly and the rates are known: readout
// error acts on the distribution of the two read bits as the tensor product
// of the 2×2 confusion matrices [[1−p01, p10], [p01, 1−p10]] of the qubits,
// and inverting that product recovers the ideal distribution (the matrix
// inversion mitigation, common practice). The ideal distribution q and the
// rates are multiples of 0.1, so the noisy one is a multiple of 0.001 and
// 1000 shots hold it exactly; the expectations ⟨Z0⟩, ⟨Z1⟩, ⟨Z0Z1⟩ are
// sums of ±q(b) computed here by hand.
func TestCertifyAllReadoutExactExpectation(t *testing.T) {
	q := [4]float64{0.5, 0.3, 0.2, 0} // ideal probability of b = b0 + 2·b1
	rates := []estimate.Readout{{P01: 0.1, P10: 0.2}, {P01: 0.2, P10: 0.1}}
	conf := func(p estimate.Readout, r, b int) float64 { // P(read r | true b)
		if b == 0 {
			return [2]float64{1 - p.P01, p.P01}[r]
		}
		return [2]float64{p.P10, 1 - p.P10}[r]
	}
	s, err := pauli.ParseSetting("ZZ")
	if err != nil {
		t.Fatal(err)
	}
	rec := estimate.NewRecords(2)
	for r := range 4 {
		pr := 0.0
		for b := range 4 {
			pr += conf(rates[0], r&1, b&1) * conf(rates[1], r>>1, b>>1) * q[b]
		}
		n := int(math.Round(1000 * pr))
		out := pauli.NewBits(2)
		out.Set(0, uint64(r&1))
		out.Set(1, uint64(r>>1))
		for range n {
			if err := rec.Add(s, out); err != nil {
				t.Fatal(err)
			}
		}
	}
	if rec.Len() != 1000 {
		t.Fatalf("%d shots, want 1000", rec.Len())
	}
	obs := []Observable{
		{Name: "Z0", H: mustH(t, 2, 0, 1.0, "ZI")},
		{Name: "Z1", H: mustH(t, 2, 0, 1.0, "IZ")},
		{Name: "Z0Z1", H: mustH(t, 2, 0.5, 2.0, "ZZ")},
	}
	want := []float64{
		q[0] - q[1] + q[2] - q[3],
		q[0] + q[1] - q[2] - q[3],
		0.5 + 2*(q[0]-q[1]-q[2]+q[3]),
	}
	res, err := CertifyAll(obs, nil, rec, 0.1, &AllOptions{Rates: rates})
	if err != nil {
		t.Fatal(err)
	}
	if res.CalibrationDelta != 0 || math.Abs(res.Bounds[0].Delta-0.1/3) > 1e-15 {
		t.Errorf("exact rates: calibration δ %v, δ_0 %v; want 0 and δ/3", res.CalibrationDelta, res.Bounds[0].Delta)
	}
	for k, b := range res.Bounds {
		if math.Abs(b.Estimate.Energy-want[k]) > 1e-12 || math.Abs(b.Data.Energy-want[k]) > 1e-12 {
			t.Errorf("%s: mitigated estimate %v (data bound about %v), want %v", b.Name, b.Estimate.Energy, b.Data.Energy, want[k])
		}
		if b.Readout.CalibrationBias != 0 {
			t.Errorf("%s: calibration bias %v with exact rates", b.Name, b.Readout.CalibrationBias)
		}
	}
}

// TestCertifyAllReadoutErrors checks the refusals of the readout options.
func TestCertifyAllReadoutErrors(t *testing.T) {
	obs := h2Observables(t)
	p, err := allocate.Run(obs[0].H, 50, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	cal, err := estimate.SimulateCalibration(asymmetricReadout(4), 100, 1)
	if err != nil {
		t.Fatal(err)
	}
	for name, o := range map[string]*AllOptions{
		"both":             {Calibration: cal, Rates: asymmetricReadout(4)},
		"residual":         {Calibration: cal, Form: Residual},
		"delta alone":      {CalibrationDelta: 0.01},
		"delta too big":    {Calibration: cal, CalibrationDelta: 0.1},
		"rates with delta": {Rates: asymmetricReadout(4), CalibrationDelta: 0.01},
		"short rates":      {Rates: asymmetricReadout(3)},
		"narrow cal":       {Calibration: estimate.NewCalibration(3)},
	} {
		if _, err := CertifyAll(obs, p, nil, 0.1, o); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
}

// TestPlanAllReadout checks that PlanAll with readout rates taken as exact
// returns a plan whose readout-aware certificates meet every target: each
// is recomputed here from MitigatedRadius at the observable's δ_k = δ/4
// (no calibration to spend δ on) and must be within its target, and it
// needs more shots than the plan without readout error (the mitigated
// samples' range is wider, MATH.md §2.1.1).
func TestPlanAllReadout(t *testing.T) {
	obs := h2Observables(t)
	targets := []float64{0.5, 1, 0.5, 2}
	const delta = 0.05
	rates := asymmetricReadout(4)
	a, _ := allocate.ByName("greedy", 1)
	m, err := PlanAll(obs, targets, a, delta, 1<<17, &AllOptions{Rates: rates, Resolution: 0.05})
	if err != nil {
		t.Fatal(err)
	}
	plain, err := PlanAll(obs, targets, a, delta, 1<<17, &AllOptions{Resolution: 0.05})
	if err != nil {
		t.Fatal(err)
	}
	if !m.Met || !(m.Shots > plain.Shots) {
		t.Fatalf("with readout: met %v at %d shots; without: %d", m.Met, m.Shots, plain.Shots)
	}
	mit, err := estimate.NewMitigation(estimate.KnownRates(rates))
	if err != nil {
		t.Fatal(err)
	}
	for k, o := range obs {
		r, bias, err := MitigatedRadius(o.H, m.Plan.Settings, m.Plan.Shots, mit, delta/4, nil)
		if err != nil {
			t.Fatal(err)
		}
		if got := m.Certified.Bounds[k].CertifiedBound(); math.Abs(got-(r+bias)) > 1e-12*got || got > targets[k] {
			t.Errorf("%s: certified %v, MitigatedRadius %v + %v, target %v", o.Name, got, r, bias, targets[k])
		}
	}
}
