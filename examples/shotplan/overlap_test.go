package main

import (
	"fmt"
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
			Energy    float64 `json:"energy"`
			StdErr    float64 `json:"std_error"`
			Bound     float64 `json:"certified_bound"`
			DataBound float64 `json:"data_bound"`
			DataForm  string  `json:"data_form"`
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
		// The command streams the records; its estimate is Grouped's with
		// the split to the last bit, and its data bound Empirical's: the
		// pooled form to the last bit, the residual one within the
		// rounding of its expanded sums (MATH.md §4.10: about
		// (16γ_{t+4} + 32γ_{k+4}) Σ t·half² for t ≤ 500 shots of k ≤ 12
		// terms, below 10^−12 of the sums with γ_n ≈ n·2^−53; the radius
		// moves by at most that relative amount).
		if got.Energy != want.Energy || got.StdErr != want.StdErr {
			t.Errorf("%s: streamed energy %v ± %v, in memory %v ± %v", name, got.Energy, got.StdErr, want.Energy, want.StdErr)
		}
		data, form, err := dataBound(h, rec, 0.05, f.Plan.Split)
		if err != nil {
			t.Fatal(err)
		}
		if form != got.DataForm || math.Abs(got.DataBound-data.Bound) > 1e-12*data.Bound || (form == "pooled" && got.DataBound != data.Bound) {
			t.Errorf("%s: streamed data bound %v (%s), in memory %v (%s)", name, got.DataBound, got.DataForm, data.Bound, form)
		}
		checkCertifySplit(t, ham, plan, h, f.Plan)
		ok(t, "export", "-plan", plan, "-o", filepath.Join(dir, name+".qasm"))
	}
}

// checkCertifySplit runs certify on a plan file with a coefficient split
// and checks that it reports guarantee.CertifyPlan's bound with the split
// and both truncations (the optimal one searched for the split too,
// MATH.md §2.5), in text and JSON.
func checkCertifySplit(t *testing.T, ham, plan string, h *hamiltonian.Hamiltonian, p *allocate.Plan) {
	t.Helper()
	cert, err := guarantee.CertifyPlan(h, p, 0.05, nil)
	if err != nil {
		t.Fatal(err)
	}
	if p.Split == nil || cert.Variance == 0 {
		t.Fatalf("%s: no split or nothing to certify", plan)
	}
	type trunc struct {
		Dropped int     `json:"dropped"`
		Bound   float64 `json:"bound"`
	}
	var got struct {
		Bound     float64 `json:"certified_bound"`
		Variance  float64 `json:"variance"`
		Threshold trunc   `json:"truncation_threshold"`
		Optimal   trunc   `json:"truncation_optimal"`
	}
	okJSON(t, &got, "certify", "-ham", ham, "-plan", plan)
	if got.Bound != cert.Bound || got.Variance != cert.Variance ||
		got.Threshold != (trunc{cert.Threshold.Dropped, cert.Threshold.Bound}) || got.Optimal != (trunc{cert.Optimal.Dropped, cert.Optimal.Bound}) {
		t.Errorf("certify %s: bound %v, V %v, threshold %+v, optimal %+v; CertifyPlan with the split: %v, %v, {%d %v}, {%d %v}",
			plan, got.Bound, got.Variance, got.Threshold, got.Optimal, cert.Bound, cert.Variance, cert.Threshold.Dropped, cert.Threshold.Bound, cert.Optimal.Dropped, cert.Optimal.Bound)
	}
	out := ok(t, "certify", "-ham", ham, "-plan", plan)
	if want := fmt.Sprintf("optimal: drop %d terms, bound %.6g", cert.Optimal.Dropped, cert.Optimal.Bound); !strings.Contains(out, "certified bound ±") || !strings.Contains(out, want) || !strings.Contains(out, "coefficient split") {
		t.Errorf("certify: want %q and the split named in\n%s", want, out)
	}
	if code, _, errOut := sp(t, "certify", "-ham", ham, "-plan", plan, "-readout", "0.01"); code == 0 || !strings.Contains(errOut, "splits coefficients") {
		t.Errorf("certify -readout on a plan with a split: exit %d, stderr %q", code, errOut)
	}
}
