package allocate

import (
	"fmt"
	"math"
	"math/bits"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Proxy is a state computed classically, before any shot, whose Pauli
// expectation values stand in for those of the unknown state when a
// strategy weighs groups by their variance or splits coefficients between
// groups (MATH.md §2.4). A plan made with a proxy depends only on the proxy
// and the Hamiltonian, never on measured data, so every a-priori
// certificate of the plan stays rigorous; a poor proxy costs shots, not
// correctness. A nil Proxy means the worst case over states.
type Proxy interface {
	// Expect returns ⟨P⟩ in the proxy state, a number in [−1, 1]. P has
	// the Hamiltonian's width.
	Expect(p pauli.String) float64
}

// StateProxy is a proxy given by 2^n amplitudes, for example the exact
// ground state of a small system or a truncated state computed elsewhere.
// Each Expect costs 2^n operations.
type StateProxy struct {
	amp []complex128
	n   int
}

// NewStateProxy returns the proxy of the state with the given amplitudes,
// which must number 2^n for 1 ≤ n ≤ [hamiltonian.MaxExactQubits] and be
// normalised to within 1e-9. The slice is kept, not copied.
func NewStateProxy(amp []complex128) (*StateProxy, error) {
	n := 0
	for 1<<n < len(amp) {
		n++
	}
	if len(amp) < 2 || 1<<n != len(amp) || n > hamiltonian.MaxExactQubits {
		return nil, fmt.Errorf("allocate: proxy state has %d amplitudes, want 2^n for 1 ≤ n ≤ %d", len(amp), hamiltonian.MaxExactQubits)
	}
	norm := 0.0
	for _, a := range amp {
		norm += real(a)*real(a) + imag(a)*imag(a)
	}
	if math.IsNaN(norm) || math.Abs(norm-1) > 1e-9 {
		return nil, fmt.Errorf("allocate: proxy state has squared norm %g, want 1", norm)
	}
	return &StateProxy{amp: amp, n: n}, nil
}

// Qubits returns the state's width.
func (s *StateProxy) Qubits() int { return s.n }

// Expect returns ⟨ψ|P|ψ⟩. It panics if p's width is not the state's.
func (s *StateProxy) Expect(p pauli.String) float64 {
	return hamiltonian.Expectation(s.amp, p)
}

// BasisProxy is the proxy of one computational-basis state |b⟩ of any
// width, for example a Hartree–Fock determinant under the Jordan–Wigner
// encoding: bit q of Bits is the outcome of qubit q.
type BasisProxy struct {
	Bits pauli.Bits
}

// Expect returns ⟨b|P|b⟩: zero when P has an X or Y letter (it flips a
// bit), else (−1)^{|z ∧ b|}. It panics if Bits has fewer words than p.
func (b BasisProxy) Expect(p pauli.String) float64 {
	xs, zs := p.Words()
	odd := 0
	for w, x := range xs {
		if x != 0 {
			return 0
		}
		odd ^= bits.OnesCount64(zs[w]&b.Bits[w]) & 1
	}
	if odd == 1 {
		return -1
	}
	return 1
}

// ProxyCovariance returns Cov(A, B) = ⟨AB⟩ − ⟨A⟩⟨B⟩ in the proxy state for
// two commuting Pauli strings (for commuting strings AB = ±C with C a Pauli
// string, so ⟨AB⟩ is real). It panics if a and b anticommute or differ in
// width.
func ProxyCovariance(px Proxy, a, b pauli.String) float64 {
	if !a.Commutes(b) {
		panic(fmt.Sprintf("allocate: ProxyCovariance of anticommuting strings %s and %s", a, b))
	}
	c, ph := pauli.Mul(a, b)
	ab := real(ph.Complex()) * px.Expect(c)
	return ab - px.Expect(a)*px.Expect(b)
}
