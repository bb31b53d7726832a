package hamiltonian

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

func bondList(l Graph) string {
	var b strings.Builder
	for _, bd := range l.Bonds {
		fmt.Fprintf(&b, "%d-%d ", bd.I, bd.J)
	}
	return strings.TrimSpace(b.String())
}

func TestGraphBuilders(t *testing.T) {
	for _, tc := range []struct {
		name  string
		l     Graph
		sites int
		bonds string
	}{
		{"open chain", Line(4), 4, "0-1 1-2 2-3"},
		{"ring", Ring(4), 4, "0-1 1-2 2-3 3-0"},
		{"ring of two has one bond", Ring(2), 2, "0-1"},
		{"single site", Ring(1), 1, ""},
		{"open 2×3", Sheet(2, 3), 6, "0-1 0-3 1-2 1-4 2-5 3-4 4-5"},
		{"torus 3×3", Torus(3, 3), 9, "0-1 0-3 1-2 1-4 2-0 2-5 3-4 3-6 4-5 4-7 5-3 5-8 6-7 6-0 7-8 7-1 8-6 8-2"},
		{"periodic 1×4 is a ring", Torus(1, 4), 4, "0-1 1-2 2-3 3-0"},
		{"periodic 2×3 wraps only rows of 3", Torus(2, 3), 6, "0-1 0-3 1-2 1-4 2-0 2-5 3-4 4-5 5-3"},
	} {
		if tc.l.Sites != tc.sites || bondList(tc.l) != tc.bonds {
			t.Errorf("%s: %d sites, bonds %q; want %d, %q", tc.name, tc.l.Sites, bondList(tc.l), tc.sites, tc.bonds)
		}
		if err := tc.l.Validate(); err != nil {
			t.Errorf("%s: Validate: %v", tc.name, err)
		}
	}
	for _, tc := range []struct {
		name string
		l    Graph
	}{
		{"negative chain", Line(-1)},
		{"negative rectangle", Sheet(-1, 2)},
		{"site out of range", Graph{Sites: 2, Bonds: []Bond{{0, 2, 1}}}},
		{"self bond", Graph{Sites: 2, Bonds: []Bond{{1, 1, 1}}}},
		{"NaN weight", Graph{Sites: 2, Bonds: []Bond{{0, 1, math.NaN()}}}},
	} {
		if tc.l.Validate() == nil {
			t.Errorf("%s: Validate accepted %+v", tc.name, tc.l)
		}
		if _, err := Heisenberg(tc.l, 1); err == nil {
			t.Errorf("%s: Heisenberg accepted %+v", tc.name, tc.l)
		}
	}
}

func termText(h *Hamiltonian) string {
	var b strings.Builder
	for _, tm := range h.Terms() {
		fmt.Fprintf(&b, "%g %s; ", tm.Coeff, tm.Pauli)
	}
	return strings.TrimSuffix(b.String(), "; ")
}

func TestModelTerms(t *testing.T) {
	chain := Line(3)
	weighted := Line(3)
	weighted.Bonds[1].Weight = 0.5
	for _, tc := range []struct {
		name  string
		build func() (*Hamiltonian, error)
		want  string
	}{
		{"TFIM −J ZZ − h X", func() (*Hamiltonian, error) { return TransverseFieldIsing(chain, 2, 0.5) },
			"-2 ZZI; -2 IZZ; -0.5 XII; -0.5 IXI; -0.5 IIX"},
		{"TFIM per-bond weight", func() (*Hamiltonian, error) { return TransverseFieldIsing(weighted, 1, 0) },
			"-1 ZZI; -0.5 IZZ"},
		{"Ising per-site fields", func() (*Hamiltonian, error) { return Ising(chain, 1, []float64{1, 0, 2}, []float64{0, 0.25, 0}) },
			"-1 ZZI; -1 IZZ; -1 XII; -2 IIX; -0.25 IZI"},
		{"XXZ with field", func() (*Hamiltonian, error) { return XXZ(Line(2), 1, 0.5, 0.1) },
			"1 XX; 1 YY; 0.5 ZZ; -0.1 ZI; -0.1 IZ"},
		{"XXZ per-site fields", func() (*Hamiltonian, error) { return XXZFields(Line(2), 1, 2, []float64{0, 3}) },
			"1 XX; 1 YY; 2 ZZ; -3 IZ"},
		{"Heisenberg J(XX+YY+ZZ)", func() (*Hamiltonian, error) { return Heisenberg(weighted, 1) },
			"1 XXI; 1 YYI; 1 ZZI; 0.5 IXX; 0.5 IYY; 0.5 IZZ"},
	} {
		h, err := tc.build()
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if got := termText(h); got != tc.want {
			t.Errorf("%s: terms %q, want %q", tc.name, got, tc.want)
		}
	}
	for _, tc := range []struct {
		name  string
		build func() (*Hamiltonian, error)
	}{
		{"field length", func() (*Hamiltonian, error) { return Ising(chain, 1, []float64{1}, nil) }},
		{"NaN field", func() (*Hamiltonian, error) { return XXZFields(chain, 1, 1, []float64{0, math.NaN(), 0}) }},
		{"infinite coupling", func() (*Hamiltonian, error) { return TransverseFieldIsing(chain, math.Inf(1), 1) }},
		{"NaN transverse field", func() (*Hamiltonian, error) { return TransverseFieldIsing(chain, 1, math.NaN()) }},
	} {
		if _, err := tc.build(); err == nil {
			t.Errorf("%s: no error", tc.name)
		}
	}
}

func TestModelGroundEnergies(t *testing.T) {
	// Tolerance 1e-9 throughout.
	for _, tc := range []struct {
		name  string
		build func() (*Hamiltonian, error)
		want  float64
		src   string
	}{
		{"two-site Heisenberg singlet", func() (*Hamiltonian, error) { return Heisenberg(Line(2), 1) }, -3,
			"singlet: S·S = −3/4, and XX+YY+ZZ = 4 S·S (common practice)"},
		{"2×2 open square is the 4-ring", func() (*Hamiltonian, error) { return Heisenberg(Sheet(2, 2), 1) }, -8,
			"testdata/REFERENCE_VALUES.md, Heisenberg ring \"N = 4: −8 exactly\""},
		{"XXZ at Jz = Jxy is Heisenberg", func() (*Hamiltonian, error) { return XXZ(Ring(6), 1, 1, 0) }, -2 * (2 + math.Sqrt(13)),
			"testdata/REFERENCE_VALUES.md, Heisenberg ring \"N = 6: −2(2 + √13)\""},
		{"single-site field", func() (*Hamiltonian, error) { return TransverseFieldIsing(Line(1), 1, 0.75) }, -0.75,
			"−h X has eigenvalues ∓h (common practice)"},
		{"TFIM 1×6 rectangle ring", func() (*Hamiltonian, error) { return TransverseFieldIsing(Torus(1, 6), 1, 2) }, -12.769389127207,
			"testdata/REFERENCE_VALUES.md, TFIM table \"| 6 | … | −12.769389127207 |\""},
	} {
		h, err := tc.build()
		if err != nil {
			t.Fatal(err)
		}
		if got := groundEnergy(t, h); math.Abs(got-tc.want) > 1e-9 {
			t.Errorf("%s: ground energy %.12f, want %.12f (%s)", tc.name, got, tc.want, tc.src)
		}
	}
}

func TestRandomLocal(t *testing.T) {
	a, err := RandomLocal(30, 500, 4, 7)
	if err != nil {
		t.Fatal(err)
	}
	if a.Len() != 500 || a.Qubits() != 30 || a.Offset() != 0 {
		t.Fatalf("RandomLocal(30, 500, 4) has %d terms on %d qubits", a.Len(), a.Qubits())
	}
	weights := map[int]int{}
	for _, tm := range a.Terms() {
		w := tm.Pauli.Weight()
		weights[w]++
		if w < 1 || w > 4 || tm.Coeff < -1 || tm.Coeff >= 1 || tm.Coeff == 0 {
			t.Fatalf("term %v %s outside the documented range", tm.Coeff, tm.Pauli)
		}
	}
	// Every weight 1..4 appears (each has probability 1/4 per draw; with 500
	// terms a missing weight has probability below 1e-50).
	if len(weights) != 4 {
		t.Errorf("weights drawn: %v, want all of 1..4", weights)
	}
	b, _ := RandomLocal(30, 500, 4, 7)
	c, _ := RandomLocal(30, 500, 4, 8)
	if !a.Equal(b) {
		t.Error("same seed gave different Hamiltonians")
	}
	if a.Equal(c) {
		t.Error("different seeds gave the same Hamiltonian")
	}
	// All 3·2 weight-1 strings on 2 qubits plus 9 of weight 2: 15 in total.
	full, err := RandomLocal(2, 15, 2, 1)
	if err != nil || full.Len() != 15 {
		t.Errorf("RandomLocal(2, 15, 2) = %v, %v; want all 15 strings", full, err)
	}
	for _, tc := range []struct{ n, terms, k int }{{2, 16, 2}, {3, 1, 0}, {3, 1, 4}, {-1, 1, 1}, {3, -1, 1}} {
		if _, err := RandomLocal(tc.n, tc.terms, tc.k, 1); err == nil {
			t.Errorf("RandomLocal(%d, %d, %d) succeeded", tc.n, tc.terms, tc.k)
		}
	}
}
