package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
)

// TestOverlapWorkflow runs plan -strategy overlap, simulate, estimate and
// certify on an invented 4-qubit Hamiltonian whose plan splits
// coefficients, in both plan layouts, and checks that estimate and certify
// report the split estimator's numbers: the energy of estimate.Grouped and
// the bound of guarantee.CertifyPlan with the plan file's split.
func TestOverlapWorkflow(t *testing.T) {
	dir := t.TempDir()
	ham := filepath.Join(dir, "h.txt")
	text := "qubits 4\n-0.4 I\n0.9 ZIII\n-0.7 IZII\n0.5 ZZII\n0.45 IIZZ\n0.3 XXII\n-0.35 IIXX\n0.2 YYII\n0.25 ZIZI\n0.15 IXIX\n-0.1 XIIZ\n0.6 IIIZ\n0.12 ZIIX\n"
	if err := os.WriteFile(ham, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	h, err := hamiltonian.ReadFile(ham)
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"plan.jsonl", "plan.json"} {
		plan, recs := filepath.Join(dir, name), filepath.Join(dir, name+".csv")
		ok(t, "plan", "-ham", ham, "-strategy", "overlap", "-shots", "500", "-o", plan)
		if !strings.Contains(string(readFile(t, plan)), `"split"`) {
			t.Fatalf("%s holds no split", name)
		}
		ok(t, "simulate", "-ham", ham, "-plan", plan, "-o", recs)
		var got struct {
			Energy float64 `json:"energy"`
			Bound  float64 `json:"certified_bound"`
		}
		okJSON(t, &got, "estimate", "-ham", ham, "-plan", plan, "-records", recs)
		f, err := allocate.ReadPlanFile(plan)
		if err != nil {
			t.Fatal(err)
		}
		settings, _ := f.Plan.Distinct()
		rec, err := estimate.ReadCSVFile(recs, settings)
		if err != nil {
			t.Fatal(err)
		}
		want, err := estimate.Grouped(h, rec, &estimate.Options{Split: f.Plan.Split})
		if err != nil {
			t.Fatal(err)
		}
		cert, err := guarantee.CertifyPlan(h, f.Plan, 0.05, nil)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got.Energy-want.Energy) > 1e-12 || math.Abs(got.Bound-cert.Bound) > 1e-12 {
			t.Errorf("%s: estimate reports energy %.15g and bound %.15g, the split estimator %.15g and %.15g", name, got.Energy, got.Bound, want.Energy, cert.Bound)
		}
		out := ok(t, "certify", "-ham", ham, "-plan", plan)
		if !strings.Contains(out, "certified bound ±") {
			t.Errorf("certify: %s", out)
		}
		ok(t, "export", "-plan", plan, "-o", filepath.Join(dir, name+".qasm"))
	}
}
