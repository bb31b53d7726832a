package guarantee

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// SeedDistribution returns the distribution every shot of the seed plan sp
// draws its setting from (MATH.md §4.1), for h: uniform bases for
// "random" (§5.3), the plan's per-qubit probabilities for "biased" (§5.4)
// — both by [ProductOf], whose Width is an upper bound — and for
// "importance" (§3.5) the mixture, by [MixtureOf], of every term completed
// with the fill letter, weighted by the plan's weights. It needs none of
// the plan's shots, so it costs the same for 10^3 shots as for 10^9. It
// returns an error if sp is not for h's width and term count.
func SeedDistribution(h *hamiltonian.Hamiltonian, sp *allocate.SeedPlan) (*Randomized, error) {
	switch {
	case h == nil || sp == nil:
		return nil, fmt.Errorf("guarantee: nil Hamiltonian or seed plan")
	case sp.Qubits != h.Qubits():
		return nil, fmt.Errorf("guarantee: seed plan has %d qubits, Hamiltonian has %d", sp.Qubits, h.Qubits())
	case sp.Terms != h.Len():
		return nil, fmt.Errorf("guarantee: seed plan was made for %d terms, Hamiltonian has %d", sp.Terms, h.Len())
	}
	switch sp.Strategy {
	case "random":
		probs := make([][3]float64, h.Qubits())
		for q := range probs {
			probs[q] = [3]float64{1.0 / 3, 1.0 / 3, 1.0 / 3}
		}
		return ProductOf(h, probs)
	case "biased":
		return ProductOf(h, sp.Probs)
	case "importance":
		if len(sp.TermStrings) != len(sp.Weights) || sp.Fill < pauli.X || sp.Fill > pauli.Z {
			return nil, fmt.Errorf("guarantee: importance seed plan with %d terms, %d weights and fill letter %d", len(sp.TermStrings), len(sp.Weights), sp.Fill)
		}
		settings := make([]pauli.Setting, len(sp.TermStrings))
		for i, p := range sp.TermStrings {
			if p.Qubits() != h.Qubits() {
				return nil, fmt.Errorf("guarantee: seed plan term %d has %d qubits, Hamiltonian has %d", i, p.Qubits(), h.Qubits())
			}
			settings[i] = pauli.Complete(p, sp.Fill)
		}
		return MixtureOf(h, settings, sp.Weights)
	}
	return nil, fmt.Errorf("guarantee: seed plan of strategy %q: want random, biased or importance", sp.Strategy)
}

// IIDCertificate is the a-priori bound of MATH.md §4.1 for a plan whose N
// shots each draw their setting independently from a distribution: the
// estimate is the mean of the single-shot values X, each in an interval
// of width Width, so by Hoeffding's inequality it lies within Radius =
// Width·sqrt(ln(2/δ)/(2N)) of its mean with probability at least 1 − δ,
// for every state; its mean differs from E by at most Bias, the one-norm of
// the terms the distribution never covers.
type IIDCertificate struct {
	Shots     int     // N
	Delta     float64 // δ
	Width     float64 // the width of X's range
	Radius    float64 // Width·sqrt(ln(2/δ)/(2N))
	Bias      float64 // Σ|h_i| over the terms with f_i = 0
	Uncovered int     // the number of those terms
	Bound     float64 // Radius + Bias
}

// CertifyIID returns the certificate of N = shots i.i.d. draws from d for
// h at confidence 1 − δ (MATH.md §4.1). It bounds the estimator of §4.1
// (the mean of X), which [RandomizedBound] also bounds from data; the
// certificate of the drawn plan as a fixed plan ([CertifyPlan], §3.1) needs
// its shots. It returns an error for δ outside [MinDelta, 1), shots < 1 or
// a distribution of another term count.
func CertifyIID(h *hamiltonian.Hamiltonian, d *Randomized, shots int, delta float64) (*IIDCertificate, error) {
	switch {
	case h == nil || d == nil:
		return nil, fmt.Errorf("guarantee: nil Hamiltonian or distribution")
	case !validDelta(delta):
		return nil, fmt.Errorf("guarantee: confidence parameter δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	case shots < 1:
		return nil, fmt.Errorf("guarantee: %d shots, want at least 1", shots)
	case len(d.Cover) != h.Len():
		return nil, fmt.Errorf("guarantee: distribution has cover probabilities for %d terms, Hamiltonian has %d", len(d.Cover), h.Len())
	}
	c := &IIDCertificate{Shots: shots, Delta: delta, Width: d.Width}
	for i, f := range d.Cover {
		if f <= 0 {
			c.Bias += math.Abs(h.Coeff(i))
			c.Uncovered++
		}
	}
	// Hoeffding (1963) for the mean of N i.i.d. samples in an interval of
	// width R: P(|mean − E mean| ≥ ε) ≤ 2 exp(−2Nε²/R²) (MATH.md §4.1).
	c.Radius = d.Width * math.Sqrt(math.Log(2/delta)/(2*float64(shots)))
	c.Bound = c.Radius + c.Bias
	return c, nil
}
