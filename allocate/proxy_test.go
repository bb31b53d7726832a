package allocate

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// The values below are textbook single- and two-qubit facts (Nielsen &
// Chuang, Quantum Computation and Quantum Information, §2.1–2.2): in |0⟩,
// ⟨Z⟩ = 1 and ⟨X⟩ = 0, so Var(Z) = 0 and Var(X) = 1; in the Bell state
// (|00⟩+|11⟩)/√2, ⟨XX⟩ = ⟨ZZ⟩ = 1 and ⟨YY⟩ = −1, and XX·ZZ = −YY, so
// Cov(XX, ZZ) = 1 − 1 = 0 while Cov(XI, IX) = ⟨XX⟩ − 0·0 = 1.
func TestProxyTextbook(t *testing.T) {
	zero, err := NewStateProxy([]complex128{1, 0})
	if err != nil {
		t.Fatal(err)
	}
	r := 1 / math.Sqrt2
	bell, err := NewStateProxy([]complex128{complex(r, 0), 0, 0, complex(r, 0)})
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		px   Proxy
		a, b string
		want float64
	}{
		{"Var Z in |0>", zero, "Z", "Z", 0},
		{"Var X in |0>", zero, "X", "X", 1},
		{"Var X in basis |0>", BasisProxy{pauli.Bits{0}}, "X", "X", 1},
		{"Var Z in basis |1>", BasisProxy{pauli.Bits{1}}, "Z", "Z", 0},
		{"Cov XX,ZZ Bell", bell, "XX", "ZZ", 0},
		{"Cov XI,IX Bell", bell, "XI", "IX", 1},
		{"Var ZI Bell", bell, "ZI", "ZI", 1},
		{"Cov ZI,IZ Bell", bell, "ZI", "IZ", 1},
	}
	for _, c := range cases {
		got := ProxyCovariance(c.px, pauli.MustParse(c.a), pauli.MustParse(c.b))
		if math.Abs(got-c.want) > 1e-12 {
			t.Errorf("%s: got %g, want %g", c.name, got, c.want)
		}
	}
	// A basis state's sign: ⟨Z⟩ in |1⟩ is −1 (qubit 0 is the first letter).
	if got := (BasisProxy{pauli.Bits{1}}).Expect(pauli.MustParse("ZI")); got != -1 {
		t.Errorf("⟨ZI⟩ in |q0=1⟩: got %g, want −1", got)
	}
}

func TestStateProxyErrors(t *testing.T) {
	for _, amp := range [][]complex128{nil, {1}, {1, 0, 0}, {1, 1}, {complex(math.NaN(), 0), 0}} {
		if _, err := NewStateProxy(amp); err == nil {
			t.Errorf("NewStateProxy(%v): no error", amp)
		}
	}
}
