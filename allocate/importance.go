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
	i := drawTerm(im.rng, im.cum)
	im.drawn = append(im.drawn, i)
	x, z := im.table.Words(i)
	fillSetting(x, z, im.fill, dst)
	return 1, nil
}

// drawTerm draws a term index with probability proportional to its weight,
// from cum, the running sums of the weights, with one uniform draw of rng;
// [Importance.Next] and the seed plan's regeneration share it.
func drawTerm(rng *rand.Rand, cum []float64) int {
	u := rng.Float64() * cum[len(cum)-1]
	// The first i with cum[i] > u; a term with zero weight is never drawn.
	i, _ := slices.BinarySearch(cum, u)
	for i < len(cum)-1 && cum[i] <= u {
		i++
	}
	return i
}

// fillSetting writes into dst the letters of the Pauli string with words
// x, z, and fill on the qubits where that string is the identity.
func fillSetting(x, z []uint64, fill pauli.Letter, dst []pauli.Letter) {
	for q := range dst {
		if l := pauli.LetterAt(x, z, q); l != pauli.I {
			dst[q] = l
		} else {
			dst[q] = fill
		}
	}
}

// Drawn implements [TermDrawer]: the term drawn for each shot so far.
func (im *Importance) Drawn() []int { return im.drawn }
