package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// lihHF is the restricted Hartree–Fock energy of the LiH file, from Debian's
// psi4 1.3.2 (/work/shared/data/fcidump/README.md and
// hamiltonian/hamiltoniantest/energies.json, E_HF).
const lihHF = -7.862026959370798

// TestSimulatePrepare: -prepare hf measures the determinant of the
// FCIDUMP's NELEC electrons, whose energy is psi4's E_HF (tolerance 1e-9
// hartree: psi4 converged the energy to 1e-12); all-Z shots of a basis state
// are certain, so every qubit measured in Z reads its occupation in
// 111100000000 (qubit 0 first). -prepare FILE reads an amplitude file and
// reports its energy; the default stays the ground state (full CI).
func TestSimulatePrepare(t *testing.T) {
	dir := t.TempDir()
	plan := filepath.Join(dir, "p.plan")
	rec := filepath.Join(dir, "r.csv")
	ok(t, "plan", "-ham", lihDump, "-strategy", "derand", "-shots", "300", "-seed", "5", "-o", plan)
	var out struct {
		Prepared string   `json:"prepared"`
		Energy   float64  `json:"energy"`
		Ground   *float64 `json:"ground_energy"`
	}
	okJSON(t, &out, "simulate", "-ham", lihDump, "-plan", plan, "-prepare", "hf", "-o", rec)
	if out.Prepared != "hf" || math.Abs(out.Energy-lihHF) > 1e-9 || out.Ground != nil {
		t.Errorf("simulate -prepare hf: %+v, want energy %v and no ground energy", out, lihHF)
	}
	data, err := os.ReadFile(rec)
	if err != nil {
		t.Fatal(err)
	}
	const occ = "111100000000"
	seen := 0
	for i, line := range strings.Split(strings.TrimSpace(string(data)), "\n")[1:] {
		setting, outcome, _ := strings.Cut(line, ",")
		if len(setting) != 12 || len(outcome) != 12 {
			t.Fatalf("record %d: %q", i+1, line)
		}
		for q := range 12 {
			if setting[q] == 'Z' {
				seen++
				if outcome[q] != occ[q] {
					t.Fatalf("record %d %q: qubit %d measured in Z reads %c, the determinant has %c", i+1, line, q, outcome[q], occ[q])
				}
			}
		}
	}
	if seen == 0 {
		t.Fatal("no qubit was measured in Z")
	}

	okJSON(t, &out, "simulate", "-ham", lihDump, "-plan", plan, "-o", rec)
	if out.Prepared != "ground" || out.Ground == nil || math.Abs(*out.Ground-lihFCI) > 1e-6 {
		t.Errorf("simulate default: %+v, want the ground state at %v", out, lihFCI)
	}

	// The H2 determinant |1100⟩ (index 3) written by hand as an amplitude
	// file gives the same energy as -prepare hf: psi4's E_HF at 0.74 Å.
	h2plan := filepath.Join(dir, "h2.plan")
	ok(t, "plan", "-ham", h2Dump, "-strategy", "derand", "-shots", "50", "-seed", "5", "-o", h2plan)
	amp := filepath.Join(dir, "hf.amp")
	if err := os.WriteFile(amp, []byte("shotplan amplitudes 1\nqubits 4\n3 1 0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	var hf, file struct {
		Energy float64 `json:"energy"`
	}
	okJSON(t, &hf, "simulate", "-ham", h2Dump, "-plan", h2plan, "-prepare", "hf", "-o", rec)
	okJSON(t, &file, "simulate", "-ham", h2Dump, "-plan", h2plan, "-prepare", amp, "-o", rec)
	if hf.Energy != file.Energy || math.Abs(hf.Energy-(-1.1167593073781568)) > 1e-9 {
		t.Errorf("H2: -prepare hf energy %v, the same determinant from a file %v, psi4 E_HF −1.1167593074", hf.Energy, file.Energy)
	}

	bad3 := filepath.Join(dir, "three.amp")
	if err := os.WriteFile(bad3, []byte("shotplan amplitudes 1\nqubits 3\n3 1 0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	garbage := filepath.Join(dir, "garbage.amp")
	if err := os.WriteFile(garbage, []byte("shotplan amplitudes 1\nqubits 4\n3 x 0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{
		{"simulate", "-ham", h2Dump, "-plan", h2plan, "-prepare", bad3, "-o", rec},
		{"simulate", "-ham", h2Dump, "-plan", h2plan, "-prepare", garbage, "-o", rec},
		{"simulate", "-ham", h2Dump, "-plan", h2plan, "-prepare", filepath.Join(dir, "missing"), "-o", rec},
		{"simulate", "-ham", h2Dump, "-plan", h2plan, "-prepare", "hf", "-electrons", "all", "-o", rec},
		{"simulate", "-ham", h2Dump, "-plan", h2plan, "-prepare", amp, "-state", filepath.Join(dir, "s"), "-o", rec},
	} {
		if code, _, errOut := sp(t, args...); code != 2 || strings.Count(strings.TrimSpace(errOut), "\n") != 0 {
			t.Errorf("shotplan %s: exit %d, stderr %q; want exit 2 and one line", strings.Join(args, " "), code, errOut)
		}
	}
}

// TestSimulateNoiseFlags: with -pair-flip 1 every pair of neighbours flips
// on every shot, so on 4 qubits qubits 0 and 3 flip once and qubits 1 and 2
// twice: the H2 determinant 1100 (qubit 0 first) reads 0101 on every qubit
// measured in Z. Bad probabilities exit 2 with one line.
func TestSimulateNoiseFlags(t *testing.T) {
	dir := t.TempDir()
	plan := filepath.Join(dir, "p.plan")
	rec := filepath.Join(dir, "r.csv")
	ok(t, "plan", "-ham", h2Dump, "-strategy", "derand", "-shots", "200", "-seed", "5", "-o", plan)
	var out struct {
		PairFlip string `json:"pair_flip"`
	}
	okJSON(t, &out, "simulate", "-ham", h2Dump, "-plan", plan, "-prepare", "hf", "-pair-flip", "1", "-o", rec)
	if out.PairFlip != "1" {
		t.Errorf("pair_flip %q, want 1", out.PairFlip)
	}
	data, err := os.ReadFile(rec)
	if err != nil {
		t.Fatal(err)
	}
	const want = "0101"
	seen := 0
	for i, line := range strings.Split(strings.TrimSpace(string(data)), "\n")[1:] {
		setting, outcome, _ := strings.Cut(line, ",")
		for q := range 4 {
			if setting[q] == 'Z' {
				seen++
				if outcome[q] != want[q] {
					t.Fatalf("record %d %q: qubit %d reads %c, want %c", i+1, line, q, outcome[q], want[q])
				}
			}
		}
	}
	if seen == 0 {
		t.Fatal("no qubit was measured in Z")
	}
	for _, args := range [][]string{
		{"simulate", "-ham", h2Dump, "-plan", plan, "-depolarizing", "1.5", "-o", rec},
		{"simulate", "-ham", h2Dump, "-plan", plan, "-dephasing", "x", "-o", rec},
		{"simulate", "-ham", h2Dump, "-plan", plan, "-pair-flip", "-0.1", "-o", rec},
	} {
		if code, _, errOut := sp(t, args...); code != 2 || strings.Count(strings.TrimSpace(errOut), "\n") != 0 {
			t.Errorf("shotplan %s: exit %d, stderr %q; want exit 2 and one line", strings.Join(args, " "), code, errOut)
		}
	}
}
