package molecule

import (
	"fmt"
	"slices"
)

// MaxOrbitals is the largest number of spatial orbitals [New] and the
// FCIDUMP reader accept: 128 orbitals (256 qubits) already need 270 MB for
// the two-electron integrals, far beyond what a qubit Hamiltonian can use.
const MaxOrbitals = 128

// Integrals are the one- and two-electron integrals of a molecule over real
// spatial orbitals, with the constant energy (nuclear repulsion plus any
// frozen-core energy), in chemists' notation:
//
//	h_pq = ⟨p|h|q⟩,   (pq|rs) = ∫∫ p(1) q(1) r(2) s(2) / r₁₂.
//
// Orbitals are numbered from 0 (an FCIDUMP numbers them from 1). Real
// orbitals give h_pq = h_qp and the 8-fold symmetry
// (pq|rs) = (qp|rs) = (pq|sr) = (qp|sr) = (rs|pq) = (sr|pq) = (rs|qp) = (sr|qp);
// the setters keep these symmetries and the storage holds each distinct value
// once.
//
// The exported fields describe the electronic state and are carried through
// [Integrals.ActiveSpace]; the Hamiltonian does not depend on them.
type Integrals struct {
	Electrons int   // number of electrons (NELEC)
	SpinTwice int   // 2S_z, the number of α minus β electrons (MS2)
	OrbSym    []int // irrep label of each orbital (ORBSYM), or nil
	ISym      int   // irrep of the target state (ISYM); 0 from New, 1 from an FCIDUMP without ISYM

	norb int
	core float64
	one  []float64 // h_pq at pair(p, q)
	two  []float64 // (pq|rs) at pair(pair(p, q), pair(r, s))
}

// pair packs an unordered index pair: p(p+1)/2 + q for p ≥ q.
func pair(p, q int) int {
	if p < q {
		p, q = q, p
	}
	return p*(p+1)/2 + q
}

// New returns zero integrals over the given number of spatial orbitals. It
// returns an error if orbitals is not in [1, MaxOrbitals].
func New(orbitals int) (*Integrals, error) {
	if orbitals < 1 || orbitals > MaxOrbitals {
		return nil, fmt.Errorf("molecule: %d orbitals, want 1 to %d", orbitals, MaxOrbitals)
	}
	np := orbitals * (orbitals + 1) / 2
	return &Integrals{norb: orbitals, one: make([]float64, np), two: make([]float64, np*(np+1)/2)}, nil
}

// Orbitals returns the number of spatial orbitals.
func (g *Integrals) Orbitals() int { return g.norb }

// Core returns the constant energy.
func (g *Integrals) Core() float64 { return g.core }

// One returns h_pq. It panics if an index is out of range.
func (g *Integrals) One(p, q int) float64 {
	g.check(p, q, 0, 0)
	return g.one[pair(p, q)]
}

// Two returns (pq|rs). It panics if an index is out of range.
func (g *Integrals) Two(p, q, r, s int) float64 {
	g.check(p, q, r, s)
	return g.two[pair(pair(p, q), pair(r, s))]
}

// SetCore sets the constant energy.
func (g *Integrals) SetCore(v float64) { g.core = v }

// SetOne sets h_pq and h_qp to v. It panics if an index is out of range.
func (g *Integrals) SetOne(p, q int, v float64) {
	g.check(p, q, 0, 0)
	g.one[pair(p, q)] = v
}

// SetTwo sets (pq|rs) and its 7 symmetric partners to v. It panics if an
// index is out of range.
func (g *Integrals) SetTwo(p, q, r, s int, v float64) {
	g.check(p, q, r, s)
	g.two[pair(pair(p, q), pair(r, s))] = v
}

func (g *Integrals) check(p, q, r, s int) {
	if min(p, q, r, s) < 0 || max(p, q, r, s) >= g.norb {
		panic("molecule: orbital index out of range")
	}
}

// Clone returns a deep copy of g.
func (g *Integrals) Clone() *Integrals {
	c := *g
	c.OrbSym = slices.Clone(g.OrbSym)
	c.one = slices.Clone(g.one)
	c.two = slices.Clone(g.two)
	return &c
}

// Equal reports whether g and o hold the same orbitals, constant, integrals
// and state description, exactly.
func (g *Integrals) Equal(o *Integrals) bool {
	return g.norb == o.norb && g.core == o.core && g.Electrons == o.Electrons &&
		g.SpinTwice == o.SpinTwice && g.ISym == o.ISym && slices.Equal(g.OrbSym, o.OrbSym) &&
		slices.Equal(g.one, o.one) && slices.Equal(g.two, o.two)
}

// HartreeFock returns the energy of the closed-shell determinant with the
// lowest Electrons/2 orbitals doubly occupied:
//
//	E = E_core + Σ_i 2 h_ii + Σ_ij (2 (ii|jj) − (ij|ji))
//
// (Szabo & Ostlund, Modern Quantum Chemistry, eq. 3.184). It returns an
// error if Electrons is odd or exceeds twice the orbital count.
func (g *Integrals) HartreeFock() (float64, error) {
	if g.Electrons < 0 || g.Electrons%2 != 0 || g.Electrons > 2*g.norb {
		return 0, fmt.Errorf("molecule: closed-shell energy needs an even electron count up to %d, have %d", 2*g.norb, g.Electrons)
	}
	occ := g.Electrons / 2
	e := g.core
	for i := range occ {
		e += 2 * g.One(i, i)
		for j := range occ {
			e += 2*g.Two(i, i, j, j) - g.Two(i, j, j, i)
		}
	}
	return e, nil
}
