package main

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// lihDump is LiH/STO-3G at 1.5949 Å (NELEC=4, MS2=0). Full-CI energies from
// Debian's psi4 1.3.2: the neutral singlet −7.8824034103 (testdata/README.md)
// and the triplet −7.766413413913540
// (hamiltonian/molecule/testdata/open_shell).
const (
	lihDump    = "testdata/lih_sto3g_1.5949A.fcidump"
	lihFCI     = -7.8824034103
	lihTriplet = -7.766413413913540
)

// TestInfoExactSector: an FCIDUMP given to info is mapped with Jordan–Wigner
// and -exact takes its NELEC and MS2 by default; -electrons and -spin choose
// another sector. Tolerance 1e-6 hartree (solver residual below 1e-7).
func TestInfoExactSector(t *testing.T) {
	var out struct {
		Ground    float64 `json:"ground_energy"`
		Electrons *int    `json:"electrons"`
		Spin      *int    `json:"spin_twice"`
	}
	okJSON(t, &out, "info", "-exact", lihDump)
	if math.Abs(out.Ground-lihFCI) > 1e-6 || out.Electrons == nil || *out.Electrons != 4 || *out.Spin != 0 {
		t.Errorf("info -exact on the FCIDUMP: %v (%v electrons), want %v in the sector of 4 electrons", out.Ground, out.Electrons, lihFCI)
	}
	okJSON(t, &out, "info", "-exact", "-electrons", "4", "-spin", "2", lihDump)
	if math.Abs(out.Ground-lihTriplet) > 1e-6 {
		t.Errorf("info -exact -electrons 4 -spin 2: %v, want the triplet %v", out.Ground, lihTriplet)
	}
	for _, args := range [][]string{
		{"info", "-exact", "-electrons", "5", "-spin", "0", lihDump},
		{"info", "-exact", "-electrons", "x", lihDump},
		{"info", "-electrons", "4", lihDump},
		{"info", "-exact", "-electrons", "all", "-spin", "1", lihDump},
	} {
		if code, _, errOut := sp(t, args...); code != 2 || strings.Count(strings.TrimSpace(errOut), "\n") != 0 {
			t.Errorf("shotplan %s: exit %d, stderr %q; want exit 2 and one line", strings.Join(args, " "), code, errOut)
		}
	}
}

// TestSimulateStateFile: with -state the first run writes the ground state
// and the second reads it instead of solving again; both give the same
// records for the same seed. A state file made for another sector is
// refused.
func TestSimulateStateFile(t *testing.T) {
	dir := t.TempDir()
	plan := filepath.Join(dir, "p.plan")
	state := filepath.Join(dir, "g.state")
	r1, r2 := filepath.Join(dir, "r1.csv"), filepath.Join(dir, "r2.csv")
	ok(t, "plan", "-ham", lihDump, "-strategy", "derand", "-shots", "200", "-seed", "5", "-o", plan)
	ok(t, "simulate", "-ham", lihDump, "-plan", plan, "-seed", "3", "-state", state, "-o", r1)
	first, err := os.ReadFile(state)
	if err != nil {
		t.Fatal(err)
	}
	ok(t, "simulate", "-ham", lihDump, "-plan", plan, "-seed", "3", "-state", state, "-o", r2)
	a, _ := os.ReadFile(r1)
	b, _ := os.ReadFile(r2)
	if len(a) == 0 || string(a) != string(b) {
		t.Error("records from the saved state differ from those of the first run")
	}
	if again, _ := os.ReadFile(state); string(again) != string(first) {
		t.Error("the second run rewrote the state file")
	}
	code, _, errOut := sp(t, "simulate", "-ham", lihDump, "-plan", plan, "-electrons", "3", "-spin", "1", "-state", state, "-o", r2)
	if code != 2 || !strings.Contains(errOut, "sector") {
		t.Errorf("state file of another sector: exit %d, stderr %q", code, errOut)
	}
	if err := os.WriteFile(state, []byte("shotplan state 1\nqubits 12\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, _ := sp(t, "simulate", "-ham", lihDump, "-plan", plan, "-state", state, "-o", r2); code != 2 {
		t.Errorf("truncated state file: exit %d, want 2", code)
	}
}

// FuzzReadState feeds arbitrary bytes to the state-file reader: it must
// return an error or a state of 2^n finite amplitudes, never panic. The
// seeds are a valid file of the H2 Hamiltonian and cut or altered copies.
func FuzzReadState(f *testing.F) {
	h, g, err := readHamAny(h2Dump)
	if err != nil {
		f.Fatal(err)
	}
	sec, err := sectorFlags{electrons: new(string), spin: new(string)}.resolve(h.Qubits(), g)
	if err != nil {
		f.Fatal(err)
	}
	gs, err := groundState(h, sec)
	if err != nil {
		f.Fatal(err)
	}
	dir := f.TempDir()
	valid := filepath.Join(dir, "valid.state")
	if err := writeState(valid, h, sec, gs); err != nil {
		f.Fatal(err)
	}
	good, err := os.ReadFile(valid)
	if err != nil {
		f.Fatal(err)
	}
	f.Add(good)
	f.Add(good[:len(good)-5])
	f.Add([]byte(strings.Replace(string(good), "amplitudes 2", "amplitudes 99", 1)))
	f.Add([]byte("shotplan state 1\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		path := filepath.Join(t.TempDir(), "s.state")
		if err := os.WriteFile(path, data, 0o644); err != nil {
			t.Fatal(err)
		}
		st, err := readState(path, h, sec)
		if err != nil {
			return
		}
		if len(st.State) != 1<<h.Qubits() {
			t.Fatalf("state of %d amplitudes", len(st.State))
		}
		for _, v := range st.State {
			if math.IsNaN(real(v)+imag(v)) || math.IsInf(real(v)+imag(v), 0) {
				t.Fatalf("amplitude %v", v)
			}
		}
	})
}
