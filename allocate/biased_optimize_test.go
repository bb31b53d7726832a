package allocate_test

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/optimize"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// biasedProxy evaluates the diagonal variance proxy of locally biased
// classical shadows, f(β) = Σ_i h_i² Π_{q ∈ supp P_i} 1/β_q(P_i[q])
// (arXiv:2006.15788, MATH §5.4), letter by letter.
func biasedProxy(h *hamiltonian.Hamiltonian, beta [][3]float64) float64 {
	f := 0.0
	for _, t := range h.Terms() {
		v := t.Coeff * t.Coeff
		for q, l := range t.Pauli.Letters() {
			v /= beta[q][l-pauli.X]
		}
		f += v
	}
	return f
}

// TestBiasedDistributionsMatchGonumOptimize checks the exact coordinate
// descent of BiasedDistributions against a general-purpose optimiser: gonum's
// optimize.Minimize (BFGS) on the same proxy, with each qubit's distribution
// written as a softmax over the letters that terms put on it (letters no term
// uses carry no weight in f, so the optimum gives them zero). The two minima
// must agree to a relative 1e-6, and coordinate descent must not be worse.
func TestBiasedDistributionsMatchGonumOptimize(t *testing.T) {
	cases := []struct {
		name string
		h    *hamiltonian.Hamiltonian
	}{
		{"random 4-qubit 2-local", mustRandomLocal(t, 4, 12, 2, 3)},
		{"random 6-qubit 3-local", mustRandomLocal(t, 6, 30, 3, 5)},
		{"H2 Jordan-Wigner", h2JW(t)},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			h := tc.h
			n := h.Qubits()
			got, err := allocate.BiasedDistributions(h)
			if err != nil {
				t.Fatal(err)
			}
			// used[q][a]: some term puts letter a on qubit q.
			used := make([][3]bool, n)
			for _, term := range h.Terms() {
				for q, l := range term.Pauli.Letters() {
					used[q][l-pauli.X] = true
				}
			}
			toBeta := func(theta []float64) [][3]float64 {
				beta := make([][3]float64, n)
				for q := range n {
					mx := math.Inf(-1)
					for a := range 3 {
						if used[q][a] {
							mx = max(mx, theta[3*q+a])
						}
					}
					s := 0.0
					for a := range 3 {
						if used[q][a] {
							beta[q][a] = math.Exp(theta[3*q+a] - mx)
							s += beta[q][a]
						}
					}
					for a := range 3 {
						beta[q][a] /= s
					}
				}
				return beta
			}
			p := optimize.Problem{
				Func: func(theta []float64) float64 { return biasedProxy(h, toBeta(theta)) },
				Grad: func(grad, theta []float64) {
					// Central differences; the problem is tiny.
					const step = 1e-6
					x := append([]float64(nil), theta...)
					for k := range x {
						x[k] = theta[k] + step
						fp := biasedProxy(h, toBeta(x))
						x[k] = theta[k] - step
						fm := biasedProxy(h, toBeta(x))
						x[k] = theta[k]
						grad[k] = (fp - fm) / (2 * step)
					}
				},
			}
			res, err := optimize.Minimize(p, make([]float64, 3*n), &optimize.Settings{GradientThreshold: 1e-9}, &optimize.BFGS{})
			if err != nil && res == nil {
				t.Fatalf("optimize.Minimize: %v", err)
			}
			fRef := res.F
			fGot := biasedProxy(h, got)
			if fGot > fRef*(1+1e-6) || math.Abs(fGot-fRef) > 1e-6*fRef {
				t.Errorf("proxy at BiasedDistributions = %.12g, gonum BFGS minimum = %.12g (relative difference %.2g, want ≤ 1e-6)", fGot, fRef, math.Abs(fGot-fRef)/fRef)
			}
		})
	}
}

func mustRandomLocal(t *testing.T, n, terms, k int, seed uint64) *hamiltonian.Hamiltonian {
	t.Helper()
	h, err := hamiltonian.RandomLocal(n, terms, k, seed)
	if err != nil {
		t.Fatal(err)
	}
	return h
}
