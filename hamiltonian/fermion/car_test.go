package fermion

import (
	"fmt"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// sum is a test-only Pauli sum with complex coefficients, keyed by the dense
// string; its product uses pauli.Mul, independent of the package's
// word-level expansion.
type sum map[string]complex128

func sumOf(ts []PauliTerm) sum {
	s := sum{}
	for _, t := range ts {
		s[t.Pauli.String()] += t.Coeff
	}
	return s
}

func (a sum) mul(b sum) sum {
	out := sum{}
	for pa, ca := range a {
		for pb, cb := range b {
			p, ph := pauli.Mul(pauli.MustParse(pa), pauli.MustParse(pb))
			out[p.String()] += ca * cb * ph.Complex()
		}
	}
	return out
}

func (a sum) plus(b sum) sum {
	out := sum{}
	for p, c := range a {
		out[p] += c
	}
	for p, c := range b {
		out[p] += c
	}
	return out
}

// isMultipleOfIdentity reports whether a equals c·I on n qubits exactly,
// ignoring entries that cancelled to exactly zero.
func (a sum) equalsIdentity(n int, c complex128) bool {
	id := pauli.Identity(n).String()
	for p, v := range a {
		if p == id {
			if v != c {
				return false
			}
		} else if v != 0 {
			return false
		}
	}
	_, ok := a[id]
	return ok || c == 0
}

// ladderProducts maps o term by term: each product of ladder operators
// becomes the product of their images under enc, the sum a mapping must
// equal by linearity.
func ladderProducts(o *Operator, enc Encoding) sum {
	n := o.Modes()
	want := sum{}
	for _, term := range o.Terms() {
		prod := sum{pauli.Identity(n).String(): term.Coeff}
		for _, op := range term.Ops {
			l := enc.Ladder(n, op)
			prod = prod.mul(sumOf(l[:]))
		}
		want = want.plus(prod)
	}
	return want
}

// TestCAR checks the canonical anticommutation relations
// {a_i, a_j†} = δ_ij and {a_i, a_j} = 0 for every pair of modes, n = 1..8,
// in every encoding, computed in the Pauli algebra with pauli.Mul. Source:
// the defining relations of fermionic ladder operators (Jordan & Wigner
// 1928; Seeley, Richard & Love, arXiv:1208.5986, eq. 1). All coefficients
// are sums of ±¼, so the comparison is exact.
func TestCAR(t *testing.T) {
	for _, enc := range []Encoding{JordanWigner, BravyiKitaev, Parity} {
		for n := 1; n <= 8; n++ {
			t.Run(fmt.Sprintf("%s/n=%d", enc, n), func(t *testing.T) {
				ann := make([]sum, n)
				cre := make([]sum, n)
				for j := range n {
					a := enc.Ladder(n, Annihilate(j))
					c := enc.Ladder(n, Create(j))
					ann[j], cre[j] = sumOf(a[:]), sumOf(c[:])
				}
				for i := range n {
					for j := range n {
						want := complex(0, 0)
						if i == j {
							want = 1
						}
						if got := ann[i].mul(cre[j]).plus(cre[j].mul(ann[i])); !got.equalsIdentity(n, want) {
							t.Errorf("{a%d, a%d†} = %v, want %v·I", i, j, got, want)
						}
						if got := ann[i].mul(ann[j]).plus(ann[j].mul(ann[i])); !got.equalsIdentity(n, 0) {
							t.Errorf("{a%d, a%d} = %v, want 0", i, j, got)
						}
					}
				}
			})
		}
	}
}

// TestQubitOperatorMatchesProducts checks the mapping of whole operators
// (grouping of products with their adjoints and reorderings, word-level
// expansion, merging) against the product of the ladder images computed
// term by term with pauli.Mul, for seeded random operators with complex
// coefficients and products in any order, to 1e-12.
func TestQubitOperatorMatchesProducts(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 5))
	for trial := range 30 {
		n := 1 + rng.IntN(6)
		o := randomOperator(rng, n, 10)
		// Add some adjoints and reordered copies so that grouping matters.
		for i := range o.Len() / 2 {
			term := o.Term(i)
			adj := make([]Op, len(term.Ops))
			for k, op := range term.Ops {
				adj[len(adj)-1-k] = op.Adjoint()
			}
			o.Add(complex(rng.NormFloat64(), 0), adj...)
		}
		for _, enc := range []Encoding{JordanWigner, BravyiKitaev, Parity} {
			want := ladderProducts(o, enc)
			got := sumOf(o.QubitOperator(enc))
			for p, c := range got.plus(scaled(want, -1)) {
				if cmplx.Abs(c) > 1e-12 {
					t.Fatalf("trial %d %s: QubitOperator(%v) differs from the product of ladder images by %v on %s", trial, enc, o, c, p)
				}
			}
		}
	}
}

// TestWideOperators repeats the CAR and whole-operator checks on 70 modes,
// where strings span two 64-bit words, for modes on both sides of the word
// boundary. Sources as in TestCAR and TestQubitOperatorMatchesProducts.
func TestWideOperators(t *testing.T) {
	const n = 70
	modes := []int{0, 1, 62, 63, 64, 65, 69}
	rng := rand.New(rand.NewPCG(5, 9))
	for _, enc := range []Encoding{JordanWigner, BravyiKitaev, Parity} {
		for _, i := range modes {
			for _, j := range modes {
				a, c := enc.Ladder(n, Annihilate(i)), enc.Ladder(n, Create(j))
				as, cs := sumOf(a[:]), sumOf(c[:])
				want := complex(0, 0)
				if i == j {
					want = 1
				}
				if got := as.mul(cs).plus(cs.mul(as)); !got.equalsIdentity(n, want) {
					t.Errorf("%s n=%d: {a%d, a%d†} = %v, want %v·I", enc, n, i, j, got, want)
				}
			}
		}
		o := NewOperator(n)
		for range 20 {
			ops := make([]Op, 1+rng.IntN(4))
			for k := range ops {
				ops[k] = Op{Mode: modes[rng.IntN(len(modes))], Dagger: rng.IntN(2) == 1}
			}
			o.Add(complex(rng.NormFloat64(), rng.NormFloat64()), ops...)
		}
		want := ladderProducts(o, enc)
		for p, c := range sumOf(o.QubitOperator(enc)).plus(scaled(want, -1)) {
			if cmplx.Abs(c) > 1e-12 {
				t.Fatalf("%s n=%d: QubitOperator differs from the ladder products by %v on %s", enc, n, c, p)
			}
		}
	}
}

// TestNoModes maps a constant on zero modes.
func TestNoModes(t *testing.T) {
	o := NewOperator(0)
	o.Add(2.5)
	h, err := o.QubitHamiltonian(BravyiKitaev)
	if err != nil || h.Qubits() != 0 || h.Offset() != 2.5 || h.Len() != 0 {
		t.Errorf("QubitHamiltonian(2.5 on 0 modes) = %v, %v; want offset 2.5 on 0 qubits", h, err)
	}
}
