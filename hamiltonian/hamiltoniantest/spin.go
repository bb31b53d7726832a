package hamiltoniantest

import (
	"fmt"
	"math"
	"strings"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// ring returns the terms c·P_q P_{q+1} for every bond of a ring of n qubits
// and each letter pair in letters (such as "ZZ"), then c1·Q_q on each site
// for the single letter field (none if field is 0).
func ring(n int, letters []byte, c float64, field byte, c1 float64) (*hamiltonian.Hamiltonian, error) {
	var terms []hamiltonian.Term
	b := make([]byte, n)
	for q := range n {
		for _, l := range letters {
			for i := range b {
				b[i] = 'I'
			}
			b[q], b[(q+1)%n] = l, l
			p, err := pauli.Parse(string(b))
			if err != nil {
				return nil, err
			}
			terms = append(terms, hamiltonian.Term{Pauli: p, Coeff: c})
		}
	}
	if c1 != 0 {
		for q := range n {
			p, err := pauli.Parse(strings.Repeat("I", q) + string(field) + strings.Repeat("I", n-q-1))
			if err != nil {
				return nil, err
			}
			terms = append(terms, hamiltonian.Term{Pauli: p, Coeff: c1})
		}
	}
	return hamiltonian.New(n, 0, terms)
}

// IsingRing returns the transverse-field Ising ring
//
//	H = −J Σ_q Z_q Z_{q+1} − h Σ_q X_q   (qubit n ≡ qubit 0)
//
// on an even number n ≥ 4 of qubits, with J, h ≥ 0, and its ground energy
// from the free-fermion solution (Pfeuty, Ann. Phys. 57, 79 (1970); Lieb,
// Schultz & Mattis 1961): E_0 = −Σ_k sqrt(J² + h² − 2Jh cos k) over the
// n momenta k = π(2m−1)/n, m = 1..n, of the even-parity sector, which holds
// the ground state of an even ring.
func IsingRing(n int, j, h float64) (*hamiltonian.Hamiltonian, float64, error) {
	if n < 4 || n%2 != 0 || !(j >= 0) || !(h >= 0) || math.IsInf(j, 0) || math.IsInf(h, 0) {
		return nil, 0, fmt.Errorf("hamiltoniantest: IsingRing(%d, %v, %v): want an even n ≥ 4 and finite J, h ≥ 0", n, j, h)
	}
	ham, err := ring(n, []byte{'Z'}, -j, 'X', -h)
	if err != nil {
		return nil, 0, err
	}
	e := 0.0
	for m := 1; m <= n; m++ {
		k := math.Pi * float64(2*m-1) / float64(n)
		e -= math.Sqrt(j*j + h*h - 2*j*h*math.Cos(k))
	}
	return ham, e, nil
}

// heisenbergBethe holds the ground energies per unit J of the spin-½
// Heisenberg antiferromagnet H = J Σ S_q·S_{q+1} on rings of 4 to 10 sites
// (Bonner & Fisher, Phys. Rev. 135, A640 (1964), exact diagonalisation; the
// Bethe-ansatz values; from memory, checked against this module's Lanczos
// solver in the package test).
var heisenbergBethe = map[int]float64{
	4:  -2,
	6:  -2.8027756377319946,
	8:  -3.6510934089371783,
	10: -4.5154463545351075,
}

// HeisenbergRing returns the spin-½ Heisenberg antiferromagnet in Pauli
// form,
//
//	H = Σ_q (X_q X_{q+1} + Y_q Y_{q+1} + Z_q Z_{q+1}) = 4 Σ_q S_q·S_{q+1},
//
// on a ring of n ∈ {4, 6, 8, 10} qubits, and its ground energy, 4 times the
// published spin-operator value.
func HeisenbergRing(n int) (*hamiltonian.Hamiltonian, float64, error) {
	e, ok := heisenbergBethe[n]
	if !ok {
		return nil, 0, fmt.Errorf("hamiltoniantest: HeisenbergRing(%d): want 4, 6, 8 or 10 sites", n)
	}
	h, err := ring(n, []byte{'X', 'Y', 'Z'}, 1, 'Z', 0)
	if err != nil {
		return nil, 0, err
	}
	return h, 4 * e, nil
}
