package molecule

import (
	"fmt"
	"strings"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
)

// Observable names an observable of the electrons that commutes with the
// electronic Hamiltonian and can be estimated from the same shots as the
// energy: the particle number or a spin observable.
type Observable int

const (
	// Number is the particle number N = Σ_{p,σ} n_{pσ}, n_{pσ} = a†_{pσ} a_{pσ}.
	Number Observable = iota
	// SpinZ is S_z = ½ Σ_p (n_{pα} − n_{pβ}).
	SpinZ
	// SpinSquared is the total spin S² = S_− S_+ + S_z (S_z + 1), with
	// S_+ = Σ_p a†_{pα} a_{pβ} and S_− = S_+†; its eigenvalues are S(S+1).
	SpinSquared
)

// Observables lists every [Observable] in the order of their values.
var Observables = []Observable{Number, SpinZ, SpinSquared}

// String returns the observable's short name: "N", "Sz" or "S2".
func (o Observable) String() string {
	switch o {
	case Number:
		return "N"
	case SpinZ:
		return "Sz"
	case SpinSquared:
		return "S2"
	}
	return fmt.Sprintf("Observable(%d)", int(o))
}

// ParseObservable returns the observable named by s ("N", "Sz" or "S2", in
// any case), or an error listing the names.
func ParseObservable(s string) (Observable, error) {
	for _, o := range Observables {
		if strings.EqualFold(s, o.String()) {
			return o, nil
		}
	}
	return 0, fmt.Errorf("molecule: unknown observable %q (want N, Sz or S2)", s)
}

// Operator returns the observable as a fermion operator over 2·orbitals
// spin orbitals numbered by order. It returns an error for an undefined
// observable or spin order, or orbitals outside [1, MaxOrbitals].
//
// S² is built as S_− S_+ + S_z² + S_z with every product written out,
//
//	S_− S_+ = Σ_{pq} a†_{pβ} a_{pα} a†_{qα} a_{qβ},
//	S_z²    = ¼ Σ_{pq} (n_{pα} − n_{pβ})(n_{qα} − n_{qβ}),
//
// which holds because [S_+, S_−] = 2 S_z (so S² = S_x² + S_y² + S_z² =
// ½(S_+S_− + S_−S_+) + S_z² = S_−S_+ + S_z + S_z²).
func (o Observable) Operator(orbitals int, order fermion.SpinOrder) (*fermion.Operator, error) {
	if orbitals < 1 || orbitals > MaxOrbitals {
		return nil, fmt.Errorf("molecule: %d orbitals, want 1 to %d", orbitals, MaxOrbitals)
	}
	if order != fermion.Interleaved && order != fermion.SpinBlocks {
		return nil, fmt.Errorf("molecule: undefined spin order %d", int(order))
	}
	n := orbitals
	mode := func(p int, s fermion.Spin) int { return order.Mode(p, s, n) }
	op := fermion.NewOperator(2 * n)
	switch o {
	case Number:
		op.Grow(2*n, 4*n)
		for p := range n {
			for _, s := range []fermion.Spin{fermion.Up, fermion.Down} {
				m := mode(p, s)
				op.Add(1, fermion.Create(m), fermion.Annihilate(m))
			}
		}
	case SpinZ:
		op.Grow(2*n, 4*n)
		addSpinZ(op, mode, n, 1)
	case SpinSquared:
		op.Grow(2*n+5*n*n, 4*n+20*n*n)
		// S_− S_+.
		for p := range n {
			pa, pb := mode(p, fermion.Up), mode(p, fermion.Down)
			for q := range n {
				qa, qb := mode(q, fermion.Up), mode(q, fermion.Down)
				op.Add(1, fermion.Create(pb), fermion.Annihilate(pa), fermion.Create(qa), fermion.Annihilate(qb))
			}
		}
		// S_z².
		for p := range n {
			for q := range n {
				for _, s := range []fermion.Spin{fermion.Up, fermion.Down} {
					for _, t := range []fermion.Spin{fermion.Up, fermion.Down} {
						c := 0.25
						if s != t {
							c = -0.25
						}
						a, b := mode(p, s), mode(q, t)
						op.Add(complex(c, 0), fermion.Create(a), fermion.Annihilate(a), fermion.Create(b), fermion.Annihilate(b))
					}
				}
			}
		}
		// S_z.
		addSpinZ(op, mode, n, 1)
	default:
		return nil, fmt.Errorf("molecule: undefined observable %d", int(o))
	}
	return op, nil
}

// addSpinZ adds c·S_z to op.
func addSpinZ(op *fermion.Operator, mode func(int, fermion.Spin) int, n int, c float64) {
	for p := range n {
		a, b := mode(p, fermion.Up), mode(p, fermion.Down)
		op.Add(complex(c/2, 0), fermion.Create(a), fermion.Annihilate(a))
		op.Add(complex(-c/2, 0), fermion.Create(b), fermion.Annihilate(b))
	}
}

// QubitObservable maps an observable over the spin orbitals of g (interleaved
// α, β, as [Integrals.QubitHamiltonian]) to a qubit Hamiltonian on
// 2·Orbitals() qubits under enc, so it can be estimated from the same shots
// as the energy. It returns an error for an undefined observable or
// encoding.
func (g *Integrals) QubitObservable(o Observable, enc fermion.Encoding) (*hamiltonian.Hamiltonian, error) {
	op, err := o.Operator(g.norb, fermion.Interleaved)
	if err != nil {
		return nil, err
	}
	h, err := op.QubitHamiltonian(enc)
	if err != nil {
		return nil, fmt.Errorf("molecule: %v: %w", o, err)
	}
	return h, nil
}
