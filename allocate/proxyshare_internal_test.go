package allocate

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// opaqueProxy hides the type of a proxy, so that the variances take the
// generic route of pair covariances.
type opaqueProxy struct{ p Proxy }

func (o opaqueProxy) Expect(p pauli.String) float64 { return o.p.Expect(p) }

// refVariance is the reference ⟨O⟩ = ⟨ψ|Oψ⟩ and Var_ψ(O) = ‖Oψ‖² − ⟨O⟩² for
// O = Σ_j c_j P_j, with Oψ applied matrix-free by package hamiltonian
// (MATH.md §7), independent of the routes of proxyVariances.
func refVariance(t *testing.T, psi []complex128, ps []pauli.String, c []float64) (mean, v float64) {
	t.Helper()
	terms := make([]hamiltonian.Term, len(ps))
	for j := range ps {
		terms[j] = hamiltonian.Term{Pauli: ps[j], Coeff: c[j]}
	}
	o, err := hamiltonian.New(ps[0].Qubits(), 0, terms)
	if err != nil {
		t.Fatal(err)
	}
	out := make([]complex128, len(psi))
	o.Apply(out, psi)
	var m complex128
	m2 := 0.0
	for a, v := range out {
		m += complex(real(psi[a]), -imag(psi[a])) * v
		m2 += real(v)*real(v) + imag(v)*imag(v)
	}
	return real(m), m2 - real(m)*real(m)
}

// TestProxyVarianceRoutes checks the three routes of proxyVariances (Born
// probabilities and a Walsh–Hadamard transform for a state, flip-pattern
// sums for a basis state, pair covariances for any other proxy) against
// ‖Oψ‖² − ⟨O⟩² on every group that sorted (local settings) and sorted-gc
// (entangled settings) form for a random 5-qubit Hamiltonian, in a random
// state and in a basis state. Both sides are exact up to rounding:
// tolerance 1e-10 relative to (Σ|c_j|)².
func TestProxyVarianceRoutes(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	const n = 5
	var terms []hamiltonian.Term
	letters := []byte("IXYZ")
	for range 40 {
		b := make([]byte, n)
		for q := range b {
			b[q] = letters[rng.IntN(4)]
		}
		terms = append(terms, hamiltonian.Term{Pauli: pauli.MustParse(string(b)), Coeff: rng.NormFloat64()})
	}
	h, err := hamiltonian.New(n, 0, terms)
	if err != nil {
		t.Fatal(err)
	}
	psi := make([]complex128, 1<<n)
	norm := 0.0
	for a := range psi {
		psi[a] = complex(rng.NormFloat64(), rng.NormFloat64())
		norm += real(psi[a])*real(psi[a]) + imag(psi[a])*imag(psi[a])
	}
	for a := range psi {
		psi[a] /= complex(math.Sqrt(norm), 0)
	}
	sp, err := NewStateProxy(psi)
	if err != nil {
		t.Fatal(err)
	}
	const bits = 0b10110
	basisVec := make([]complex128, 1<<n)
	basisVec[bits] = 1
	bp := BasisProxy{Bits: pauli.Bits{bits}}
	for _, a := range []interface {
		Allocator
		Groups() ([]pauli.Setting, []int)
		Members() [][]int
	}{&Sorted{}, &SortedGC{}} {
		if err := a.Init(h, 1000); err != nil {
			t.Fatal(err)
		}
		settings, _ := a.Groups()
		for g, members := range a.Members() {
			ps := make([]pauli.String, len(members))
			c := make([]float64, len(members))
			one := 0.0
			for j, i := range members {
				ps[j], c[j] = h.Pauli(i), h.Coeff(i)
				one += math.Abs(c[j])
			}
			tol := 1e-10 * one * one
			for _, tc := range []struct {
				name string
				px   Proxy
				psi  []complex128
			}{
				{"state", sp, psi},
				{"state, pairs", opaqueProxy{sp}, psi},
				{"basis", bp, basisVec},
				{"basis, pairs", opaqueProxy{bp}, basisVec},
			} {
				vs, err := newProxyVariances(tc.px, h)
				if err != nil {
					t.Fatal(err)
				}
				gotMean, got := vs.variance(settings[g], members, c)
				wantMean, want := refVariance(t, tc.psi, ps, c)
				if math.Abs(got-want) > tol || math.Abs(gotMean-wantMean) > tol {
					t.Errorf("%s group %d (%d terms), %s proxy: mean %g, variance %g, want %g, %g", a, g, len(members), tc.name, gotMean, got, wantMean, want)
				}
			}
		}
	}
}
