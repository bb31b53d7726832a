package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The round loop with -baseline hf on H2 (the FCIDUMP file, so the
// Hartree–Fock determinant comes from its occupations): the state file
// carries the baseline, one value per term, each ⟨P_i⟩ in a basis state
// (±1 for a Z-string, 0 otherwise), and the loop runs until it stops. The
// final interval must contain the full-CI energy of psi4 (h2FCI): it holds
// with probability ≥ 1 − δ = 99% over the seeds, which are fixed, so the
// check is deterministic. A state whose baseline was edited is refused
// naming the entry, and bad -baseline values are refused.
func TestRoundsBaseline(t *testing.T) {
	dir := t.TempDir()
	state := filepath.Join(dir, "state.json")
	var start struct {
		Baseline string     `json:"baseline"`
		Range    [2]float64 `json:"shot_range"`
	}
	okJSON(t, &start, "rounds", "start", "-ham", h2Dump, "-eps", "0.02", "-delta", "0.01", "-first", "500", "-baseline", "hf", "-o", state)
	if !strings.Contains(start.Baseline, "Hartree–Fock determinant 1100") {
		t.Errorf("baseline %q, want H2's Hartree–Fock determinant 1100", start.Baseline)
	}
	var st roundsState
	if err := json.Unmarshal(readFile(t, state), &st); err != nil {
		t.Fatal(err)
	}
	var h struct {
		Terms []struct {
			Pauli string `json:"pauli"`
		} `json:"terms"`
	}
	if err := json.Unmarshal(st.Hamiltonian, &h); err != nil {
		t.Fatal(err)
	}
	if len(st.Baseline) != len(h.Terms) {
		t.Fatalf("state has %d baseline values for %d terms", len(st.Baseline), len(h.Terms))
	}
	for i, c := range st.Baseline {
		// ⟨1100|P|1100⟩ by hand: 0 if P has X or Y, else (−1)^(Z on qubits 0, 1).
		p, want := h.Terms[i].Pauli, 1.0
		if strings.ContainsAny(p, "XY") {
			want = 0
		} else if strings.Count(p[:2], "Z")%2 == 1 {
			want = -1
		}
		if c != want {
			t.Errorf("baseline of %s = %v, want %v", p, c, want)
		}
	}
	var last roundsStatus
	for k := 1; last.Verdict != "stop: certified" && last.Verdict != "stop: shots spent"; k++ {
		if k > 30 {
			t.Fatal("no stop after 30 rounds")
		}
		plan := filepath.Join(dir, fmt.Sprintf("round%d.json", k))
		recs := filepath.Join(dir, fmt.Sprintf("round%d.csv", k))
		ok(t, "rounds", "next", "-state", state, "-o", plan)
		ok(t, "simulate", "-ham", h2Dump, "-plan", plan, "-seed", fmt.Sprint(100+k), "-o", recs)
		okJSON(t, &last, "rounds", "add", "-state", state, "-records", recs)
	}
	if last.Verdict != "stop: certified" {
		t.Fatalf("run ended with %q, radius %g", last.Verdict, last.Radius)
	}
	if !(last.Interval[0] <= h2FCI && h2FCI <= last.Interval[1]) {
		t.Errorf("certified interval %v misses the full-CI energy %.10f", last.Interval, h2FCI)
	}
	t.Logf("certified ±%.3g after %d shots", last.Radius, last.Shots)

	good := readFile(t, state)
	for name, edit := range map[string]func(c map[string]any){
		"out of range": func(c map[string]any) { c["baseline"].([]any)[1] = 1.5 },
		"short":        func(c map[string]any) { c["baseline"] = c["baseline"].([]any)[1:] },
	} {
		var c map[string]any
		if err := json.Unmarshal(good, &c); err != nil {
			t.Fatal(err)
		}
		edit(c)
		b, _ := json.Marshal(c)
		p := filepath.Join(dir, "bad.json")
		os.WriteFile(p, b, 0o644)
		code, _, errOut := sp(t, "rounds", "status", "-state", p)
		if code != 2 || !strings.Contains(errOut, "baseline") {
			t.Errorf("%s baseline: exit %d, %q; want 2 and the entry named", name, code, errOut)
		}
	}

	txt := h2Ham(t, dir)
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"-ham", txt, "-baseline", "hf"}, "-baseline hf needs an FCIDUMP file"},
		{[]string{"-ham", h2Dump, "-baseline", "worst"}, "-baseline none"},
		{[]string{"-ham", h2Dump, "-baseline", "101"}, "4 bits"},
		{[]string{"-ham", h2Dump, "-spin", "0"}, "-baseline hf or exact"},
	} {
		args := append([]string{"rounds", "start", "-eps", "0.02", "-o", filepath.Join(dir, "never.json")}, c.args...)
		if code, _, errOut := sp(t, args...); code != 2 || !strings.Contains(errOut, c.want) {
			t.Errorf("%v: exit %d, %q; want 2 and %q", c.args, code, errOut, c.want)
		}
	}
}
