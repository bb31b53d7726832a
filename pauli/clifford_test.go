package pauli

import (
	"errors"
	"math/rand/v2"
	"testing"
)

func signed(s int, p String) string {
	if s < 0 {
		return "-" + p.String()
	}
	return "+" + p.String()
}

// The conjugation table of single gates on one- and two-qubit generators:
// common practice, Nielsen & Chuang §10.5.2 (Fig. 10.7 and the text around
// it) for H, S and CNOT; S† is the inverse of S; CZ from CZ = H(b) CNOT(a,b)
// H(b) (N&C §4.3). Each row is checked with the gate-by-gate rules
// (Circuit.Conjugate) and the tableau (Tableau.Conjugate).
func TestConjugateSingleGates(t *testing.T) {
	cases := []struct {
		gate   Gate
		in     string
		want   string
		wantSg int
	}{
		{Gate{Kind: GateH, Q0: 0}, "X", "Z", 1},
		{Gate{Kind: GateH, Q0: 0}, "Z", "X", 1},
		{Gate{Kind: GateH, Q0: 0}, "Y", "Y", -1},
		{Gate{Kind: GateH, Q0: 0}, "I", "I", 1},
		{Gate{Kind: GateS, Q0: 0}, "X", "Y", 1},
		{Gate{Kind: GateS, Q0: 0}, "Y", "X", -1},
		{Gate{Kind: GateS, Q0: 0}, "Z", "Z", 1},
		{Gate{Kind: GateSdg, Q0: 0}, "X", "Y", -1},
		{Gate{Kind: GateSdg, Q0: 0}, "Y", "X", 1},
		{Gate{Kind: GateSdg, Q0: 0}, "Z", "Z", 1},
		{Gate{Kind: GateCNOT, Q0: 0, Q1: 1}, "XI", "XX", 1},
		{Gate{Kind: GateCNOT, Q0: 0, Q1: 1}, "IX", "IX", 1},
		{Gate{Kind: GateCNOT, Q0: 0, Q1: 1}, "ZI", "ZI", 1},
		{Gate{Kind: GateCNOT, Q0: 0, Q1: 1}, "IZ", "ZZ", 1},
		{Gate{Kind: GateCNOT, Q0: 1, Q1: 0}, "IX", "XX", 1},
		{Gate{Kind: GateCNOT, Q0: 1, Q1: 0}, "ZI", "ZZ", 1},
		{Gate{Kind: GateCZ, Q0: 0, Q1: 1}, "XI", "XZ", 1},
		{Gate{Kind: GateCZ, Q0: 0, Q1: 1}, "IX", "ZX", 1},
		{Gate{Kind: GateCZ, Q0: 0, Q1: 1}, "ZI", "ZI", 1},
		{Gate{Kind: GateCZ, Q0: 0, Q1: 1}, "IZ", "IZ", 1},
		// Products of the rows above, worked out by hand from Y = iXZ:
		// CNOT (Y⊗I) CNOT = i(X⊗X)(Z⊗I) = i(XZ)⊗X = Y⊗X, and so on.
		{Gate{Kind: GateCNOT, Q0: 0, Q1: 1}, "YI", "YX", 1},
		{Gate{Kind: GateCNOT, Q0: 0, Q1: 1}, "XX", "XI", 1},
		{Gate{Kind: GateCZ, Q0: 0, Q1: 1}, "XX", "YY", 1},
	}
	for _, tc := range cases {
		p := MustParse(tc.in)
		c := NewCircuit(p.Qubits()).Append(tc.gate)
		for _, m := range []struct {
			name string
			f    func(String) (String, int)
		}{{"Circuit", c.Conjugate}, {"Tableau", c.toTableau().Conjugate}} {
			got, s := m.f(p)
			if got.String() != tc.want || s != tc.wantSg {
				t.Errorf("%s.Conjugate[%v](%s) = %s, want %s", m.name, tc.gate, tc.in, signed(s, got), signed(tc.wantSg, MustParse(tc.want)))
			}
		}
	}
}

// TestTwoQubitTableTextbook checks the matrix-derived two-qubit tables used
// by refConjugate against the generator table of N&C §10.5.2 (common
// practice).
func TestTwoQubitTableTextbook(t *testing.T) {
	cnot := refTwoQubit[GateCNOT]
	for _, tc := range []struct{ a, b, wa, wb Letter }{{X, I, X, X}, {I, X, I, X}, {Z, I, Z, I}, {I, Z, Z, Z}} {
		if e := cnot[tc.a][tc.b]; e.a != tc.wa || e.b != tc.wb || e.neg {
			t.Errorf("matrix CNOT table %v%v → %v%v (neg %v), want +%v%v", tc.a, tc.b, e.a, e.b, e.neg, tc.wa, tc.wb)
		}
	}
}

func TestConjugateAgainstReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, n := range []int{1, 2, 5, 63, 64, 65, 130} {
		for range 20 {
			c := randomCircuit(rng, n, 3*n+5)
			tab := c.toTableau()
			for range 10 {
				p := randomString(rng, n)
				want, ws := refConjugate(c, p)
				if got, s := c.Conjugate(p); !got.Equal(want) || s != ws {
					t.Fatalf("Circuit.Conjugate(%s) on %d qubits by %v = %s, want %s", p, n, c, signed(s, got), signed(ws, want))
				}
				if got, s := tab.Conjugate(p); !got.Equal(want) || s != ws {
					t.Fatalf("Tableau.Conjugate(%s) on %d qubits by %v = %s, want %s", p, n, c, signed(s, got), signed(ws, want))
				}
				// U† U P U† U = P.
				back, bs := c.inverse().Conjugate(want)
				if !back.Equal(p) || bs != ws {
					t.Fatalf("Inverse().Conjugate(%s) = %s, want %s", want, signed(bs, back), signed(ws, p))
				}
			}
		}
	}
}

// TestConjugateMatrix checks U P U† = s·P' with explicit matrices for random
// circuits on up to 5 qubits.
func TestConjugateMatrix(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	reps := 40
	if testing.Short() {
		reps = 8
	}
	for range reps {
		n := 1 + rng.IntN(5)
		c := randomCircuit(rng, n, 2+rng.IntN(12))
		u := circuitMatrix(c)
		for range 5 {
			p := randomString(rng, n)
			got, s := c.Conjugate(p)
			if !isSignedPauli(conjugateMatrix(u, p), got, s) {
				t.Fatalf("matrix of U·%s·U† for U = %v differs from Conjugate = %s", p, c, signed(s, got))
			}
		}
	}
}

// Textbook identities between circuits (common practice, N&C §4.2–4.3 and
// Exercise 4.13ff): equal Clifford maps up to a global phase.
func TestTableauIdentities(t *testing.T) {
	cases := []struct {
		name string
		a, b *Circuit
	}{
		{"S S† = 1", NewCircuit(1).S(0).Sdg(0), NewCircuit(1)},
		{"H H = 1", NewCircuit(1).H(0).H(0), NewCircuit(1)},
		{"S^4 = 1", NewCircuit(1).S(0).S(0).S(0).S(0), NewCircuit(1)},
		{"S^3 = S†", NewCircuit(1).S(0).S(0).S(0), NewCircuit(1).Sdg(0)},
		{"(HS)^3 = 1 up to phase", NewCircuit(1).S(0).H(0).S(0).H(0).S(0).H(0), NewCircuit(1)},
		{"CZ = H CNOT H", NewCircuit(2).CZ(0, 1), NewCircuit(2).H(1).CNOT(0, 1).H(1)},
		{"CZ symmetric", NewCircuit(2).CZ(0, 1), NewCircuit(2).CZ(1, 0)},
		{"CNOT reversed by H", NewCircuit(2).CNOT(1, 0), NewCircuit(2).H(0).H(1).CNOT(0, 1).H(0).H(1)},
		{"SWAP as three CNOTs", NewCircuit(3).CNOT(0, 2).CNOT(2, 0).CNOT(0, 2), NewCircuit(3).CNOT(2, 0).CNOT(0, 2).CNOT(2, 0)},
	}
	for _, tc := range cases {
		if !tc.a.toTableau().Equal(tc.b.toTableau()) {
			t.Errorf("%s: Tableau(%v) differs from Tableau(%v)", tc.name, tc.a, tc.b)
		}
	}
	if NewCircuit(1).S(0).toTableau().Equal(NewCircuit(1).Sdg(0).toTableau()) {
		t.Errorf("Tableau(S) equals Tableau(S†), want different")
	}
}

func TestTableauApplyAndImages(t *testing.T) {
	tab := newTableau(2)
	tab.Apply(Gate{Kind: GateH, Q0: 0})
	tab.Apply(Gate{Kind: GateCNOT, Q0: 0, Q1: 1})
	// U = CNOT·H: X0 → CNOT Z0 CNOT = ZI; Z0 → XX; Z1 → ZZ (N&C §10.5.2).
	for _, tc := range []struct {
		name string
		f    func(int) (String, int)
		q    int
		want string
	}{{"ImageX", tab.ImageX, 0, "ZI"}, {"ImageZ", tab.ImageZ, 0, "XX"}, {"ImageX", tab.ImageX, 1, "IX"}, {"ImageZ", tab.ImageZ, 1, "ZZ"}} {
		if p, s := tc.f(tc.q); p.String() != tc.want || s != 1 {
			t.Errorf("%s(%d) = %s, want +%s", tc.name, tc.q, signed(s, p), tc.want)
		}
	}
	c := tab.Clone()
	c.Apply(Gate{Kind: GateS, Q0: 1})
	if c.Equal(tab) || !tab.Equal(NewCircuit(2).H(0).CNOT(0, 1).toTableau()) {
		t.Errorf("Clone shares storage with the original")
	}
}

func TestCircuitCounts(t *testing.T) {
	cases := []struct {
		name              string
		c                 *Circuit
		gates, two, depth int
	}{
		{"empty", NewCircuit(3), 0, 0, 0},
		{"parallel H", NewCircuit(3).H(0).H(1).H(2), 3, 0, 1},
		{"chain", NewCircuit(2).H(0).CNOT(0, 1).H(1), 3, 1, 3},
		{"disjoint CNOTs", NewCircuit(4).CNOT(0, 1).CNOT(2, 3), 2, 2, 1},
		{"staircase", NewCircuit(4).CNOT(0, 1).CNOT(1, 2).CNOT(2, 3), 3, 3, 3},
		{"gate fills earlier layer", NewCircuit(3).CZ(0, 1).S(2).Sdg(2).H(0), 4, 1, 2},
	}
	for _, tc := range cases {
		if g := tc.c.Len(); g != tc.gates {
			t.Errorf("%s: Len() = %d, want %d", tc.name, g, tc.gates)
		}
		if g := tc.c.TwoQubitGates(); g != tc.two {
			t.Errorf("%s: TwoQubitGates() = %d, want %d", tc.name, g, tc.two)
		}
		if g := tc.c.Depth(); g != tc.depth {
			t.Errorf("%s: Depth() = %d, want %d", tc.name, g, tc.depth)
		}
	}
}

func TestCircuitTextRoundTrip(t *testing.T) {
	c := NewCircuit(70).H(0).S(69).Sdg(3).CNOT(64, 2).CZ(5, 6)
	const want = "H(0) S(69) Sdg(3) CNOT(64,2) CZ(5,6)"
	if got := c.String(); got != want {
		t.Fatalf("String() = %q, want %q", got, want)
	}
	back, err := ParseCircuit(70, "  "+want+"\t")
	if err != nil {
		t.Fatalf("ParseCircuit(%q) error %v", want, err)
	}
	if !back.Equal(c) {
		t.Errorf("ParseCircuit(String()) = %v, want %v", back, c)
	}
	if !back.Clone().Equal(c) || c.Equal(c.Clone().H(1)) || c.Equal(NewCircuit(71).H(0).S(69).Sdg(3).CNOT(64, 2).CZ(5, 6)) {
		t.Errorf("Equal/Clone disagree")
	}
	if e, err := ParseCircuit(2, ""); err != nil || e.Len() != 0 {
		t.Errorf("ParseCircuit(2, \"\") = %v, %v, want empty circuit", e, err)
	}
}

func TestParseCircuitErrors(t *testing.T) {
	cases := []struct {
		in     string
		offset int
		sent   error
	}{
		{"H(0) X(1)", 5, ErrSyntax},
		{"H(0", 0, ErrSyntax},
		{"H(3)", 2, ErrRange},
		{"CNOT(0,0)", 5, ErrSyntax},
		{"CNOT(0)", 5, ErrSyntax},
		{"H(0,1)", 2, ErrSyntax},
		{"CZ(1,x)", 5, ErrSyntax},
		{"H(-1)", 2, ErrSyntax},
		{"H(0)S(1)", 4, ErrSyntax},
		{"H 0", 0, ErrSyntax},
	}
	for _, tc := range cases {
		_, err := ParseCircuit(3, tc.in)
		var pe *ParseError
		if !errors.As(err, &pe) || pe.Offset != tc.offset || !errors.Is(err, tc.sent) {
			t.Errorf("ParseCircuit(3, %q) error = %v, want offset %d wrapping %v", tc.in, err, tc.offset, tc.sent)
		}
	}
}

func TestCircuitPanics(t *testing.T) {
	cases := []struct {
		name string
		f    func()
	}{
		{"qubit out of range", func() { NewCircuit(2).H(2) }},
		{"negative qubit", func() { NewCircuit(2).S(-1) }},
		{"CNOT on one qubit", func() { NewCircuit(2).CNOT(1, 1) }},
		{"CZ target out of range", func() { NewCircuit(2).CZ(0, 5) }},
		{"invalid kind", func() { NewCircuit(2).Append(Gate{}) }},
		{"width mismatch", func() { NewCircuit(2).Conjugate(MustParse("XYZ")) }},
		{"tableau gate out of range", func() { newTableau(1).Apply(Gate{Kind: GateH, Q0: 1}) }},
	}
	for _, tc := range cases {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", tc.name)
				}
			}()
			tc.f()
		}()
	}
}

func TestInverseGates(t *testing.T) {
	c := NewCircuit(3).H(0).S(1).CNOT(0, 2).Sdg(2).CZ(1, 2)
	const want = "CZ(1,2) S(2) CNOT(0,2) Sdg(1) H(0)"
	if got := c.inverse().String(); got != want {
		t.Errorf("Inverse() = %q, want %q", got, want)
	}
	// U U† is the identity map.
	both := c.Clone().Append(c.inverse().Gates()...)
	if !both.toTableau().Equal(newTableau(3)) {
		t.Errorf("Tableau(U U†) is not the identity for U = %v", c)
	}
}

func FuzzConjugate(f *testing.F) {
	f.Add([]byte{3, 1, 0, 4, 1, 2, 5, 0, 2}, []byte{1, 2, 3})
	f.Add([]byte{66, 4, 0, 65, 5, 64, 1, 2, 63}, []byte{3, 3, 1, 2, 0, 1})
	f.Add([]byte{1}, []byte{})
	f.Fuzz(func(t *testing.T, circ, str []byte) {
		if len(circ) == 0 {
			return
		}
		n := 1 + int(circ[0])%70
		c := NewCircuit(n)
		for i := 1; i+2 < len(circ); i += 3 {
			k := GateKind(1 + circ[i]%5)
			g := Gate{Kind: k, Q0: int(circ[i+1]) % n}
			if k.TwoQubit() {
				if n < 2 {
					continue
				}
				g.Q1 = int(circ[i+2]) % n
				if g.Q1 == g.Q0 {
					g.Q1 = (g.Q0 + 1) % n
				}
			}
			c.Append(g)
		}
		ls := make([]Letter, n)
		for q := range ls {
			if q < len(str) {
				ls[q] = Letter(str[q] % 4)
			}
		}
		p := FromLetters(ls)
		want, ws := refConjugate(c, p)
		if got, s := c.Conjugate(p); !got.Equal(want) || s != ws {
			t.Fatalf("Circuit.Conjugate(%s) by %v = %s, want %s", p, c, signed(s, got), signed(ws, want))
		}
		if got, s := c.toTableau().Conjugate(p); !got.Equal(want) || s != ws {
			t.Fatalf("Tableau.Conjugate(%s) by %v = %s, want %s", p, c, signed(s, got), signed(ws, want))
		}
	})
}

// Gates returns a slice without spare capacity, so appending to it cannot
// write into the circuit.
func TestCircuitGatesAliasing(t *testing.T) {
	c := NewCircuit(2).H(0).S(1).CZ(0, 1)
	c.gates = c.gates[:2] // leave spare capacity behind the visible gates
	gs := c.Gates()
	_ = append(gs, Gate{Kind: GateH, Q0: 1})
	if got := c.gates[:3][2]; got != (Gate{Kind: GateCZ, Q0: 0, Q1: 1}) {
		t.Errorf("append to Gates() overwrote the circuit's storage: %v", got)
	}
}
