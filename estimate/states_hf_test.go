package estimate

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/pauli"
)

// exactEnergy returns Σ_P c_P ⟨P⟩ + offset for the simulator's state, each
// ⟨P⟩ from the simulator's Born probabilities in the setting that measures P
// (identity positions measured in Z).
func exactEnergy(t *testing.T, sim *Simulator, h *hamiltonian.Hamiltonian) float64 {
	t.Helper()
	e := h.Offset()
	var prob []float64
	b := make(pauli.Bits, 1)
	for _, term := range h.Terms() {
		s := pauli.Complete(term.Pauli, pauli.Z)
		prob = sim.Probabilities(prob, s)
		m := 0.0
		for a, p := range prob {
			b[0] = uint64(a)
			m += p * float64(s.Sample(term.Pauli, b))
		}
		e += term.Coeff * m
	}
	return e
}

// TestHartreeFockEnergy checks that the energy of the determinant
// HartreeFockState builds from NELEC and MS2 is the restricted Hartree–Fock
// energy psi4 1.3.2 computed for the same integrals
// (hamiltonian/hamiltoniantest/energies.json, "E_HF"; the FCIDUMP files list
// the SCF orbitals in energy order). psi4 converged the energy to 1e-12 and
// the density to 1e-10, which changes the energy at second order (< 1e-12);
// summing a few hundred terms in float64 adds < 1e-13. The tolerance 1e-9
// hartree leaves a wide margin and is still 10^5 times smaller than the
// correlation energy that separates E_HF from the ground state.
func TestHartreeFockEnergy(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("..", "hamiltonian", "hamiltoniantest", "energies.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref map[string]json.RawMessage
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name                 string
		qubits, nelec, spin2 int
	}{
		{hamiltoniantest.H2, 4, 2, 0},
		{hamiltoniantest.H2Bohr, 4, 2, 0},
		{hamiltoniantest.LiH, 12, 4, 0},
	} {
		var mol struct {
			EHF   float64 `json:"E_HF"`
			Nelec int     `json:"nelec"`
		}
		if err := json.Unmarshal(ref[tc.name], &mol); err != nil {
			t.Fatal(tc.name, err)
		}
		if mol.Nelec != tc.nelec {
			t.Fatalf("%s: energies.json has %d electrons, the test %d", tc.name, mol.Nelec, tc.nelec)
		}
		h, err := hamiltoniantest.Molecule(tc.name, fermion.JordanWigner)
		if err != nil {
			t.Fatal(err)
		}
		psi, err := HartreeFockState(tc.qubits, tc.nelec, tc.spin2)
		if err != nil {
			t.Fatal(err)
		}
		sim, err := NewSimulator(psi, 1, nil)
		if err != nil {
			t.Fatal(err)
		}
		got := exactEnergy(t, sim, h)
		if math.Abs(got-mol.EHF) > 1e-9 {
			t.Errorf("%s: ⟨HF|H|HF⟩ = %.12f, psi4 E_HF = %.12f", tc.name, got, mol.EHF)
		}
		// The same value through the Hamiltonian's own expectation.
		if e := h.Energy(psi); math.Abs(e-mol.EHF) > 1e-9 {
			t.Errorf("%s: h.Energy(HF) = %.12f, psi4 E_HF = %.12f", tc.name, e, mol.EHF)
		}
	}
}

// TestHartreeFockBits checks the occupations on small cases worked by hand
// from the interleaved numbering (qubit 2p: orbital p, α; 2p+1: β): two
// electrons fill qubits 0 and 1 (0b11); four fill 0–3; a triplet of two
// electrons (2S_z = 2) fills the α spin orbitals of orbitals 0 and 1, qubits
// 0 and 2 (0b101); a doublet of three, qubits 0, 1, 2 (0b111).
func TestHartreeFockBits(t *testing.T) {
	for _, tc := range []struct {
		qubits, nelec, spin2 int
		want                 uint64
	}{
		{4, 2, 0, 0b11}, {12, 4, 0, 0b1111}, {4, 2, 2, 0b101}, {6, 3, 1, 0b111}, {6, 3, -1, 0b1011}, {4, 0, 0, 0},
	} {
		psi, err := HartreeFockState(tc.qubits, tc.nelec, tc.spin2)
		if err != nil {
			t.Fatal(tc, err)
		}
		for a, v := range psi {
			want := complex128(0)
			if uint64(a) == tc.want {
				want = 1
			}
			if v != want {
				t.Fatalf("%v: amplitude %d = %v, want %v", tc, a, v, want)
			}
		}
	}
	for _, tc := range [][3]int{{3, 2, 0}, {4, 5, 1}, {4, 2, 1}, {4, 2, 4}, {4, -2, 0}, {0, 0, 0}, {40, 2, 0}} {
		if _, err := HartreeFockState(tc[0], tc[1], tc[2]); err == nil {
			t.Errorf("HartreeFockState%v: no error", tc)
		}
	}
}

// TestAmplitudesRoundTrip checks that a written state reads back exactly
// and that the file lists only the non-zero amplitudes.
func TestAmplitudesRoundTrip(t *testing.T) {
	psi := randomState(3, 7)
	psi[2], psi[5] = 0, 0
	var buf bytes.Buffer
	if err := WriteAmplitudes(&buf, psi); err != nil {
		t.Fatal(err)
	}
	if lines := strings.Count(buf.String(), "\n"); lines != 2+6 {
		t.Errorf("%d lines, want 2 header lines and 6 amplitudes:\n%s", lines, buf.String())
	}
	got, err := ReadAmplitudes(&buf)
	if err != nil {
		t.Fatal(err)
	}
	for a := range psi {
		if got[a] != psi[a] {
			t.Fatalf("amplitude %d: %v, want %v", a, got[a], psi[a])
		}
	}
	path := filepath.Join(t.TempDir(), "state.txt")
	if err := WriteAmplitudesFile(path, psi); err != nil {
		t.Fatal(err)
	}
	if got, err = ReadAmplitudesFile(path); err != nil || len(got) != 8 {
		t.Fatal(len(got), err)
	}
}

// TestAmplitudesHandWritten reads a file written by hand: the Bell state
// (|00⟩ + |11⟩)/√2 unnormalised, with a comment and a blank line, and checks
// the simulator sees it: measuring ZZ always gives equal bits.
func TestAmplitudesHandWritten(t *testing.T) {
	in := "shotplan amplitudes 1\nqubits 2\n# Bell pair\n\n3 1 0\n0 1 0\n"
	psi, err := ReadAmplitudes(strings.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	sim, err := NewSimulator(psi, 3, nil)
	if err != nil {
		t.Fatal(err)
	}
	p := sim.Probabilities(nil, pauli.MustParseSetting("ZZ"))
	if math.Abs(p[0]-0.5) > 1e-15 || math.Abs(p[3]-0.5) > 1e-15 || p[1] != 0 || p[2] != 0 {
		t.Errorf("Bell state ZZ distribution %v, want [½ 0 0 ½]", p)
	}
}

// TestAmplitudesBadInput checks that each bad file is refused with an error
// wrapping ErrFormat that names the offending line.
func TestAmplitudesBadInput(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"", "empty input"},
		{"shotplan state 1\n", "line 1"},
		{"shotplan amplitudes 1\n", "qubits"},
		{"shotplan amplitudes 1\nqubits 0\n", "line 2"},
		{"shotplan amplitudes 1\nqubits 99\n", "line 2"},
		{"shotplan amplitudes 1\nqubits 2\n4 1 0\n", "line 3"},
		{"shotplan amplitudes 1\nqubits 2\n1 1\n", "line 3"},
		{"shotplan amplitudes 1\nqubits 2\n1 1 0\n\n1 0 1\n", "line 5"},
		{"shotplan amplitudes 1\nqubits 2\n1 NaN 0\n", "line 3"},
		{"shotplan amplitudes 1\nqubits 2\n1 1e999 0\n", "line 3"},
		{"shotplan amplitudes 1\nqubits 2\n-1 1 0\n", "line 3"},
		{"shotplan amplitudes 1\nqubits 2\n1 0 0\n", "zero"},
		{"shotplan amplitudes 1\nqubits 2\n", "zero"},
		{"shotplan amplitudes 1\nqubits 2\n1 1 0 " + strings.Repeat("9", 300) + "\n", "line 3"},
	} {
		_, err := ReadAmplitudes(strings.NewReader(tc.in))
		if err == nil || !errors.Is(err, ErrFormat) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%.50q: error %v, want ErrFormat naming %q", tc.in, err, tc.want)
		}
	}
	if err := WriteAmplitudes(&bytes.Buffer{}, make([]complex128, 3)); err == nil {
		t.Error("WriteAmplitudes of 3 amplitudes: no error")
	}
}

// FuzzReadAmplitudes checks that any input either reads as a state of 2^N
// finite amplitudes that writes and reads back exactly, or is refused with
// an error; the reader never panics.
func FuzzReadAmplitudes(f *testing.F) {
	f.Add("shotplan amplitudes 1\nqubits 2\n3 1 0\n0 1 0\n")
	f.Add("shotplan amplitudes 1\nqubits 1\n1 0 -2.5e-3\n")
	f.Add("shotplan amplitudes 1\nqubits 2\n1 1 0\n1 1 0\n")
	f.Fuzz(func(t *testing.T, in string) {
		psi, err := ReadAmplitudes(strings.NewReader(in))
		if err != nil {
			return
		}
		var buf bytes.Buffer
		if err := WriteAmplitudes(&buf, psi); err != nil {
			t.Fatal(err)
		}
		back, err := ReadAmplitudes(&buf)
		if err != nil || len(back) != len(psi) {
			t.Fatal(len(back), err)
		}
		for a := range psi {
			if back[a] != psi[a] {
				t.Fatalf("amplitude %d: %v, want %v", a, back[a], psi[a])
			}
		}
	})
}
