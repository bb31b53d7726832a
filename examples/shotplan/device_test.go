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

// TestCompactPlanAndJobs plans H2 to a compact plan file, certifies and
// simulates from it, and exports it as jobs under device limits: every
// circuit within the shot limit, every job within the circuit limit, no
// setting twice in a job, and the jobs' manifests adding up to the plan.
func TestCompactPlanAndJobs(t *testing.T) {
	dir := t.TempDir()
	ham := filepath.Join(dir, "h2.txt")
	plan := filepath.Join(dir, "plan.jsonl")
	ok(t, "convert", "-o", ham, h2Dump)
	ok(t, "plan", "-ham", ham, "-strategy", "random", "-shots", "3000", "-seed", "5", "-o", plan)
	text, err := os.ReadFile(plan)
	if err != nil {
		t.Fatal(err)
	}
	first, _, _ := strings.Cut(string(text), "\n")
	if !strings.Contains(first, `"version": 2`) {
		t.Fatalf("plan to %s is not compact: first line %q", plan, first)
	}
	f, err := allocate.ReadPlanFile(plan)
	if err != nil {
		t.Fatal(err)
	}
	distinct, _ := f.Plan.Distinct()
	// One header line, one line per distinct setting (H2 has 4 qubits: at
	// most 3^4 = 81), cover lines of 64 counts.
	h, err := hamiltonian.ReadFile(ham)
	if err != nil {
		t.Fatal(err)
	}
	if lines, want := strings.Count(string(text), "\n"), 1+len(distinct)+(h.Len()+63)/64; lines != want || len(distinct) > 81 {
		t.Errorf("compact plan has %d lines for %d distinct settings, want %d", lines, len(distinct), want)
	}
	ok(t, "certify", "-ham", ham, "-plan", plan)
	rec := filepath.Join(dir, "rec.csv")
	ok(t, "simulate", "-ham", ham, "-plan", plan, "-o", rec)
	ok(t, "estimate", "-ham", ham, "-plan", plan, "-records", rec)

	jobs := filepath.Join(dir, "jobs")
	ok(t, "export", "-plan", plan, "-max-shots-per-circuit", "20", "-max-circuits-per-job", "7", "-o", jobs)
	entries, err := os.ReadDir(jobs)
	if err != nil {
		t.Fatal(err)
	}
	sum := map[string]int{}
	total := 0
	for _, e := range entries {
		settings, shots, err := estimate.ReadManifestFile(filepath.Join(jobs, e.Name(), estimate.ManifestName))
		if err != nil {
			t.Fatal(err)
		}
		if len(settings) > 7 {
			t.Errorf("%s: %d circuits, over the limit of 7", e.Name(), len(settings))
		}
		seen := map[string]bool{}
		for k, s := range settings {
			if shots[k] > 20 || shots[k] < 1 {
				t.Errorf("%s: %s has %d shots, want 1 to 20", e.Name(), s, shots[k])
			}
			if seen[s.String()] {
				t.Errorf("%s: %s twice", e.Name(), s)
			}
			seen[s.String()] = true
			sum[s.String()] += shots[k]
			total += shots[k]
		}
	}
	ds, dk := f.Plan.Distinct()
	for k, s := range ds {
		if sum[s.String()] != dk[k] {
			t.Errorf("jobs give %s %d shots, the plan %d", s, sum[s.String()], dk[k])
		}
	}
	if total != 3000 {
		t.Errorf("jobs hold %d shots, want 3000", total)
	}
}

// TestPlanCostBudget fits a plan to a cost budget through the command: the
// plan costs at most the budget, and its certified bound is what FitCost
// of the library gives for the same candidate plan.
func TestPlanCostBudget(t *testing.T) {
	dir := t.TempDir()
	ham := filepath.Join(dir, "h2.txt")
	ok(t, "convert", "-o", ham, h2Dump)
	plan := filepath.Join(dir, "plan.jsonl")
	ok(t, "plan", "-ham", ham, "-strategy", "sorted", "-shots", "1000", "-shot-cost", "1", "-circuit-cost", "200", "-cost-budget", "2000", "-delta", "0.05", "-o", plan)
	f, err := allocate.ReadPlanFile(plan)
	if err != nil {
		t.Fatal(err)
	}
	cost := allocate.CostModel{ShotCost: 1, CircuitCost: 200, Budget: 2000}
	if c := cost.Cost(f.Plan); c > 2000 {
		t.Errorf("plan costs %g, over the budget 2000", c)
	}
	h, err := hamiltonian.ReadFile(ham)
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(h, 1000, &allocate.Sorted{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	_, want, err := allocate.FitCost(h, p, cost, 0.05)
	if err != nil {
		t.Fatal(err)
	}
	c, err := guarantee.CertifyPlan(h, f.Plan, 0.05, nil)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(c.Bound-want) > 1e-12*want {
		t.Errorf("certified bound of the fitted plan %g, FitCost says %g", c.Bound, want)
	}
}
