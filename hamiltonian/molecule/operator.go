package molecule

import (
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
)

// FermionOperator returns the electronic Hamiltonian over 2·Orbitals() spin
// orbitals numbered by order,
//
//	H = E_core + Σ_{pq,σ} h_pq a†_{pσ} a_{qσ} + ½ Σ_{pqrs,στ} (pq|rs) a†_{pσ} a†_{rτ} a_{sτ} a_{qσ},
//
// one term per non-zero integral and spin choice, products that vanish by
// Pauli exclusion (pσ = rτ or qσ = sτ) left out. It panics if order is not
// a defined [fermion.SpinOrder].
func (g *Integrals) FermionOperator(order fermion.SpinOrder) *fermion.Operator {
	n := g.norb
	o := fermion.NewOperator(2 * n)
	// Room for every product: 2 per non-zero h_pq, 4 per non-zero (pq|rs).
	ones, twos := 0, 0
	for p := range n {
		for q := range n {
			if g.One(p, q) != 0 {
				ones++
			}
			for r := range n {
				for s := range n {
					if g.Two(p, q, r, s) != 0 {
						twos++
					}
				}
			}
		}
	}
	o.Grow(1+2*ones+4*twos, 4*ones+16*twos)
	if g.core != 0 {
		o.Add(complex(g.core, 0))
	}
	spins := [2]fermion.Spin{fermion.Up, fermion.Down}
	mode := func(p int, s fermion.Spin) int { return order.Mode(p, s, n) }
	for p := range n {
		for q := range n {
			v := g.One(p, q)
			if v == 0 {
				continue
			}
			for _, s := range spins {
				o.Add(complex(v, 0), fermion.Create(mode(p, s)), fermion.Annihilate(mode(q, s)))
			}
		}
	}
	for p := range n {
		for q := range n {
			for r := range n {
				for s := range n {
					v := g.Two(p, q, r, s)
					if v == 0 {
						continue
					}
					c := complex(v/2, 0)
					for _, sig := range spins {
						for _, tau := range spins {
							P, Q, R, S := mode(p, sig), mode(q, sig), mode(r, tau), mode(s, tau)
							if P == R || Q == S {
								continue
							}
							o.Add(c, fermion.Create(P), fermion.Create(R), fermion.Annihilate(S), fermion.Annihilate(Q))
						}
					}
				}
			}
		}
	}
	return o
}

// QubitHamiltonian maps the electronic Hamiltonian, with spin orbitals
// interleaved (mode 2p is orbital p spin α, mode 2p+1 spin β; see
// [fermion.Interleaved]), to a qubit Hamiltonian on 2·Orbitals() qubits under
// enc. For another ordering map [Integrals.FermionOperator] yourself.
func (g *Integrals) QubitHamiltonian(enc fermion.Encoding) (*hamiltonian.Hamiltonian, error) {
	return g.FermionOperator(fermion.Interleaved).QubitHamiltonian(enc)
}
