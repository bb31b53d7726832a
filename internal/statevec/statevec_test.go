package statevec

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// TestWalshHadamard: the transform of a point mass at b is (−1)^{|b∧m|},
// and of the uniform distribution on 2 bits is (1, 0, 0, 0) (the
// Walsh–Hadamard transform's definition; common practice).
func TestWalshHadamard(t *testing.T) {
	p := []float64{0, 0, 0, 0, 0, 1, 0, 0} // b = 5 = 101
	WalshHadamard(p)
	want := []float64{1, -1, 1, -1, -1, 1, -1, 1}
	for m := range p {
		if p[m] != want[m] {
			t.Errorf("point mass at 5: entry %d = %g, want %g", m, p[m], want[m])
		}
	}
	u := []float64{0.25, 0.25, 0.25, 0.25}
	WalshHadamard(u)
	for m, v := range u {
		if w := map[bool]float64{true: 1, false: 0}[m == 0]; math.Abs(v-w) > 1e-15 {
			t.Errorf("uniform: entry %d = %g, want %g", m, v, w)
		}
	}
}

// TestRotate: measuring |0⟩ in X gives 0 and 1 with probability ½ each; the
// X-basis state |+⟩ gives 0 for certain; the Y-basis state (|0⟩+i|1⟩)/√2
// gives 0 for certain (Nielsen & Chuang §2.1, §4.2); the entangled setting
// of {XX, ZZ} measures the Bell state (|00⟩+|11⟩)/√2, a +1 eigenstate of
// both, with one outcome for certain.
func TestRotate(t *testing.T) {
	r := 1 / math.Sqrt2
	probs := func(a []complex128) []float64 {
		p := make([]float64, len(a))
		s := 0.0
		for i, v := range a {
			p[i] = real(v)*real(v) + imag(v)*imag(v)
			s += p[i]
		}
		for i := range p {
			p[i] /= s
		}
		return p
	}
	x, _ := pauli.ParseSetting("X")
	y, _ := pauli.ParseSetting("Y")
	cases := []struct {
		name string
		a    []complex128
		s    pauli.Setting
		want []float64
	}{
		{"|0> in X", []complex128{1, 0}, x, []float64{0.5, 0.5}},
		{"|+> in X", []complex128{complex(r, 0), complex(r, 0)}, x, []float64{1, 0}},
		{"|+i> in Y", []complex128{complex(r, 0), complex(0, r)}, y, []float64{1, 0}},
	}
	bell, err := pauli.NewFamilySetting([]pauli.String{pauli.MustParse("XX"), pauli.MustParse("ZZ")})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range cases {
		a := append([]complex128(nil), c.a...)
		Rotate(a, c.s, c.s.Qubits())
		for i, p := range probs(a) {
			if math.Abs(p-c.want[i]) > 1e-15 {
				t.Errorf("%s: P(%d) = %g, want %g", c.name, i, p, c.want[i])
			}
		}
	}
	a := []complex128{complex(r, 0), 0, 0, complex(r, 0)}
	Rotate(a, bell, 2)
	top := 0.0
	for _, p := range probs(a) {
		top = max(top, p)
	}
	if math.Abs(top-1) > 1e-12 {
		t.Errorf("Bell state in the setting of {XX, ZZ}: largest outcome probability %g, want 1", top)
	}
}
