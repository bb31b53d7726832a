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

// TestEstimateEntangledStreamed runs plan (sorted-gc, greedy-gc: entangled
// settings), simulate and estimate on H2 and checks that estimate streams
// the records and reports the in-memory estimator's numbers: the energy and
// standard error of estimate.Grouped on the same records to the last bit,
// and the data bound of guarantee.EmpiricalStream on a Stream fed from the
// same file (whose agreement with guarantee.Empirical in memory is
// TestEmpiricalStreamEntangled's). That the records went through the
// stream is seen in the error for one shot too many: the streamed reader
// stops at that line and names it, where records read whole are counted
// after reading, with no line to name.
func TestEstimateEntangledStreamed(t *testing.T) {
	dir := t.TempDir()
	ham := h2Ham(t, dir)
	h, err := hamiltonian.ReadFile(ham)
	if err != nil {
		t.Fatal(err)
	}
	for _, strategy := range []string{"sorted-gc", "greedy-gc"} {
		plan := filepath.Join(dir, strategy+".jsonl")
		recs := filepath.Join(dir, strategy+".csv")
		ok(t, "plan", "-ham", ham, "-strategy", strategy, "-shots", "600", "-o", plan)
		ok(t, "simulate", "-ham", ham, "-plan", plan, "-o", recs)
		f, err := allocate.ReadPlanFile(plan)
		if err != nil {
			t.Fatal(err)
		}
		settings, shots := f.Plan.Distinct()
		entangled := false
		for _, s := range settings {
			entangled = entangled || !s.IsLocal()
		}
		if !entangled {
			t.Fatalf("%s: the plan has no entangled setting; the test needs one", strategy)
		}
		var got struct {
			Energy    float64 `json:"energy"`
			StdErr    float64 `json:"std_error"`
			DataBound float64 `json:"data_bound"`
			DataForm  string  `json:"data_form"`
			Shots     int     `json:"shots"`
		}
		okJSON(t, &got, "estimate", "-ham", ham, "-plan", plan, "-records", recs)
		rec, err := estimate.ReadCSVFile(recs, settings)
		if err != nil {
			t.Fatal(err)
		}
		res, err := estimate.Grouped(h, rec, &estimate.Options{Confidence: 0.95})
		if err != nil {
			t.Fatal(err)
		}
		if math.Float64bits(got.Energy) != math.Float64bits(res.Energy) || math.Float64bits(got.StdErr) != math.Float64bits(res.StdErr) || got.Shots != res.Shots {
			t.Errorf("%s: estimate reports %v ± %v (%d shots), Grouped in memory %v ± %v (%d)", strategy, got.Energy, got.StdErr, got.Shots, res.Energy, res.StdErr, res.Shots)
		}
		st, err := estimate.NewStream(h, settings, shots, &estimate.Options{Confidence: 0.95})
		if err != nil {
			t.Fatal(err)
		}
		fh, err := os.Open(recs)
		if err != nil {
			t.Fatal(err)
		}
		_, err = st.AddCSV(fh, settings, nil)
		fh.Close()
		if err != nil {
			t.Fatal(err)
		}
		pooled, err := guarantee.EmpiricalStream(st, 0.025, nil)
		if err != nil {
			t.Fatal(err)
		}
		resid, err := guarantee.EmpiricalStream(st, 0.025, &guarantee.EmpiricalOptions{Form: guarantee.Residual})
		if err != nil {
			t.Fatal(err)
		}
		want, form := pooled.Bound, "pooled"
		if resid.Bound < pooled.Bound {
			want, form = resid.Bound, "residual"
		}
		if got.DataBound != want || got.DataForm != form {
			t.Errorf("%s: data bound %v (%s), the stream's %v (%s)", strategy, got.DataBound, got.DataForm, want, form)
		}
		// One shot too many: the last line again.
		text := string(readFile(t, recs))
		lines := strings.SplitAfter(strings.TrimSuffix(text, "\n"), "\n")
		extra := filepath.Join(dir, strategy+"-extra.csv")
		if err := os.WriteFile(extra, []byte(text+lines[len(lines)-1]+"\n"), 0o644); err != nil {
			t.Fatal(err)
		}
		code, _, errOut := sp(t, "estimate", "-ham", ham, "-plan", plan, "-records", extra)
		if wantLine := fmt.Sprintf("line %d: more than", len(lines)+1); code != 2 || !strings.Contains(errOut, wantLine) {
			t.Errorf("%s: one shot too many: exit %d, %q; want exit 2 and %q", strategy, code, errOut, wantLine)
		}
	}
}
