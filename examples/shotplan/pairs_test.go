package main

import (
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// TestPairCalibrationWorkflow runs the pair calibration end to end on H2:
// calibrate -pairs writes the four preparations; simulate reads the plan's
// shots and the calibration shots through asymmetric per-qubit flips and
// joint flips of the disjoint pairs (0, 1) and (2, 3); estimate -pairs
// reads each pair through its 4×4 model. At -delta 0.01 each bound of the
// pair-aware estimate misses psi4's full-CI energy (h2FCI) with
// probability at most 0.01 (MATH.md §2.1.5; fixed seeds, so reproducible).
// The per-qubit calibration on the same files is shown to miss the energy
// by more than its own data bound: joint flips break its model.
func TestPairCalibrationWorkflow(t *testing.T) {
	dir := t.TempDir()
	calPlan := filepath.Join(dir, "calplan.csv")
	ok(t, "calibrate", "-qubits", "4", "-pairs", "0-1,2-3", "-shots", "7", "-o", calPlan)
	b, err := os.ReadFile(calPlan)
	if err != nil {
		t.Fatal(err)
	}
	if want := "prepared,shots\n0000,7\n1010,7\n0101,7\n1111,7\n"; string(b) != want {
		t.Errorf("pair calibration plan %q, want %q", b, want)
	}
	ham := filepath.Join(dir, "h2.txt")
	ok(t, "convert", "-o", ham, h2Dump)
	planPath := filepath.Join(dir, "plan.json")
	ok(t, "plan", "-ham", ham, "-strategy", "greedy", "-shots", "100000", "-o", planPath)
	rec, cal := filepath.Join(dir, "rec.csv"), filepath.Join(dir, "cal.csv")
	ok(t, "simulate", "-ham", ham, "-plan", planPath, "-seed", "2", "-readout", "p01=0.02,p10=0.04", "-pair-flip", "0.06", "-pairs", "0-1,2-3",
		"-calibration-shots", "50000", "-calibration-o", cal, "-o", rec)
	type result struct {
		Energy    float64 `json:"energy"`
		Bound     float64 `json:"certified_bound"`
		DataBound float64 `json:"data_bound"`
		CalBias   float64 `json:"calibration_bias"`
	}
	var pair, single result
	okJSON(t, &pair, "estimate", "-ham", ham, "-plan", planPath, "-records", rec, "-calibration", cal, "-pairs", "0-1,2-3", "-delta", "0.01")
	if d := math.Abs(pair.Energy - h2FCI); d > pair.Bound || d > pair.DataBound {
		t.Errorf("pair-aware energy %v is %v from psi4's %v: beyond the certified %v or data bound %v", pair.Energy, d, h2FCI, pair.Bound, pair.DataBound)
	}
	okJSON(t, &single, "estimate", "-ham", ham, "-plan", planPath, "-records", rec, "-calibration", cal, "-delta", "0.01")
	if d := math.Abs(single.Energy - h2FCI); d <= single.DataBound {
		t.Errorf("per-qubit energy %v within its data bound %v of %v: the joint flips in this test do not matter", single.Energy, single.DataBound, h2FCI)
	}
	t.Logf("pairs: %v ± %v (certified %v, calibration bias %v); per qubit: %v ± %v", pair.Energy, pair.DataBound, pair.Bound, pair.CalBias, single.Energy, single.DataBound)
	// -observables and certify take -pairs too.
	var c struct {
		Obs []struct {
			Bound float64 `json:"certified_bound"`
		} `json:"observables"`
	}
	okJSON(t, &c, "certify", "-ham", ham, "-plan", planPath, "-calibration", cal, "-pairs", "0-1,2-3", "-delta", "0.01")
	if len(c.Obs) != 1 || math.Abs(c.Obs[0].Bound-pair.Bound) > 1e-9*pair.Bound {
		t.Errorf("certify -pairs: %+v, estimate's certified bound %v", c, pair.Bound)
	}
	okJSON(t, &c, "estimate", "-ham", h2Dump, "-plan", planPath, "-records", rec, "-calibration", cal, "-pairs", "0-1,2-3", "-observables", "N")
	if len(c.Obs) != 2 {
		t.Errorf("estimate -observables -pairs: %+v", c)
	}

	// budget plans a pair calibration from the matrices the file shows.
	var bud struct {
		Rows []budgetRow `json:"strategies"`
	}
	okJSON(t, &bud, "budget", "-ham", ham, "-eps", "0.1", "-calibration", cal, "-pairs", "0-1,2-3", "-strategy", "greedy")
	if r := bud.Rows[0]; r.Readout == nil || !r.Readout.Reachable || r.Readout.Preparations != 4 ||
		r.Readout.TotalShots != 4*r.Readout.CalibrationShots+r.Readout.Copies*r.Reference || r.Readout.Bound > 0.1 {
		t.Errorf("budget -pairs: %+v", bud.Rows[0].Readout)
	}

	est := []string{"estimate", "-ham", ham, "-plan", planPath, "-records", rec}
	for _, c := range []struct {
		args []string
		want []string
	}{
		{append(slices.Clone(est), "-pairs", "0-1"), []string{"-pairs without -calibration"}},
		{append(slices.Clone(est), "-calibration", cal, "-pairs", "0-1,1-2"), []string{"-pairs", "qubit 1", "disjoint"}},
		{append(slices.Clone(est), "-calibration", cal, "-pairs", "0-4"), []string{"-pairs", "qubit 4"}},
		{append(slices.Clone(est), "-calibration", cal, "-pairs", "0:1"), []string{"-pairs", `"0:1"`}},
		{append(slices.Clone(est), "-calibration", cal, "-pairs", "1-1"), []string{"-pairs", "two different qubits"}},
		{[]string{"simulate", "-ham", ham, "-plan", planPath, "-pair-flip", "0.1", "-pairs", "0-2", "-o", filepath.Join(dir, "x.csv")}, []string{"-pairs 0-2", "neighbouring"}},
		{[]string{"calibrate", "-qubits", "4", "-pairs", "0-1,1-2", "-shots", "5", "-o", filepath.Join(dir, "y.csv")}, []string{"-pairs", "disjoint"}},
		{[]string{"budget", "-ham", ham, "-eps", "0.1", "-readout", "0.01", "-pairs", "0-1"}, []string{"-pairs without -calibration"}},
	} {
		code, _, errOut := sp(t, c.args...)
		if code != 2 || strings.Count(errOut, "\n") != 1 {
			t.Errorf("%v: exit %d, stderr %q; want 2 and one line", c.args, code, errOut)
		}
		for _, w := range c.want {
			if !strings.Contains(errOut, w) {
				t.Errorf("%v: stderr %q lacks %q", c.args, errOut, w)
			}
		}
	}
	// A calibration made without the pair preparations has no pair model.
	plainCal := filepath.Join(dir, "plaincal.csv")
	ok(t, "simulate", "-ham", ham, "-plan", planPath, "-readout", "0.02", "-calibration-shots", "100", "-calibration-o", plainCal, "-o", filepath.Join(dir, "r2.csv"))
	code, _, errOut := sp(t, append(slices.Clone(est), "-calibration", plainCal, "-pairs", "0-1")...)
	if code != 2 || !strings.Contains(errOut, "never prepared") {
		t.Errorf("pairs from a calibration without pair preparations: exit %d, %q", code, errOut)
	}
}
