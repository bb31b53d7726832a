package fermion

import (
	"fmt"
	"slices"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// sparse parses a sparse Pauli string on n qubits for test tables.
func sparse(t *testing.T, s string, n int) pauli.String {
	t.Helper()
	p, err := pauli.ParseSparse(s, n)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

type wantTerm struct {
	pauli string // sparse form
	coeff complex128
}

// equalSums reports whether got equals want as sets of terms, comparing
// coefficients exactly (every value in these tables is ±½ or ±i/2, exact in
// binary floating point).
func equalSums(t *testing.T, n int, got []PauliTerm, want []wantTerm) bool {
	t.Helper()
	if len(got) != len(want) {
		return false
	}
	for _, w := range want {
		p := sparse(t, w.pauli, n)
		i := slices.IndexFunc(got, func(g PauliTerm) bool { return g.Pauli.Equal(p) })
		if i < 0 || got[i].Coeff != w.coeff {
			return false
		}
	}
	return true
}

func format(ts []PauliTerm) string {
	var b strings.Builder
	for i, t := range ts {
		if i > 0 {
			b.WriteString(" + ")
		}
		fmt.Fprintf(&b, "%v %s", t.Coeff, t.Pauli.Sparse())
	}
	return b.String()
}

const h, ih = 0.5, 0.5i

// TestLadderReference checks the n = 4 creation operators of
// REFERENCE_VALUES.md exactly. Source: Seeley, Richard & Love,
// arXiv:1208.5986, §IV, as written in REFERENCE_VALUES.md:
//
//	a_0† = ½ X_1 X_3 (X_0 − iY0); a_1† = ½ X_3 (Z_0 X_1 − iY1);
//	a_2† = ½ Z_1 X_3 (X_2 − iY2); a_3† = ½ (Z_1 Z_2 X_3 − iY3)       (Bravyi–Kitaev)
//	a_j† = ½ X_{j+1} ⋯ X_{n−1} (Z_{j−1} X_j − iY_j), Z_{−1} = I  (parity)
//	a_j† = Z_0 ⋯ Z_{j−1} (X_j − iY_j)/2                         (Jordan–Wigner)
func TestLadderReference(t *testing.T) {
	tests := []struct {
		enc  Encoding
		mode int
		want []wantTerm
	}{
		{BravyiKitaev, 0, []wantTerm{{"X_0 X_1 X_3", h}, {"Y_0 X_1 X_3", -ih}}},
		{BravyiKitaev, 1, []wantTerm{{"Z_0 X_1 X_3", h}, {"Y_1 X_3", -ih}}},
		{BravyiKitaev, 2, []wantTerm{{"Z_1 X_2 X_3", h}, {"Z_1 Y_2 X_3", -ih}}},
		{BravyiKitaev, 3, []wantTerm{{"Z_1 Z_2 X_3", h}, {"Y_3", -ih}}},
		{Parity, 0, []wantTerm{{"X_0 X_1 X_2 X_3", h}, {"Y_0 X_1 X_2 X_3", -ih}}},
		{Parity, 1, []wantTerm{{"Z_0 X_1 X_2 X_3", h}, {"Y_1 X_2 X_3", -ih}}},
		{Parity, 2, []wantTerm{{"Z_1 X_2 X_3", h}, {"Y_2 X_3", -ih}}},
		{Parity, 3, []wantTerm{{"Z_2 X_3", h}, {"Y_3", -ih}}},
		{JordanWigner, 0, []wantTerm{{"X_0", h}, {"Y_0", -ih}}},
		{JordanWigner, 2, []wantTerm{{"Z_0 Z_1 X_2", h}, {"Z_0 Z_1 Y_2", -ih}}},
		{JordanWigner, 3, []wantTerm{{"Z_0 Z_1 Z_2 X_3", h}, {"Z_0 Z_1 Z_2 Y_3", -ih}}},
	}
	for _, tc := range tests {
		t.Run(fmt.Sprintf("%s/a%d†", tc.enc, tc.mode), func(t *testing.T) {
			l := tc.enc.Ladder(4, Create(tc.mode))
			if !equalSums(t, 4, l[:], tc.want) {
				t.Errorf("%s.Ladder(4, a%d†) = %s, want %v", tc.enc, tc.mode, format(l[:]), tc.want)
			}
			// The annihilator is the adjoint: the same strings, conjugate weights.
			a := tc.enc.Ladder(4, Annihilate(tc.mode))
			for i := range a {
				if !a[i].Pauli.Equal(l[i].Pauli) || a[i].Coeff != complex(real(l[i].Coeff), -imag(l[i].Coeff)) {
					t.Errorf("%s.Ladder(4, a%d) = %s, want the adjoint of %s", tc.enc, tc.mode, format(a[:]), format(l[:]))
				}
			}
		})
	}
}

// TestNumberReference checks n_j = a_j† a_j on 4 modes exactly. Source:
// REFERENCE_VALUES.md (Seeley, Richard & Love, arXiv:1208.5986):
// Jordan–Wigner n_j = ½(I − Z_j); Bravyi–Kitaev n_j = ½(I − Z_j Z_F(j)) with
// n_3 = ½(I − Z_1 Z_2 Z_3), F(0) = F(2) = ∅, F(1) = {0}, F(3) = {1, 2};
// parity n_j = ½(I − Z_{j−1} Z_j).
func TestNumberReference(t *testing.T) {
	tests := []struct {
		enc  Encoding
		mode int
		want []wantTerm
	}{
		{JordanWigner, 0, []wantTerm{{"I", h}, {"Z_0", -h}}},
		{JordanWigner, 3, []wantTerm{{"I", h}, {"Z_3", -h}}},
		{BravyiKitaev, 0, []wantTerm{{"I", h}, {"Z_0", -h}}},
		{BravyiKitaev, 1, []wantTerm{{"I", h}, {"Z_0 Z_1", -h}}},
		{BravyiKitaev, 2, []wantTerm{{"I", h}, {"Z_2", -h}}},
		{BravyiKitaev, 3, []wantTerm{{"I", h}, {"Z_1 Z_2 Z_3", -h}}},
		{Parity, 0, []wantTerm{{"I", h}, {"Z_0", -h}}},
		{Parity, 1, []wantTerm{{"I", h}, {"Z_0 Z_1", -h}}},
		{Parity, 2, []wantTerm{{"I", h}, {"Z_1 Z_2", -h}}},
		{Parity, 3, []wantTerm{{"I", h}, {"Z_2 Z_3", -h}}},
	}
	for _, tc := range tests {
		o := NewOperator(4)
		o.Add(1, Create(tc.mode), Annihilate(tc.mode))
		got := o.QubitOperator(tc.enc)
		if !equalSums(t, 4, got, tc.want) {
			t.Errorf("%s image of n%d = %s, want %v", tc.enc, tc.mode, format(got), tc.want)
		}
	}
}

// TestHoppingJordanWigner checks a_0† a_3 + a_3† a_0 = ½(XZZX + YZZY) on 4
// qubits. Source: REFERENCE_VALUES.md, Jordan–Wigner (Seeley, Richard & Love,
// arXiv:1208.5986, §III).
func TestHoppingJordanWigner(t *testing.T) {
	o := NewOperator(4)
	o.Add(1, Create(0), Annihilate(3))
	o.Add(1, Create(3), Annihilate(0))
	h, err := o.QubitHamiltonian(JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]float64{"XZZX": 0.5, "YZZY": 0.5}
	if h.Len() != len(want) || h.Offset() != 0 {
		t.Fatalf("JW image of a0†a3 + h.c. has %d terms, offset %v; want %v", h.Len(), h.Offset(), want)
	}
	for _, term := range h.Terms() {
		if want[term.Pauli.String()] != term.Coeff {
			t.Errorf("JW image of a0†a3 + h.c.: %v %s, want %v", term.Coeff, term.Pauli, want)
		}
	}
}

// bkRows is the Bravyi–Kitaev matrix β for n = 8, rows = qubits, index 0
// first. Source: REFERENCE_VALUES.md (Seeley, Richard & Love,
// arXiv:1208.5986, eq. for β_8); for n < 8 take the leading n×n block.
var bkRows = []string{"10000000", "11000000", "00100000", "11110000", "00001000", "00001100", "00000010", "11111111"}

// betaOf returns β[k][l] for the encoding, built independently of the
// package from its definition: JW stores f, parity stores prefix parities,
// BK is read from bkRows.
func betaOf(enc Encoding, k, l int) bool {
	switch enc {
	case JordanWigner:
		return k == l
	case Parity:
		return l <= k
	}
	return bkRows[k][l] == '1'
}

// TestLadderDefinition compares each encoded a_j† with its definition on
// basis states, for every n ≤ 8 (so BK is checked at sizes that are not
// powers of two): a_j† |f⟩ = (−1)^{f_0+⋯+f_{j−1}} |f + e_j⟩ if f_j = 0, else 0,
// with the qubits holding b = β f mod 2 (Seeley, Richard & Love,
// arXiv:1208.5986, §II–IV). A Pauli string acts on a basis state as
// P|b⟩ = i^{|x∧z|} (−1)^{|z∧b|} |b ⊕ x⟩ (MATH.md §7).
func TestLadderDefinition(t *testing.T) {
	for _, enc := range []Encoding{JordanWigner, Parity, BravyiKitaev} {
		for n := 1; n <= 8; n++ {
			encode := func(f uint) uint {
				var b uint
				for k := range n {
					par := 0
					for l := range n {
						if betaOf(enc, k, l) && f>>l&1 == 1 {
							par ^= 1
						}
					}
					b |= uint(par) << k
				}
				return b
			}
			for j := range n {
				l := enc.Ladder(n, Create(j))
				for f := uint(0); f < 1<<n; f++ {
					b := encode(f)
					// Image of |b⟩ under the Pauli sum.
					got := map[uint]complex128{}
					for _, term := range l {
						x, z := term.Pauli.Words()
						xb, zb := uint(x[0]), uint(z[0])
						ph := complex(1, 0)
						for range popcount(xb & zb) {
							ph *= 1i
						}
						if popcount(zb&b)%2 == 1 {
							ph = -ph
						}
						got[b^xb] += term.Coeff * ph
					}
					want := map[uint]complex128{}
					if f>>j&1 == 0 {
						sign := complex(1, 0)
						if popcount(f&(1<<j-1))%2 == 1 {
							sign = -1
						}
						want[encode(f|1<<j)] = sign
					}
					for s, c := range got {
						if c != want[s] {
							t.Fatalf("%s n=%d: ⟨%0*b|a%d†|f=%0*b⟩ = %v, want %v", enc, n, n, s, j, n, f, c, want[s])
						}
					}
					for s, c := range want {
						if got[s] != c {
							t.Fatalf("%s n=%d: ⟨%0*b|a%d†|f=%0*b⟩ = %v, want %v", enc, n, n, s, j, n, f, got[s], c)
						}
					}
				}
			}
		}
	}
}

func popcount(v uint) int {
	c := 0
	for ; v != 0; v &= v - 1 {
		c++
	}
	return c
}

// TestQubitHamiltonianUndefinedEncoding checks the package documentation's
// promise that mapping to a qubit Hamiltonian returns an error, not a panic,
// for an encoding outside the defined constants.
func TestQubitHamiltonianUndefinedEncoding(t *testing.T) {
	o := NewOperator(2)
	o.Add(1, Create(0), Annihilate(0))
	for _, e := range []Encoding{-1, Parity + 1, 99} {
		func() {
			defer func() {
				if r := recover(); r != nil {
					t.Errorf("QubitHamiltonian(%v) panicked: %v", e, r)
				}
			}()
			if h, err := o.QubitHamiltonian(e); err == nil || !strings.Contains(err.Error(), "undefined encoding") {
				t.Errorf("QubitHamiltonian(%v) = %v, %v; want an undefined-encoding error", e, h, err)
			}
		}()
	}
}

func TestParseEncoding(t *testing.T) {
	tests := []struct {
		in   string
		want Encoding
		ok   bool
	}{
		{"jw", JordanWigner, true},
		{"Jordan-Wigner", JordanWigner, true},
		{"BK", BravyiKitaev, true},
		{"bravyi-kitaev", BravyiKitaev, true},
		{" parity ", Parity, true},
		{"", 0, false},
		{"ternary", 0, false},
	}
	for _, tc := range tests {
		got, err := ParseEncoding(tc.in)
		if (err == nil) != tc.ok || (tc.ok && got != tc.want) {
			t.Errorf("ParseEncoding(%q) = %v, %v; want %v, ok=%v", tc.in, got, err, tc.want, tc.ok)
		}
		if tc.ok {
			var e Encoding
			b, _ := got.MarshalText()
			if err := e.UnmarshalText(b); err != nil || e != got {
				t.Errorf("text round trip of %v: %v, %v", got, e, err)
			}
		}
	}
}

// recursiveBK returns the Bravyi–Kitaev matrix β_n, n a power of two, by the
// recursion of Seeley, Richard & Love, arXiv:1208.5986, eq. 23:
// β_1 = [1], β_2m = [[β_m, 0], [A_m, β_m]], A_m zero but for an all-ones
// last row.
func recursiveBK(n int) [][]bool {
	out := make([][]bool, n)
	for k := range out {
		out[k] = make([]bool, n)
	}
	if n == 1 {
		out[0][0] = true
		return out
	}
	m := n / 2
	b := recursiveBK(m)
	for k := range m {
		for l := range m {
			out[k][l], out[m+k][m+l] = b[k][l], b[k][l]
		}
		out[n-1][k] = true
	}
	return out
}

// TestBravyiKitaevColumns checks, for every n up to 130 (so across word
// boundaries and at sizes that are not powers of two), that the qubits the
// BK image of a_j† flips (X or Y: U(j) ∪ {j}) are column j of the leading
// n×n block of the recursive β (same source as recursiveBK).
func TestBravyiKitaevColumns(t *testing.T) {
	beta := recursiveBK(256)
	for n := 1; n <= 130; n++ {
		for j := range n {
			l := BravyiKitaev.Ladder(n, Create(j))
			for k := range n {
				flips := l[0].Pauli.At(k) == pauli.X || l[0].Pauli.At(k) == pauli.Y
				if flips != beta[k][j] {
					t.Fatalf("n=%d: BK a%d† flips qubit %d = %v, want β[%d][%d] = %v", n, j, k, flips, k, j, beta[k][j])
				}
			}
		}
	}
}
