package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
)

// TestOverlapGCWorkflow runs plan -strategy overlap-gc, simulate, estimate,
// certify and export on an invented 4-qubit Hamiltonian whose plan splits
// coefficients between entangled settings, in both plan layouts, and
// checks that the plan file keeps the entangled settings and the split and
// that estimate reports the split estimator's numbers: the energy of
// estimate.Grouped and the bound of guarantee.CertifyPlan with the plan
// file's split.
func TestOverlapGCWorkflow(t *testing.T) {
	dir := t.TempDir()
	ham := filepath.Join(dir, "h.txt")
	text := "qubits 4\n-0.3 I\n0.8 ZIII\n0.8 IZII\n-0.45 IIZI\n-0.45 IIIZ\n0.17 ZZII\n0.18 IIZZ\n0.12 ZIZI\n0.12 IZIZ\n0.16 ZIIZ\n0.16 IZZI\n" +
		"-0.045 XXYY\n-0.045 YYXX\n0.045 XYYX\n0.045 YXXY\n0.21 XXII\n0.21 YYII\n-0.13 IIXX\n-0.13 IIYY\n0.07 XZXI\n0.07 YZYI\n"
	if err := os.WriteFile(ham, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	h, err := hamiltonian.ReadFile(ham)
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"plan.jsonl", "plan.json"} {
		plan, recs := filepath.Join(dir, name), filepath.Join(dir, name+".csv")
		ok(t, "plan", "-ham", ham, "-strategy", "overlap-gc", "-shots", "500", "-o", plan)
		if !strings.Contains(string(readFile(t, plan)), `"split"`) {
			t.Fatalf("%s holds no split", name)
		}
		f, err := allocate.ReadPlanFile(plan)
		if err != nil {
			t.Fatal(err)
		}
		want, err := allocate.Run(h, 500, &allocate.OverlapGC{}, nil)
		if err != nil {
			t.Fatal(err)
		}
		if len(f.Plan.Split) != len(want.Split) || f.Plan.Split.Entries() != want.Split.Entries() {
			t.Fatalf("%s: split of %d groups, %d entries; the strategy's has %d, %d", name, len(f.Plan.Split), f.Plan.Split.Entries(), len(want.Split), want.Split.Entries())
		}
		entangled := false
		for _, gr := range f.Plan.Split {
			entangled = entangled || !gr.Setting.IsLocal()
		}
		if !entangled {
			t.Fatalf("%s: no entangled setting in the split", name)
		}
		ok(t, "simulate", "-ham", ham, "-plan", plan, "-o", recs)
		var got struct {
			Energy float64 `json:"energy"`
			StdErr float64 `json:"std_error"`
			Bound  float64 `json:"certified_bound"`
		}
		okJSON(t, &got, "estimate", "-ham", ham, "-plan", plan, "-records", recs)
		settings, _ := f.Plan.Distinct()
		rec, err := estimate.ReadCSVFile(recs, settings)
		if err != nil {
			t.Fatal(err)
		}
		res, err := estimate.Grouped(h, rec, &estimate.Options{Split: f.Plan.Split})
		if err != nil {
			t.Fatal(err)
		}
		cert, err := guarantee.CertifyPlan(h, f.Plan, 0.05, nil)
		if err != nil {
			t.Fatal(err)
		}
		// Both are the same computation on the same records and plan.
		if got.Energy != res.Energy || got.StdErr != res.StdErr || math.Abs(got.Bound-cert.Bound) > 1e-12 {
			t.Errorf("%s: estimate reports %v ± %v, bound %v; the split estimator %v ± %v, bound %v", name, got.Energy, got.StdErr, got.Bound, res.Energy, res.StdErr, cert.Bound)
		}
		checkCertifySplit(t, ham, plan, h, f.Plan)
		ok(t, "export", "-plan", plan, "-o", filepath.Join(dir, name+".qasm"))
	}
	// -proxy reaches the strategy: a basis-state proxy changes the split.
	plan := filepath.Join(dir, "proxy.jsonl")
	ok(t, "plan", "-ham", ham, "-strategy", "overlap-gc", "-shots", "500", "-proxy", "0101", "-o", plan)
	f, err := allocate.ReadPlanFile(plan)
	if err != nil {
		t.Fatal(err)
	}
	worst, err := allocate.Run(h, 500, &allocate.OverlapGC{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if cmp.Equal(f.Plan.Shots, worst.Shots) {
		t.Errorf("-proxy 0101: the shots %v are those of the worst-case model", f.Plan.Shots)
	}
}
