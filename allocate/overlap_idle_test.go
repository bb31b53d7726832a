package allocate

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// TestOverlapWorstCaseAlternationIdle checks, on the reference
// implementation of overlap_reference_test.go, the fact Overlap relies on
// to skip the alternation before rounding in the worst-case model
// (MATH.md §2.5): at the optimal shares the objective is
// (Σ_g Σ_i |h_i| α_{ig})² = (Σ_i |h_i|)² whatever the split, so neither a
// random split nor a round of weight steps from sorted insertion's
// partition changes it. The reference value (Σ_i |h_i|)² is the plain
// formula; the tolerance is the rounding bound of a recursive sum of P
// non-negative numbers, (P−1)·u relative (Higham, Accuracy and Stability
// of Numerical Algorithms, §4.2, from memory), doubled for the square and
// once more for the shares' division and square root: 4·P·u with P the
// number of (term, group) pairs plus the groups.
func TestOverlapWorstCaseAlternationIdle(t *testing.T) {
	const u = 0x1p-53
	for _, c := range []struct{ n, terms, k int }{{6, 40, 3}, {12, 300, 4}, {20, 2000, 4}, {70, 600, 5}} {
		h, err := hamiltonian.RandomLocal(c.n, c.terms, c.k, uint64(c.terms))
		if err != nil {
			t.Fatal(err)
		}
		settings, home := refOverlapGroups(h, pauli.Z)
		md, err := refNewSplitModel(h, settings, home, nil, 0.01)
		if err != nil {
			t.Fatal(err)
		}
		s := 0.0
		pairs := len(settings)
		for i, c := range h.Coeffs() {
			s += math.Abs(c)
			pairs += len(md.refs[i])
		}
		want := s * s
		tol := 4 * float64(pairs) * u * want
		f := make([]float64, len(settings))
		check := func(what string, got float64) {
			t.Helper()
			if math.Abs(got-want) > tol {
				t.Errorf("%d qubits, %d terms, %s: objective %v, (Σ|h_i|)² = %v (tolerance %v)", c.n, c.terms, what, got, want, tol)
			}
		}
		check("sorted insertion's partition", md.shares(f))
		md.sweep(f)
		check("after a round of weight steps", md.shares(f))
		split := 0
		rng := rand.New(rand.NewPCG(uint64(c.n), 11))
		for _, refs := range md.refs {
			sum := 0.0
			for _, r := range refs {
				v := rng.Float64()
				md.alpha[r.g][r.k] = v
				sum += v
			}
			for _, r := range refs {
				md.alpha[r.g][r.k] /= sum
			}
			if len(refs) > 1 {
				split++
			}
		}
		md.refresh()
		check("a random split", md.shares(f))
		if split == 0 {
			t.Errorf("%d qubits, %d terms: no term lies in two groups; the case tests nothing", c.n, c.terms)
		}
	}
}
