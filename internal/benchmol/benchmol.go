// Package benchmol builds the molecular fixtures of the benchmarks: the
// qubit Hamiltonians (Jordan–Wigner, spin orbitals interleaved) of seeded
// random integrals with the symmetries of real orbitals and every value
// non-zero, a stand-in for a molecule of a given size. 10 orbitals give 20
// qubits and 14 250 terms, 25 orbitals 50 qubits and 571 875 terms. The
// allocation, certificate and estimation benchmarks share them (Plan also
// makes a built-in strategy's plan on them), so that every step is
// measured on the same Hamiltonians; the integrals are drawn
// as randomIntegrals of the hamiltonian/molecule benchmarks draws them
// (same seeds, loop order and scales).
package benchmol

import (
	"fmt"
	"math/rand/v2"
	"sync"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
)

// Orbitals are the fixture sizes in spatial orbitals.
var Orbitals = []int{10, 25}

// terms is the number of terms of the fixture of each size.
var terms = map[int]int{10: 14_250, 25: 571_875}

// Terms returns the number of terms of the fixture of the given size, for
// benchmark names (checked when the fixture is built), or 0 for a size
// that is not a fixture.
func Terms(orbitals int) int { return terms[orbitals] }

// Integrals returns seeded random integrals over the given number of
// orbitals: the core energy and one-electron integrals standard normal,
// the two-electron integrals 0.1 times standard normal, one value per
// class of the real-orbital symmetries.
func Integrals(orbitals int, seed uint64) (*molecule.Integrals, error) {
	rng := rand.New(rand.NewPCG(seed, 7))
	g, err := molecule.New(orbitals)
	if err != nil {
		return nil, err
	}
	pair := func(p, q int) int { return p*(p+1)/2 + q } // p ≥ q
	g.SetCore(rng.NormFloat64())
	for p := range orbitals {
		for q := range p + 1 {
			g.SetOne(p, q, rng.NormFloat64())
			for r := range orbitals {
				for s := range r + 1 {
					if pair(r, s) <= pair(p, q) {
						g.SetTwo(p, q, r, s, 0.1*rng.NormFloat64())
					}
				}
			}
		}
	}
	return g, nil
}

var cache sync.Map // orbitals → *hamiltonian.Hamiltonian

// Hamiltonian returns the fixture over the given number of orbitals (one of
// Orbitals; integrals of seed 1), built on first use and cached for the
// process. It returns an error if the size is not a fixture or the built
// Hamiltonian does not have the recorded number of terms.
func Hamiltonian(orbitals int) (*hamiltonian.Hamiltonian, error) {
	if h, ok := cache.Load(orbitals); ok {
		return h.(*hamiltonian.Hamiltonian), nil
	}
	want := Terms(orbitals)
	if want == 0 {
		return nil, fmt.Errorf("benchmol: no fixture of %d orbitals (sizes %v)", orbitals, Orbitals)
	}
	g, err := Integrals(orbitals, 1)
	if err != nil {
		return nil, err
	}
	h, err := g.QubitHamiltonian(fermion.JordanWigner)
	if err != nil {
		return nil, err
	}
	if h.Len() != want {
		return nil, fmt.Errorf("benchmol: the %d-orbital fixture has %d terms, want %d", orbitals, h.Len(), want)
	}
	cache.Store(orbitals, h)
	return h, nil
}

// Plan returns the fixture over the given number of orbitals and the plan
// of the named built-in strategy (allocate.ByName, seed 1) for shots shots
// on it. (allocate's own tests cannot use it: this package imports
// allocate.)
func Plan(orbitals int, strategy string, shots int) (*hamiltonian.Hamiltonian, *allocate.Plan, error) {
	h, err := Hamiltonian(orbitals)
	if err != nil {
		return nil, nil, err
	}
	a, err := allocate.ByName(strategy, 1)
	if err != nil {
		return nil, nil, err
	}
	p, err := allocate.Run(h, shots, a, nil)
	if err != nil {
		return nil, nil, err
	}
	return h, p, nil
}
