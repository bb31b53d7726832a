package allocate

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/hamiltonian"
)

// ScaledOneNorm returns the plan figure of merit ‖h'‖_1 = Σ_i |h_i|/sqrt(N_i)
// of MATH §3.2 (the objective of ShadowGrouping, arXiv:2301.03385) over the
// terms with N_i > 0, and the number of terms with N_i = 0, whose share is
// unbounded; uncovered is their one-norm Σ|h_i|, the bias bound B_0 of
// MATH §2. It returns an error if h is nil, len(cover) differs from h.Len()
// or a count is negative.
func ScaledOneNorm(h *hamiltonian.Hamiltonian, cover []int) (norm float64, missing int, uncovered float64, err error) {
	if h == nil {
		return 0, 0, 0, fmt.Errorf("allocate: nil Hamiltonian")
	}
	if len(cover) != h.Len() {
		return 0, 0, 0, fmt.Errorf("allocate: %d cover counts for %d terms", len(cover), h.Len())
	}
	for i, c := range h.Coeffs() {
		switch {
		case cover[i] < 0:
			return 0, 0, 0, fmt.Errorf("allocate: term %d (%s) has negative count %d", i, h.Pauli(i), cover[i])
		case cover[i] == 0:
			missing++
			uncovered += math.Abs(c)
		default:
			norm += math.Abs(c) / math.Sqrt(float64(cover[i]))
		}
	}
	return norm, missing, uncovered, nil
}
