package allocate

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Biased is locally biased random measurement (Hadfield, Bravyi, Raymond &
// Mezzacapo, "Measurements of quantum Hamiltonians with locally-biased
// classical shadows", arXiv:2006.15788; MATH §5.4): every shot draws qubit
// q's letter independently from a distribution β_q on {X, Y, Z}, chosen for
// the Hamiltonian to minimise the diagonal variance proxy
//
//	Σ_i h_i² Π_{q ∈ supp P_i} 1/β_q(P_i[q]).
//
// Init finds β by [BiasedDistributions]; [Biased.Distributions] returns it
// for the estimator of locally biased shadows, which weighs each covered
// term by Π_q 1/β_q(P_i[q]).
//
// # Cost
//
// O(n) per setting, one draw per qubit; the driver then counts the covers of
// the distinct settings. Init runs the optimiser: O(Σ_i k_i) per evaluation
// of the objective and its gradient, k_i being the weight of term i.
//
// The same Seed gives the same plan. The zero value is ready to use.
type Biased struct {
	// Seed seeds the PCG source the strategy draws from.
	Seed uint64

	rng  *rand.Rand
	beta [][3]float64
}

// String returns "biased".
func (b *Biased) String() string { return "biased" }

// Init implements [Allocator]. It optimises the distributions for h.
func (b *Biased) Init(h *hamiltonian.Hamiltonian, budget int) error {
	beta, err := biasedDistributions(h)
	if err != nil {
		return err
	}
	b.beta = beta
	b.rng = rand.New(rand.NewPCG(b.Seed, seedStream))
	return nil
}

// Next implements [Stepper].
func (b *Biased) Next(dst []pauli.Letter) (int, error) {
	drawBiased(b.rng, b.beta, dst)
	return 1, nil
}

// drawBiased draws one basis letter a qubit from its distribution
// probs[q] = (p_X, p_Y, p_Z), one uniform draw of rng per qubit in qubit
// order; [Biased.Next] and the seed plan's regeneration share it so that a
// seed gives the same shots both ways.
func drawBiased(rng *rand.Rand, probs [][3]float64, dst []pauli.Letter) {
	for q := range dst {
		u := rng.Float64()
		p := probs[q]
		switch {
		case u < p[0]:
			dst[q] = pauli.X
		case u < p[0]+p[1]:
			dst[q] = pauli.Y
		default:
			dst[q] = pauli.Z
		}
	}
}

// Distributions returns the per-qubit distributions found by the last Init,
// indexed by qubit, each in the order X, Y, Z; nil before Init. The slice
// must not be modified.
func (b *Biased) Distributions() [][3]float64 { return b.beta }

// BiasedDistributions returns, for every qubit q of h, the distribution β_q
// on {X, Y, Z} (in that order) that minimises the variance proxy of locally
// biased classical shadows, f(β) = Σ_i h_i² Π_{q ∈ supp P_i} 1/β_q(P_i[q])
// (arXiv:2006.15788; MATH §5.4). A qubit no term touches gets the uniform
// distribution; a letter no term puts on a qubit gets probability 0 there.
//
// # Method
//
// Exact block coordinate descent, one qubit at a time from the uniform
// start. With every other qubit's distribution held fixed, f is
// Σ_a A_{q,a}/β_q(a) plus a constant, where A_{q,a} sums h_i² Π_{r≠q}
// 1/β_r(P_i[r]) over the terms with letter a on qubit q. By the
// Cauchy–Schwarz inequality, (Σ_a A_a/β_a)(Σ_a β_a) ≥ (Σ_a sqrt(A_a))², with
// equality at β_q(a) = sqrt(A_{q,a}) / Σ_b sqrt(A_{q,b}) (derived here), so
// each update is the exact minimiser of its block and f never increases.
// f is convex in the logarithms of β (a positive sum of exponentials of
// linear functions) and the blocks are separable, so the sweeps converge to
// the minimum; they stop when a sweep lowers f by less than a relative
// 1e−10, or after 5000 sweeps. A sweep costs O(Σ_i k_i), k_i the weight of
// term i. The result is checked against a general-purpose optimiser,
// gonum's optimize.Minimize (BFGS on a softmax parametrisation), in the
// package tests; coordinate descent is used here because each block has a
// closed-form minimiser and a sweep is linear in the Hamiltonian's size.
//
// It returns an error if h has no non-identity term or the proxy overflows.
func BiasedDistributions(h *hamiltonian.Hamiltonian) ([][3]float64, error) {
	if h == nil || h.Len() == 0 {
		return nil, ErrEmpty
	}
	beta, err := biasedDistributions(h)
	if err != nil {
		return nil, fmt.Errorf("allocate: %w", err)
	}
	return beta, nil
}

// biasedDistributions is [BiasedDistributions] for a Hamiltonian with
// terms; its errors do not name the caller ([Run] prefixes the strategy's
// name, BiasedDistributions its own).
func biasedDistributions(h *hamiltonian.Hamiltonian) ([][3]float64, error) {
	n, m := h.Qubits(), h.Len()
	t := h.Table()
	scale := 0.0
	for _, c := range h.Coeffs() {
		scale = max(scale, math.Abs(c))
	}
	// c[i] = (h_i/scale)² Π_q 1/β_q(P_i[q]) for the current β; qubit q's
	// terms are list[start[q]:start[q+1]], each i<<2 | letter.
	c := make([]float64, m)
	start := make([]int32, n+1)
	for i, v := range h.Coeffs() {
		c[i] = (v / scale) * (v / scale)
		x, z := t.Words(i)
		for q := range supportOf(x, z) {
			start[q+1]++
			c[i] *= 3
		}
	}
	for q := range n {
		start[q+1] += start[q]
	}
	list := make([]int32, start[n])
	fill := append([]int32(nil), start[:n]...)
	for i := range m {
		x, z := t.Words(i)
		for q := range supportOf(x, z) {
			list[fill[q]] = int32(i)<<2 | int32(pauli.LetterAt(x, z, q))
			fill[q]++
		}
	}
	beta := make([][3]float64, n)
	for q := range beta {
		beta[q] = [3]float64{1.0 / 3, 1.0 / 3, 1.0 / 3}
	}
	sum := func() float64 {
		s := 0.0
		for _, v := range c {
			s += v
		}
		return s
	}
	f := sum()
	for sweep := 0; sweep < 5000; sweep++ {
		for q := range n {
			entries := list[start[q]:start[q+1]]
			if len(entries) == 0 {
				continue
			}
			var a [3]float64
			for _, e := range entries {
				l := e&3 - 1
				a[l] += c[e>>2] * beta[q][l]
			}
			norm := math.Sqrt(a[0]) + math.Sqrt(a[1]) + math.Sqrt(a[2])
			var nb [3]float64
			for l := range 3 {
				nb[l] = math.Sqrt(a[l]) / norm
			}
			for _, e := range entries {
				l := e&3 - 1
				c[e>>2] *= beta[q][l] / nb[l]
			}
			beta[q] = nb
		}
		g := sum()
		if math.IsNaN(g) || math.IsInf(g, 0) {
			return nil, fmt.Errorf("variance proxy overflows (%v) while optimising the distributions", g)
		}
		done := f-g <= 1e-10*g
		f = g
		if done {
			break
		}
	}
	return beta, nil
}
