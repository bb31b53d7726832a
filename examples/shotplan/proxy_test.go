package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
)

// TestPlanProxy: plan -proxy hf on LiH's FCIDUMP names the determinant
// 111100000000 (4 electrons, interleaved α, β; Szabo & Ostlund §3.4, common
// practice) and its energy, the SCF energy −7.8620269594 of psi4 1.3.2
// (testdata/README.md); -proxy exact the full-CI energy −7.8824034103; an
// amplitude file holding the determinant gives the same plan as hf; and
// certify accepts every plan (it is an ordinary fixed plan). Without
// -proxy the plan is the one-norm plan of allocate.SortedGC{}.
func TestPlanProxy(t *testing.T) {
	dir := t.TempDir()
	var res struct {
		Proxy string `json:"proxy"`
	}
	hf := filepath.Join(dir, "hf.jsonl")
	okJSON(t, &res, "plan", "-ham", lihDump, "-strategy", "sorted-gc", "-shots", "20000", "-proxy", "hf", "-o", hf)
	if !strings.Contains(res.Proxy, "111100000000") || !strings.Contains(res.Proxy, "-7.8620269594") {
		t.Errorf("-proxy hf: proxy %q, want the determinant 111100000000 at the SCF energy -7.8620269594", res.Proxy)
	}
	exact := filepath.Join(dir, "exact.jsonl")
	okJSON(t, &res, "plan", "-ham", lihDump, "-strategy", "color-gc", "-shots", "20000", "-proxy", "exact", "-o", exact)
	if !strings.Contains(res.Proxy, "-7.8824034103") {
		t.Errorf("-proxy exact: proxy %q, want the full-CI energy -7.8824034103", res.Proxy)
	}
	amp := filepath.Join(dir, "hf.amp")
	if err := os.WriteFile(amp, []byte("shotplan amplitudes 1\nqubits 12\n15 2 0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	fromFile := filepath.Join(dir, "file.jsonl")
	ok(t, "plan", "-ham", lihDump, "-strategy", "sorted-gc", "-shots", "20000", "-proxy", amp, "-o", fromFile)
	// The two routes (flip-pattern sums for a basis state, Born
	// probabilities for amplitudes) round differently in the last digits,
	// which may move a largest-remainder shot: same settings, counts
	// within one shot.
	pa, err := allocate.ReadPlanFile(hf)
	if err != nil {
		t.Fatal(err)
	}
	pb, err := allocate.ReadPlanFile(fromFile)
	if err != nil {
		t.Fatal(err)
	}
	if len(pa.Plan.Shots) != len(pb.Plan.Shots) {
		t.Fatalf("amplitude file: %d settings, -proxy hf %d", len(pb.Plan.Shots), len(pa.Plan.Shots))
	}
	for k := range pa.Plan.Shots {
		if pa.Plan.Settings[k].Key() != pb.Plan.Settings[k].Key() || pa.Plan.Shots[k]-pb.Plan.Shots[k] > 1 || pb.Plan.Shots[k]-pa.Plan.Shots[k] > 1 {
			t.Errorf("setting %d: amplitude file %s × %d, -proxy hf %s × %d", k, pb.Plan.Settings[k], pb.Plan.Shots[k], pa.Plan.Settings[k], pa.Plan.Shots[k])
		}
	}
	worst := filepath.Join(dir, "worst.jsonl")
	ok(t, "plan", "-ham", lihDump, "-strategy", "sorted-gc", "-shots", "20000", "-o", worst)
	f, err := allocate.ReadPlanFile(worst)
	if err != nil {
		t.Fatal(err)
	}
	h, _, err := readHamAny(lihDump)
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(h, 20000, &allocate.SortedGC{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	for k := range p.Shots {
		if f.Plan.Shots[k] != p.Shots[k] || f.Plan.Settings[k].Key() != p.Settings[k].Key() {
			t.Fatalf("without -proxy, setting %d differs from the one-norm plan", k)
		}
	}
	for _, plan := range []string{hf, exact, fromFile} {
		ok(t, "certify", "-ham", lihDump, "-plan", plan)
	}
}
