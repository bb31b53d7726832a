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
