package molecule

import (
	"encoding/json"
	"fmt"
	"maps"
	"math"
	"math/bits"
	"os"
	"path/filepath"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
)

var encodings = []fermion.Encoding{fermion.JordanWigner, fermion.BravyiKitaev, fermion.Parity}

// reference holds an entry of testdata/energies.json or
// testdata/energies_beh2_nh3.json: RHF and full-CI energies computed outside
// this project with Debian's psi4 1.3.2 (see testdata/README.md, copied from
// the shared data folder's README, and testdata/closed_shell/README.md).
type reference struct {
	EHF   float64 `json:"E_HF"`
	EFCI  float64 `json:"E_FCI"`
	ENuc  float64 `json:"E_nuc"`
	NOrb  int     `json:"norb"`
	NElec int     `json:"nelec"`
}

var molecules = []string{"h2_sto3g_1.4bohr", "h2_sto3g_0.7414A", "h2_sto3g_0.74A", "lih_sto3g_1.5949A", "h2o_sto3g", "beh2_sto3g_1.326A", "nh3_sto3g"}

func loadReferences(t testing.TB) map[string]reference {
	t.Helper()
	raw := map[string]json.RawMessage{}
	for _, file := range []string{"energies.json", "energies_beh2_nh3.json"} {
		data, err := os.ReadFile(filepath.Join("testdata", file))
		if err != nil {
			t.Fatal(err)
		}
		var m map[string]json.RawMessage
		if err := json.Unmarshal(data, &m); err != nil {
			t.Fatalf("%s: %v", file, err)
		}
		maps.Copy(raw, m)
	}
	refs := map[string]reference{}
	for _, name := range molecules {
		var r reference
		if err := json.Unmarshal(raw[name], &r); err != nil {
			t.Fatalf("reference energies of %s: %v", name, err)
		}
		refs[name] = r
	}
	return refs
}

func readMolecule(t testing.TB, name string) *Integrals {
	t.Helper()
	g, err := ReadFCIDUMPFile(filepath.Join("testdata", name+".fcidump"))
	if err != nil {
		t.Fatal(err)
	}
	return g
}

// TestH2QubitHamiltonians compares the mapped H2 Hamiltonians with the
// 15-term Jordan–Wigner, Bravyi–Kitaev and parity forms in
// testdata/h2_qubit_hamiltonians.json (computed outside this project by an
// independent script; the 0.74 Å Jordan–Wigner coefficients agree with
// widely published ones), to 1e-9. The file's convention is ours: qubit q is
// character q, spin orbitals interleaved α, β.
func TestH2QubitHamiltonians(t *testing.T) {
	data, err := os.ReadFile(filepath.Join("testdata", "h2_qubit_hamiltonians.json"))
	if err != nil {
		t.Fatal(err)
	}
	var file map[string]json.RawMessage
	if err := json.Unmarshal(data, &file); err != nil {
		t.Fatal(err)
	}
	const tol = 1e-9
	for _, name := range molecules[:3] {
		var forms map[string]json.RawMessage
		if err := json.Unmarshal(file[name], &forms); err != nil {
			t.Fatal(err)
		}
		g := readMolecule(t, name)
		for _, enc := range encodings {
			var want map[string]float64
			if err := json.Unmarshal(forms[enc.String()], &want); err != nil {
				t.Fatalf("%s %s: %v", name, enc, err)
			}
			if len(want) != 15 {
				t.Fatalf("%s %s: reference has %d terms, want 15", name, enc, len(want))
			}
			h, err := g.QubitHamiltonian(enc)
			if err != nil {
				t.Fatal(err)
			}
			got := map[string]float64{"IIII": h.Offset()}
			for _, term := range h.Terms() {
				got[term.Pauli.String()] = term.Coeff
			}
			for p, w := range want {
				if math.Abs(got[p]-w) > tol {
					t.Errorf("%s %s: coefficient of %s = %.12f, want %.12f (±%g)", name, enc, p, got[p], w, tol)
				}
			}
			for p, c := range got {
				if _, ok := want[p]; !ok && math.Abs(c) > tol {
					t.Errorf("%s %s: extra term %.12f %s", name, enc, c, p)
				}
			}
		}
	}
}

// bkMatrix returns the Bravyi–Kitaev matrix β_n, n a power of two, by the
// recursion of Seeley, Richard & Love, arXiv:1208.5986, eq. 23:
// β_1 = [1], β_2m = [[β_m, 0], [A_m, β_m]] with A_m zero except an all-ones
// last row.
func bkMatrix(n int) [][]bool {
	if n == 1 {
		return [][]bool{{true}}
	}
	m := n / 2
	b := bkMatrix(m)
	out := make([][]bool, n)
	for k := range n {
		out[k] = make([]bool, n)
	}
	for k := range m {
		for l := range m {
			out[k][l] = b[k][l]
			out[m+k][m+l] = b[k][l]
		}
		out[n-1][k] = true
	}
	return out
}

// encodeOccupations returns the qubit basis state b = β f of occupations f
// under enc, from the definitions in the same paper: JW b = f, parity
// b_k = f_0 ⊕ ⋯ ⊕ f_k, BK the leading n×n block of β for the next power of
// two.
func encodeOccupations(enc fermion.Encoding, n int, f uint64) uint64 {
	size := 1
	for size < n {
		size *= 2
	}
	beta := bkMatrix(size)
	var b uint64
	for k := range n {
		par := uint64(0)
		for l := range n {
			in := false
			switch enc {
			case fermion.JordanWigner:
				in = k == l
			case fermion.Parity:
				in = l <= k
			case fermion.BravyiKitaev:
				in = beta[k][l]
			}
			if in {
				par ^= f >> l & 1
			}
		}
		b |= par << k
	}
	return b
}

// diagonal returns ⟨b|H|b⟩ for a basis state b of at most 64 qubits: only
// strings without X or Y contribute, each (−1)^{|z∧b|} times its coefficient.
func diagonal(h *hamiltonian.Hamiltonian, b uint64) float64 {
	e := h.Offset()
	for _, term := range h.Terms() {
		x, z := term.Pauli.Words()
		if x[0] != 0 {
			continue
		}
		if bits.OnesCount64(z[0]&b)%2 == 1 {
			e -= term.Coeff
		} else {
			e += term.Coeff
		}
	}
	return e
}

// TestHartreeFockEnergies checks every file and every encoding against the
// RHF energies of testdata/energies.json and energies_beh2_nh3.json (psi4
// 1.3.2, SCF converged to 1e-12 hartree, computed outside this project), to
// 1e-8 hartree: once from the integrals by the closed-shell
// formula, once as the diagonal element of the qubit Hamiltonian on the
// Hartree–Fock determinant (lowest NELEC spin orbitals occupied, interleaved
// α, β) encoded as b = β f.
func TestHartreeFockEnergies(t *testing.T) {
	const tol = 1e-8
	refs := loadReferences(t)
	for _, name := range molecules {
		ref := refs[name]
		g := readMolecule(t, name)
		if g.Orbitals() != ref.NOrb || g.Electrons != ref.NElec {
			t.Fatalf("%s: read NORB=%d NELEC=%d, want %d, %d", name, g.Orbitals(), g.Electrons, ref.NOrb, ref.NElec)
		}
		if math.Abs(g.Core()-ref.ENuc) > 1e-9 {
			t.Errorf("%s: constant = %.10f, want nuclear repulsion %.10f", name, g.Core(), ref.ENuc)
		}
		ehf, err := g.HartreeFock()
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(ehf-ref.EHF) > tol {
			t.Errorf("%s: HartreeFock() = %.10f, want %.10f (±%g)", name, ehf, ref.EHF, tol)
		}
		n := 2 * g.Orbitals()
		occ := uint64(1)<<g.Electrons - 1
		for _, enc := range encodings {
			h, err := g.QubitHamiltonian(enc)
			if err != nil {
				t.Fatal(err)
			}
			if h.Qubits() != n {
				t.Fatalf("%s %s: %d qubits, want %d", name, enc, h.Qubits(), n)
			}
			if e := diagonal(h, encodeOccupations(enc, n, occ)); math.Abs(e-ref.EHF) > tol {
				t.Errorf("%s %s: ⟨HF|H|HF⟩ = %.10f, want %.10f (±%g)", name, enc, e, ref.EHF, tol)
			}
		}
	}
}

// TestSzaboOstlundH2 checks the H2 integrals at R = 1.4 bohr against the
// values printed in Szabo & Ostlund, Modern Quantum Chemistry, ch. 3
// (quoted from memory in the shared data README), to their 4 decimals.
// Off-diagonal integrals are compared in magnitude: orbital signs are
// arbitrary.
func TestSzaboOstlundH2(t *testing.T) {
	g := readMolecule(t, "h2_sto3g_1.4bohr")
	tests := []struct {
		name string
		got  float64
		want float64
	}{
		{"h11", g.One(0, 0), -1.2528},
		{"h22", g.One(1, 1), -0.4756},
		{"(11|11)", g.Two(0, 0, 0, 0), 0.6746},
		{"(11|22)", g.Two(0, 0, 1, 1), 0.6636},
		{"(22|11)", g.Two(1, 1, 0, 0), 0.6636},
		{"(22|22)", g.Two(1, 1, 1, 1), 0.6975},
		{"|(12|12)|", math.Abs(g.Two(0, 1, 0, 1)), 0.1813},
		{"|(21|12)|", math.Abs(g.Two(1, 0, 0, 1)), 0.1813},
	}
	for _, tc := range tests {
		if math.Abs(tc.got-tc.want) > 5e-5 {
			t.Errorf("H2 1.4 bohr %s = %.6f, want %.4f (Szabo & Ostlund)", tc.name, tc.got, tc.want)
		}
	}
}

func ExampleIntegrals_QubitHamiltonian() {
	g, err := ReadFCIDUMPFile("testdata/h2_sto3g_0.74A.fcidump")
	if err != nil {
		fmt.Println(err)
		return
	}
	h, err := g.QubitHamiltonian(fermion.BravyiKitaev)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d qubits, %d terms, offset %.6f\n", h.Qubits(), h.Len(), h.Offset())
	// Output:
	// 4 qubits, 14 terms, offset -0.097066
}
