package guarantee

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
)

// TestPlanReadoutBudget checks the planned budget against the bound of the
// plan it describes, built explicitly: the base plan with every shot count
// multiplied by Repeat, certified by MitigatedRadius from scratch (so the
// 1/k scaling of V, MATH.md §3.1, is checked rather than assumed), plus the
// calibration bias of the expected calibration counts, must reach the
// target, and Repeat − 1 repetitions must not.
func TestPlanReadoutBudget(t *testing.T) {
	h, err := hamiltoniantest.Molecule("h2_sto3g_0.7414A", fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(h, 400, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	settings, shots := p.Distinct()
	ro := asymmetricReadout(h.Qubits())
	const eps, delta = 0.02, 0.05
	b, err := PlanReadoutBudget(h, settings, shots, ro, eps, delta, nil)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("%+v", *b)
	if b.TotalShots != 2*b.CalibrationShots+b.MeasurementShots || b.MeasurementShots != b.Repeat*400 {
		t.Fatalf("inconsistent totals %+v", *b)
	}
	cal := estimate.NewCalibration(h.Qubits())
	for q, r := range ro {
		c := float64(b.CalibrationShots)
		cal.Counts[q] = estimate.QubitCounts{Zero: b.CalibrationShots, Flips01: int(math.Round(r.P01 * c)), One: b.CalibrationShots, Flips10: int(math.Round(r.P10 * c))}
	}
	bounds, err := cal.Bounds(delta / 4)
	if err != nil {
		t.Fatal(err)
	}
	m, err := estimate.NewMitigation(bounds)
	if err != nil {
		t.Fatal(err)
	}
	certified := func(k int) float64 {
		rep := make([]int, len(shots))
		for j, s := range shots {
			rep[j] = k * s
		}
		r, bias, err := MitigatedRadius(h, settings, rep, m, delta-delta/4, nil)
		if err != nil {
			t.Fatal(err)
		}
		return r + bias + b.CalibrationBias
	}
	if got := certified(b.Repeat); got > eps*(1+1e-12) || math.Abs(got-b.Certified) > 1e-9*eps {
		t.Errorf("repeated plan certifies %v, planned %v, target %v", got, b.Certified, eps)
	}
	if b.Repeat > 1 {
		if got := certified(b.Repeat - 1); got <= eps {
			t.Errorf("one repetition fewer already certifies %v ≤ %v", got, eps)
		}
	}
	// 1e-9 is below the calibration bias of 2^40 calibration shots
	// (interval half-widths of order 1e-6), so no grid point reaches it.
	if _, err := PlanReadoutBudget(h, settings, shots, ro, 1e-9, delta, nil); err == nil {
		t.Error("unreachable target accepted")
	}
	if _, err := PlanReadoutBudget(h, settings, shots, ro[:2], eps, delta, nil); err == nil {
		t.Error("rates of the wrong length accepted")
	}
}

// simPairMatrix returns the 4×4 readout matrix of a pair read with
// independent flips ra, rb and then both bits flipping together with
// probability j (the simulator's model, MATH.md §2.1.4), by the textbook
// composition of independent events: P(read r | s) = Σ_t P(t | s)·P(r | t)
// with the independent flips P(t | s) = Π over the two qubits, and the joint
// flip taking t to t or t ⊕ 3.
func simPairMatrix(ra, rb estimate.Readout, j float64) [4][4]float64 {
	flip := func(e estimate.Readout, from, to uint) float64 {
		switch {
		case from == 0 && to == 0:
			return 1 - e.P01
		case from == 0:
			return e.P01
		case to == 1:
			return 1 - e.P10
		}
		return e.P10
	}
	var m [4][4]float64
	for s := range 4 {
		for t := range 4 {
			pt := flip(ra, uint(s&1), uint(t&1)) * flip(rb, uint(s>>1), uint(t>>1))
			m[t][s] += (1 - j) * pt
			m[t^3][s] += j * pt
		}
	}
	return m
}

// TestPlanReadoutBudgetPairs checks the budget of a pair calibration as
// TestPlanReadoutBudget does the per-qubit one: four preparations in the
// total, and the plan's parts rebuilt from the expected counts (MitigatedRadius from
// scratch on the repeated plan, plus the calibration bias) reach the
// target while one repetition fewer does not. A pair model has 16
// uncertain entries per pair instead of 4 rates, so on a design without
// joint flips it needs more shots than the per-qubit plan.
func TestPlanReadoutBudgetPairs(t *testing.T) {
	h, err := hamiltoniantest.Molecule("h2_sto3g_0.7414A", fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(h, 400, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	settings, shots := p.Distinct()
	ro := asymmetricReadout(4)
	pairs := []estimate.PairReadout{{A: 0, B: 1, Matrix: simPairMatrix(ro[0], ro[1], 0.04)}, {A: 2, B: 3, Matrix: simPairMatrix(ro[2], ro[3], 0.04)}}
	const eps, delta = 0.05, 0.05
	b, err := PlanReadoutBudget(h, settings, shots, ro, eps, delta, &ReadoutOptions{Pairs: pairs})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("%+v", *b)
	if b.Preparations != 4 || b.TotalShots != 4*b.CalibrationShots+b.MeasurementShots || b.MeasurementShots != b.Repeat*400 {
		t.Fatalf("inconsistent totals %+v", *b)
	}
	cal, err := estimate.NewPairCalibration(4, [][2]int{{0, 1}, {2, 3}})
	if err != nil {
		t.Fatal(err)
	}
	for k, pr := range pairs {
		for s := range 4 {
			for r := range 4 {
				cal.Pairs[k].Counts[s][r] = int(math.Round(pr.Matrix[r][s] * float64(b.CalibrationShots)))
			}
		}
	}
	m, err := cal.Mitigation(delta / 4)
	if err != nil {
		t.Fatal(err)
	}
	certified := func(k int) float64 {
		rep := make([]int, len(shots))
		for j, s := range shots {
			rep[j] = k * s
		}
		r, bias, err := MitigatedRadius(h, settings, rep, m, delta-delta/4, nil)
		if err != nil {
			t.Fatal(err)
		}
		return r + bias + b.CalibrationBias
	}
	if got := certified(b.Repeat); got > eps*(1+1e-12) || math.Abs(got-b.Certified) > 1e-9*eps {
		t.Errorf("repeated plan certifies %v, planned %v, target %v", got, b.Certified, eps)
	}
	if b.Repeat > 1 {
		if got := certified(b.Repeat - 1); got <= eps {
			t.Errorf("one repetition fewer already certifies %v ≤ %v", got, eps)
		}
	}
	indep := []estimate.PairReadout{{A: 0, B: 1, Matrix: simPairMatrix(ro[0], ro[1], 0)}, {A: 2, B: 3, Matrix: simPairMatrix(ro[2], ro[3], 0)}}
	bp, err := PlanReadoutBudget(h, settings, shots, ro, eps, delta, &ReadoutOptions{Pairs: indep})
	if err != nil {
		t.Fatal(err)
	}
	bq, err := PlanReadoutBudget(h, settings, shots, ro, eps, delta, nil)
	if err != nil {
		t.Fatal(err)
	}
	if bp.TotalShots <= bq.TotalShots {
		t.Errorf("pair model without joint flips: %d shots, per-qubit model %d", bp.TotalShots, bq.TotalShots)
	}
	bad := pairs[0]
	bad.Matrix[0][0] += 0.1
	if _, err := PlanReadoutBudget(h, settings, shots, ro, eps, delta, &ReadoutOptions{Pairs: []estimate.PairReadout{bad}}); err == nil {
		t.Error("a pair matrix whose column does not sum to 1 accepted")
	}
}
