package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/internal/scenario"
)

// TestSeedPlanWorkflow: plan -by-seed writes a seed plan of a few lines
// whatever -shots; a small one goes through certify, simulate and
// estimate like any plan (the same certificate as the compact plan of the
// same strategy and seed, since both are the same plan), and a 10^8-shot
// one is certified from its distribution with Hoeffding's radius
// width·sqrt(ln(2/δ)/(2N)) (MATH.md §4.1; the formula is recomputed here
// from the reported width).
func TestSeedPlanWorkflow(t *testing.T) {
	dir := t.TempDir()
	ham := filepath.Join(dir, "h.txt")
	if err := os.WriteFile(ham, []byte(scenario.Text()), 0o644); err != nil {
		t.Fatal(err)
	}
	seedPlan := filepath.Join(dir, "seed.jsonl")
	compact := filepath.Join(dir, "compact.jsonl")
	ok(t, "plan", "-ham", ham, "-strategy", "biased", "-shots", "3000", "-seed", "9", "-by-seed", "-o", seedPlan)
	ok(t, "plan", "-ham", ham, "-strategy", "biased", "-shots", "3000", "-seed", "9", "-o", compact)
	var a, b struct {
		Bound float64 `json:"certified_bound"`
		Shots int     `json:"shots"`
	}
	okJSON(t, &a, "certify", "-ham", ham, "-plan", seedPlan)
	okJSON(t, &b, "certify", "-ham", ham, "-plan", compact)
	if a.Shots != 3000 || a.Bound != b.Bound {
		t.Errorf("certify: seed plan %+v, compact plan of the same draw %+v; want the same bound", a, b)
	}
	rec := filepath.Join(dir, "rec.csv")
	ok(t, "simulate", "-ham", ham, "-plan", seedPlan, "-o", rec)
	var est struct {
		Energy float64 `json:"energy"`
		Shots  int     `json:"shots"`
	}
	okJSON(t, &est, "estimate", "-ham", ham, "-plan", seedPlan, "-records", rec)
	if est.Shots != 3000 || math.IsNaN(est.Energy) {
		t.Errorf("estimate of the seed plan's records: %+v", est)
	}

	// Device jobs (allocate.SplitJobs) of the seed plan are those of the
	// compact plan of the same draw: the same job folders and manifests.
	for _, plan := range []string{seedPlan, compact} {
		ok(t, "export", "-plan", plan, "-max-shots-per-circuit", "100", "-max-circuits-per-job", "500", "-one-program=false", "-o", filepath.Join(dir, "jobs-"+filepath.Base(plan)))
	}
	seedJobs, _ := filepath.Glob(filepath.Join(dir, "jobs-seed.jsonl", "*", "manifest.csv"))
	compactJobs, _ := filepath.Glob(filepath.Join(dir, "jobs-compact.jsonl", "*", "manifest.csv"))
	if len(seedJobs) == 0 || len(seedJobs) != len(compactJobs) {
		t.Fatalf("jobs: %d manifests from the seed plan, %d from the compact plan", len(seedJobs), len(compactJobs))
	}
	for k := range seedJobs {
		a, _ := os.ReadFile(seedJobs[k])
		b, _ := os.ReadFile(compactJobs[k])
		if string(a) != string(b) {
			t.Errorf("job %d: manifests differ", k)
		}
	}

	big := filepath.Join(dir, "big.jsonl")
	ok(t, "plan", "-ham", ham, "-strategy", "random", "-shots", "100000000", "-by-seed", "-o", big)
	if fi, err := os.Stat(big); err != nil || fi.Size() > 1024 {
		t.Fatalf("10^8-shot seed plan: %v, %d bytes", err, fi.Size())
	}
	var c struct {
		Bound  float64 `json:"certified_bound"`
		Radius float64 `json:"radius"`
		Width  float64 `json:"width"`
		Shots  int     `json:"shots"`
		From   string  `json:"certified_from"`
	}
	okJSON(t, &c, "certify", "-ham", ham, "-plan", big, "-delta", "0.01")
	want := c.Width * math.Sqrt(math.Log(2/0.01)/(2*1e8))
	if c.Shots != 1e8 || c.From != "distribution" || math.Abs(c.Radius-want) > 1e-12*want || c.Bound != c.Radius {
		t.Errorf("certify of a 10^8-shot seed plan: %+v, want radius %v", c, want)
	}
	// The records of 10^8 shots take 1.6 GB, of 10^9 over the default
	// -memory-limit: refused from the header, before drawing a shot.
	huge := filepath.Join(dir, "huge.jsonl")
	ok(t, "plan", "-ham", ham, "-strategy", "random", "-shots", "1000000000", "-by-seed", "-o", huge)
	code, _, errOut := sp(t, "simulate", "-ham", ham, "-plan", huge, "-o", rec)
	if code != 2 || !strings.Contains(errOut, "GiB") || !strings.Contains(errOut, "-memory-limit") {
		t.Errorf("simulate of a 10^9-shot seed plan: exit %d, %q", code, errOut)
	}
}
