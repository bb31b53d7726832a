package main

import (
	"math"
	"path/filepath"
	"strings"
	"testing"
)

// TestObservablesWorkflow plans H2 for the energy, N, S_z and S² with their
// own targets, simulates the exact ground state of its sector (NELEC = 2,
// MS2 = 0) and estimates all four from the same records. The plan must
// report every certificate within its target; the estimates are checked
// against values from outside the code: the full-CI energy (psi4, h2FCI),
// ⟨N⟩ = 2, ⟨S_z⟩ = 0 and ⟨S²⟩ = 0 for the closed-shell singlet (textbook
// S(S+1) with S = 0). Every data bound holds together with probability
// ≥ 1 − δ (δ = 0.01 here), so the check fails falsely with probability at
// most 0.01 for the fixed seed it uses (it either passes for good or not).
func TestObservablesWorkflow(t *testing.T) {
	dir := t.TempDir()
	plan := filepath.Join(dir, "p.jsonl")
	rec := filepath.Join(dir, "r.csv")
	targets := []float64{0.05, 0.1, 0.1, 0.2}
	var p struct {
		Met   bool `json:"met"`
		Shots int  `json:"shots"`
		Lines []struct {
			Name   string  `json:"name"`
			Target float64 `json:"target"`
			Bound  float64 `json:"certified_bound"`
		} `json:"observables"`
	}
	okJSON(t, &p, "plan", "-ham", h2Dump, "-observables", "N,sz,S2", "-targets", "0.05,0.1,0.1,0.2", "-delta", "0.01", "-shots", "100000", "-o", plan)
	if !p.Met || len(p.Lines) != 4 {
		t.Fatalf("plan -observables: %+v, want every target met", p)
	}
	for k, l := range p.Lines {
		if l.Target != targets[k] || !(l.Bound <= l.Target) {
			t.Errorf("plan -observables: %s bound %v, target %v (want %v)", l.Name, l.Bound, l.Target, targets[k])
		}
	}
	ok(t, "simulate", "-ham", h2Dump, "-plan", plan, "-seed", "4", "-o", rec)
	var e struct {
		Obs []struct {
			Name      string  `json:"name"`
			Estimate  float64 `json:"estimate"`
			Bound     float64 `json:"certified_bound"`
			DataBound float64 `json:"data_bound"`
			Delta     float64 `json:"delta"`
		} `json:"observables"`
	}
	okJSON(t, &e, "estimate", "-ham", h2Dump, "-plan", plan, "-records", rec, "-delta", "0.01", "-observables", "N,Sz,S2")
	want := map[string]float64{"E": h2FCI, "N": 2, "Sz": 0, "S2": 0}
	if len(e.Obs) != 4 {
		t.Fatalf("estimate -observables: %+v", e)
	}
	for k, o := range e.Obs {
		if o.Name != p.Lines[k].Name || o.Delta != 0.01/4 {
			t.Errorf("estimate line %d: %s at δ_k %v, want %s at 0.0025", k, o.Name, o.Delta, p.Lines[k].Name)
		}
		if math.Abs(o.Estimate-want[o.Name]) > o.DataBound {
			t.Errorf("%s: estimate %v, true %v, data bound %v", o.Name, o.Estimate, want[o.Name], o.DataBound)
		}
		if !(o.Bound <= targets[k]) {
			t.Errorf("%s: certified bound %v above its target %v", o.Name, o.Bound, targets[k])
		}
	}
	ham := filepath.Join(dir, "h2.ham")
	ok(t, "convert", "-encoding", "jw", "-o", ham, h2Dump)
	for _, args := range [][]string{
		{"plan", "-ham", ham, "-observables", "N", "-targets", "0.1,0.1", "-o", filepath.Join(dir, "x.jsonl")},
		{"estimate", "-ham", h2Dump, "-plan", plan, "-records", rec, "-observables", "N,X"},
		{"estimate", "-ham", h2Dump, "-plan", plan, "-records", rec, "-observables", "N,N"},
		{"estimate", "-ham", h2Dump, "-plan", plan, "-records", rec, "-observables", "N", "-readout", "0.01"},
		{"plan", "-ham", h2Dump, "-observables", "N", "-o", filepath.Join(dir, "x.jsonl")},
		{"plan", "-ham", h2Dump, "-observables", "N", "-targets", "0.1", "-o", filepath.Join(dir, "x.jsonl")},
		{"plan", "-ham", h2Dump, "-observables", "N", "-targets", "0.1,-1", "-o", filepath.Join(dir, "x.jsonl")},
		{"plan", "-ham", h2Dump, "-targets", "0.1", "-o", filepath.Join(dir, "x.jsonl")},
		{"plan", "-ham", h2Dump, "-strategy", "importance", "-observables", "N", "-targets", "0.1,0.1", "-o", filepath.Join(dir, "x.jsonl")},
	} {
		if code, _, errOut := sp(t, args...); code != 2 || strings.Count(strings.TrimSpace(errOut), "\n") != 0 {
			t.Errorf("shotplan %s: exit %d, stderr %q; want exit 2 and one line", strings.Join(args, " "), code, errOut)
		}
	}
}

// FuzzObservablesFlags feeds arbitrary -observables and -targets lists to
// their parsers: they must return either a usable result (the energy first,
// one positive finite target per observable) or an input error (exit 2),
// never panic.
func FuzzObservablesFlags(f *testing.F) {
	for _, s := range [][2]string{{"N,Sz,S2", "0.1,0.1,0.1,0.1"}, {"s2", "1,2"}, {"N,N", "1,1,1"}, {",", ""}, {"Sz", "NaN,1"}, {"N", "1e400,1"}} {
		f.Add(s[0], s[1])
	}
	h, _, err := readHamAny(h2Dump)
	if err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, list, targets string) {
		obs, err := parseObservables(list, h2Dump, h)
		if err != nil {
			if _, ok := err.(inputError); !ok {
				t.Fatalf("parseObservables(%q): %v is not an input error", list, err)
			}
			return
		}
		if len(obs) < 2 || obs[0].Name != "E" {
			t.Fatalf("parseObservables(%q): %d observables, first %q", list, len(obs), obs[0].Name)
		}
		tg, err := parseTargets(targets, obs)
		if err != nil {
			if _, ok := err.(inputError); !ok {
				t.Fatalf("parseTargets(%q): %v is not an input error", targets, err)
			}
			return
		}
		if len(tg) != len(obs) {
			t.Fatalf("parseTargets(%q): %d targets for %d observables", targets, len(tg), len(obs))
		}
		for _, v := range tg {
			if !(v > 0) || math.IsInf(v, 0) {
				t.Fatalf("parseTargets(%q): target %v", targets, v)
			}
		}
	})
}
