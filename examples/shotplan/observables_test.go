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
		{"estimate", "-ham", h2Dump, "-plan", plan, "-records", rec, "-observables", "N", "-readout", "0.01", "-calibration", rec},
		{"estimate", "-ham", h2Dump, "-plan", plan, "-records", rec, "-observables", "N", "-calibration-delta", "0.01"},
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

// TestObservablesReadoutWorkflow estimates H2's energy, N, S_z and S² from
// records read through asymmetric readout error, with -calibration from
// calibration shots of the same simulated device. The readout-mitigated
// data bounds hold together with probability ≥ 1 − δ (δ = 0.01; MATH.md
// §2.1.2, §4.8), so the check against values from outside the code (psi4's
// full-CI energy h2FCI, ⟨N⟩ = 2, ⟨S_z⟩ = 0, ⟨S²⟩ = 0 of the closed-shell
// singlet, textbook) fails falsely with probability at most 0.01 for its
// fixed seeds. The unmitigated N on the same records must miss 2 by more
// than its own data bound: readout error shifts ⟨N⟩, which is what the
// mitigation is for.
func TestObservablesReadoutWorkflow(t *testing.T) {
	dir := t.TempDir()
	plan := filepath.Join(dir, "p.jsonl")
	rec, cal := filepath.Join(dir, "r.csv"), filepath.Join(dir, "cal.csv")
	ok(t, "plan", "-ham", h2Dump, "-observables", "N,Sz,S2", "-targets", "0.05,0.1,0.1,0.2", "-delta", "0.01", "-shots", "100000", "-o", plan)
	ok(t, "simulate", "-ham", h2Dump, "-plan", plan, "-seed", "5", "-readout", "p01=0.02,p10=0.06",
		"-calibration-shots", "50000", "-calibration-o", cal, "-o", rec)
	type line struct {
		Name      string  `json:"name"`
		Estimate  float64 `json:"estimate"`
		Bound     float64 `json:"certified_bound"`
		DataBound float64 `json:"data_bound"`
		CalBias   float64 `json:"calibration_bias"`
		Delta     float64 `json:"delta"`
	}
	var m struct {
		Obs        []line  `json:"observables"`
		CalDelta   float64 `json:"calibration_delta"`
		Calibrated bool    `json:"readout_calibrated"`
	}
	okJSON(t, &m, "estimate", "-ham", h2Dump, "-plan", plan, "-records", rec, "-delta", "0.01", "-observables", "N,Sz,S2", "-calibration", cal)
	want := map[string]float64{"E": h2FCI, "N": 2, "Sz": 0, "S2": 0}
	if len(m.Obs) != 4 || !m.Calibrated || m.CalDelta != 0.01/4 {
		t.Fatalf("estimate -observables -calibration: %+v", m)
	}
	for _, o := range m.Obs {
		if o.Delta != 0.0075/4 {
			t.Errorf("%s: δ_k %v, want (δ − δ/4)/4", o.Name, o.Delta)
		}
		if d := math.Abs(o.Estimate - want[o.Name]); d > o.DataBound || d > o.Bound {
			t.Errorf("%s: mitigated estimate %v, true %v, data bound %v, certified %v", o.Name, o.Estimate, want[o.Name], o.DataBound, o.Bound)
		}
		if !(o.CalBias > 0) {
			t.Errorf("%s: calibration bias %v, want > 0", o.Name, o.CalBias)
		}
	}
	var plain struct {
		Obs []line `json:"observables"`
	}
	okJSON(t, &plain, "estimate", "-ham", h2Dump, "-plan", plan, "-records", rec, "-delta", "0.01", "-observables", "N,Sz,S2")
	if n := plain.Obs[1]; math.Abs(n.Estimate-2) <= n.DataBound {
		t.Errorf("plain N %v within its data bound %v of 2: this readout error does not matter here", n.Estimate, n.DataBound)
	}
	// certify gives the same certificates from the plan and the
	// calibration alone (no records).
	var c struct {
		Obs        []line  `json:"observables"`
		CalDelta   float64 `json:"calibration_delta"`
		Calibrated bool    `json:"readout_calibrated"`
	}
	okJSON(t, &c, "certify", "-ham", h2Dump, "-plan", plan, "-delta", "0.01", "-observables", "N,Sz,S2", "-calibration", cal)
	if len(c.Obs) != 4 || !c.Calibrated || c.CalDelta != m.CalDelta {
		t.Fatalf("certify -observables -calibration: %+v", c)
	}
	for k, o := range c.Obs {
		if math.Abs(o.Bound-m.Obs[k].Bound) > 1e-12*o.Bound || o.Delta != m.Obs[k].Delta {
			t.Errorf("%s: certify %v at δ_k %v, estimate %v at %v", o.Name, o.Bound, o.Delta, m.Obs[k].Bound, m.Obs[k].Delta)
		}
	}
	okJSON(t, &c, "certify", "-ham", h2Dump, "-plan", plan, "-delta", "0.01", "-calibration", cal)
	if len(c.Obs) != 1 || !(c.Obs[0].Bound > c.Obs[0].CalBias) || c.Obs[0].Delta != 0.0075 {
		t.Errorf("certify -calibration: %+v", c)
	}
	for _, args := range [][]string{
		{"certify", "-ham", h2Dump, "-plan", plan, "-calibration", cal, "-readout", "0.01"},
		{"certify", "-ham", h2Dump, "-plan", plan, "-calibration-delta", "0.01"},
		{"certify", "-ham", h2Dump, "-plan", plan, "-calibration", cal, "-calibration-delta", "0.06"},
		{"certify", "-ham", h2Dump, "-plan", plan, "-calibration", plan},
		{"certify", "-ham", h2Dump, "-plan", plan, "-observables", "N,Q"},
	} {
		if code, _, errOut := sp(t, args...); code != 2 || strings.Count(strings.TrimSpace(errOut), "\n") != 0 {
			t.Errorf("shotplan %s: exit %d, stderr %q; want exit 2 and one line", strings.Join(args, " "), code, errOut)
		}
	}
	out := ok(t, "estimate", "-ham", h2Dump, "-plan", plan, "-records", rec, "-observables", "N,Sz,S2", "-readout", "p01=0.02,p10=0.06")
	if !strings.Contains(out, "taken as exact") {
		t.Errorf("estimate -observables -readout output lacks %q:\n%s", "taken as exact", out)
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
