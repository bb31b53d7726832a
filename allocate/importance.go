package allocate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Importance is single-term importance sampling (MATH §3.5): every shot
// draws term i with probability |h_i|/‖h‖_1 and measures the setting that
// agrees with P_i on its support and has the letter Fill elsewhere. The
// estimate ‖h‖_1·sign(h_i)·s of one shot lies in [−‖h‖_1, ‖h‖_1], which gives
// the closed-form budget of guarantee.ImportanceShots. It is the baseline
// every plan can be compared against.
//
// The drawn term of every shot is reported by [Importance.Drawn] and lands
// in [Plan].Drawn, for the estimator that needs it.
//
// # Cost
//
// O(log M) per shot for the draw (binary search in the cumulative weights)
// plus O(n) to write the setting; O(M) once at Init.
//
// The same Seed gives the same plan. The zero value is ready to use.
type Importance struct {
	// Seed seeds the PCG source the strategy draws from.
	Seed uint64
	// Fill is the letter of qubits outside the drawn term's support; zero
	// (pauli.I) means Z.
	Fill pauli.Letter

	fill  pauli.Letter // Fill resolved by Init
	rng   *rand.Rand
	cum   []float64 // cum[i] = Σ_{j≤i} |h_j|
	table *pauli.Table
	drawn []int
}

// String returns "importance".
func (im *Importance) String() string { return "importance" }

// Init implements [Allocator].
func (im *Importance) Init(h *hamiltonian.Hamiltonian, budget int) error {
	fill, err := fillLetter("importance", im.Fill)
	if err != nil {
		return err
	}
	im.fill = fill
	im.rng = rand.New(rand.NewPCG(im.Seed, seedStream))
	im.cum = im.cum[:0]
	s := 0.0
	for _, c := range h.Coeffs() {
		s += math.Abs(c)
		im.cum = append(im.cum, s)
	}
	if !(s > 0) || math.IsInf(s, 0) {
		return fmt.Errorf("one-norm of the coefficients is %v", s)
	}
	im.table = h.Table()
	// Reserve at most a million entries and let append grow past that:
	// reserving a budget beyond memory would panic in make.
	im.drawn = make([]int, 0, min(budget, 1<<20))
	return nil
}

// Next implements [Stepper].
func (im *Importance) Next(dst []pauli.Letter) (int, error) {
	u := im.rng.Float64() * im.cum[len(im.cum)-1]
	// The first i with cum[i] > u; a term with zero weight is never drawn.
	i, _ := slices.BinarySearch(im.cum, u)
	for i < len(im.cum)-1 && im.cum[i] <= u {
		i++
	}
	im.drawn = append(im.drawn, i)
	x, z := im.table.Words(i)
	for q := range dst {
		if l := pauli.LetterAt(x, z, q); l != pauli.I {
			dst[q] = l
		} else {
			dst[q] = im.fill
		}
	}
	return 1, nil
}

// Drawn implements [TermDrawer]: the term drawn for each shot so far.
func (im *Importance) Drawn() []int { return im.drawn }
