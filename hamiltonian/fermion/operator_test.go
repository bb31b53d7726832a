package fermion

import (
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"
)

func TestNormalOrder(t *testing.T) {
	type tm struct {
		c   complex128
		ops []Op
	}
	a, c := Annihilate, Create
	tests := []struct {
		name string
		in   []tm
		want string
	}{
		// a_i a_i† = 1 − a_i† a_i: the canonical anticommutation relation
		// (common practice, any second-quantisation text).
		{"contraction", []tm{{1, []Op{a(0), c(0)}}}, "(1+0i) + (-1+0i) a0† a0"},
		// Distinct modes anticommute: a_1 a_0† = −a_0† a_1.
		{"swap sign", []tm{{2, []Op{a(1), c(0)}}}, "(-2+0i) a0† a1"},
		// Pauli exclusion: a_2† a_2† = 0.
		{"repeated creator", []tm{{1, []Op{c(2), c(2)}}}, "0"},
		// Canonical order: creators increasing, annihilators decreasing.
		{"order", []tm{{1, []Op{c(3), c(1), a(0), a(2)}}}, "(1+0i) a1† a3† a2 a0"},
		// Repeats merge, and cancelling ones vanish.
		{"merge", []tm{{1, []Op{c(0), a(1)}}, {1, []Op{a(1), c(0)}}}, "0"},
		// n_0 n_0 = n_0 since n_0 is a projector.
		{"projector", []tm{{1, []Op{c(0), a(0), c(0), a(0)}}}, "(1+0i) a0† a0"},
	}
	for _, tc := range tests {
		o := NewOperator(4)
		for _, x := range tc.in {
			o.Add(x.c, x.ops...)
		}
		if got := o.NormalOrder().String(); got != tc.want {
			t.Errorf("%s: NormalOrder(%v) = %s, want %s", tc.name, o, got, tc.want)
		}
	}
}

// randomOperator returns a seeded random operator with products of up to 4
// ladder operators.
func randomOperator(rng *rand.Rand, modes, terms int) *Operator {
	o := NewOperator(modes)
	for range terms {
		ops := make([]Op, rng.IntN(5))
		for k := range ops {
			ops[k] = Op{Mode: rng.IntN(modes), Dagger: rng.IntN(2) == 1}
		}
		o.Add(complex(rng.NormFloat64(), rng.NormFloat64()), ops...)
	}
	return o
}

// TestNormalOrderPreservesImage checks that normal ordering does not change
// the operator: its Jordan–Wigner image (a faithful representation of the
// anticommutation relations) is the same before and after, to 1e-12.
func TestNormalOrderPreservesImage(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 1))
	for trial := range 20 {
		o := randomOperator(rng, 5, 12)
		for _, enc := range []Encoding{JordanWigner, BravyiKitaev} {
			a, b := sumOf(o.QubitOperator(enc)), sumOf(o.NormalOrder().QubitOperator(enc))
			for p, c := range a.plus(scaled(b, -1)) {
				if cmplx.Abs(c) > 1e-12 {
					t.Fatalf("trial %d %s: image of %v and of its normal order differ by %v on %s", trial, enc, o, c, p)
				}
			}
		}
	}
}

func scaled(a sum, c complex128) sum {
	out := sum{}
	for p, v := range a {
		out[p] = c * v
	}
	return out
}

func TestAdjointAndHermitian(t *testing.T) {
	o := NewOperator(3)
	o.Add(1+2i, Create(0), Annihilate(2))
	if got, want := o.Adjoint().String(), "(1-2i) a2† a0"; got != want {
		t.Errorf("Adjoint(%v) = %s, want %s", o, got, want)
	}
	if o.IsHermitian(1e-12) {
		t.Errorf("IsHermitian(%v) = true, want false", o)
	}
	o.Add(1-2i, Create(2), Annihilate(0))
	if !o.IsHermitian(1e-12) {
		t.Errorf("IsHermitian(%v) = false, want true", o)
	}
	// n_0 n_1 written in another order: a1† a0† a0 a1 = n0 n1 is Hermitian.
	p := NewOperator(2)
	p.Add(1, Create(1), Create(0), Annihilate(0), Annihilate(1))
	if !p.IsHermitian(0) {
		t.Errorf("IsHermitian(%v) = false, want true", p)
	}
}

// TestNonHermitianError checks that an operator whose image has imaginary
// coefficients is refused with an error naming a Pauli term.
func TestNonHermitianError(t *testing.T) {
	o := NewOperator(2)
	o.Add(1, Create(1))
	for _, enc := range []Encoding{JordanWigner, BravyiKitaev, Parity} {
		_, err := o.QubitHamiltonian(enc)
		if err == nil {
			t.Fatalf("%s: QubitHamiltonian(%v) succeeded, want an error", enc, o)
		}
		if !strings.Contains(err.Error(), "not Hermitian") || !strings.Contains(err.Error(), "Y") {
			t.Errorf("%s: QubitHamiltonian(%v) error %q does not name the imaginary Y term", enc, o, err)
		}
	}
	// An imaginary coefficient on a Hermitian product is not Hermitian either.
	q := NewOperator(1)
	q.Add(1i, Create(0), Annihilate(0))
	if _, err := q.QubitHamiltonian(JordanWigner); err == nil || !strings.Contains(err.Error(), "I has coefficient") {
		t.Errorf("QubitHamiltonian(%v) error = %v, want one naming the identity term", q, err)
	}
}

// TestComplexHermitian maps i a0† a1 − i a1† a0, Hermitian with imaginary
// coefficients, to ½(Y_0 X_1 − X_0 Y_1) under Jordan–Wigner (worked by hand from
// a_j† = Z_0⋯Z_{j−1}(X_j − iY_j)/2, Seeley, Richard & Love, arXiv:1208.5986).
func TestComplexHermitian(t *testing.T) {
	o := NewOperator(2)
	o.Add(1i, Create(0), Annihilate(1))
	o.Add(-1i, Create(1), Annihilate(0))
	h, err := o.QubitHamiltonian(JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]float64{"YX": 0.5, "XY": -0.5}
	if h.Len() != 2 || h.Offset() != 0 {
		t.Fatalf("image of %v has %d terms, offset %v, want %v", o, h.Len(), h.Offset(), want)
	}
	for _, term := range h.Terms() {
		if want[term.Pauli.String()] != term.Coeff {
			t.Errorf("image of %v: %v %s, want %v", o, term.Coeff, term.Pauli, want)
		}
	}
}
