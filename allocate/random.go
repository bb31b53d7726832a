package allocate

import (
	"math/rand/v2"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Random draws every qubit's basis uniformly and independently from X, Y, Z
// for every shot: the measurements of classical shadows (Huang, Kueng &
// Preskill, "Predicting many properties of a quantum system from very few
// measurements", arXiv:2002.08953; MATH §5.3). A term of weight k is covered
// by a shot with probability 3^−k.
//
// # Cost
//
// O(n) per setting, one draw per qubit; the driver then counts the covers of
// the distinct settings.
//
// The same Seed gives the same plan. The zero value is ready to use (seed 0).
type Random struct {
	// Seed seeds the PCG source the strategy draws from.
	Seed uint64

	rng *rand.Rand
}

// String returns "random".
func (r *Random) String() string { return "random" }

// Init implements [Allocator].
func (r *Random) Init(h *hamiltonian.Hamiltonian, budget int) error {
	r.rng = rand.New(rand.NewPCG(r.Seed, seedStream))
	return nil
}

// Next implements [Stepper].
func (r *Random) Next(dst []pauli.Letter) (int, error) {
	for q := range dst {
		dst[q] = pauli.Letter(1 + r.rng.IntN(3))
	}
	return 1, nil
}

// seedStream is the second PCG word of every strategy's source; the caller's
// seed is the first.
const seedStream = 0x73686f74706c616e // "shotplan"
