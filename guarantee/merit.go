package guarantee

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
)

// Merit is the shot cost of a plan's grouped estimate in one state, as the
// figure of merit ε²M: the number of shots M needed for a standard error ε
// is about ε²M/ε² (MATH.md §2.3).
type Merit struct {
	// Shots is M, the plan's total number of shots; Settings its number
	// of distinct settings (the groups g).
	Shots, Settings int
	// PlanValue is M·Var(Ê) for the grouped estimate Ê of MATH.md §2 at
	// the plan's own shot counts: with m_g shots of distinct setting g and
	// N_i = Σ_{g∋i} m_g, Var(Ê) = Σ_g Var(O_g)/m_g where
	// O_g = Σ_{i◁g} (m_g/N_i) h_i P_i, or Σ_{i◁g} α_{ig} h_i P_i with the
	// plan's coefficient split (MATH.md §2.5).
	PlanValue float64
	// Optimal is (Σ_g sqrt(Var(O_g)))², the value of M·Var at the shot
	// fractions f_g ∝ sqrt(Var(O_g)) for the same split O_g of the
	// coefficients (the fractions that minimise Σ_g Var(O_g)/(f_g M) for
	// a fixed split). Optimal ≤ PlanValue by the Cauchy–Schwarz inequality.
	// The estimator that reaches it averages each group's O_g over its
	// own shots with the split fixed; the grouped estimate of MATH.md §2
	// would re-derive the split from the new counts.
	Optimal float64
	// GroupSD[g] is sqrt(Var(O_g)) of distinct setting g (in the order of
	// first use, as [allocate.Plan.Distinct]).
	GroupSD []float64
}

// MeritOf returns the figure of merit ε²M of the plan p for the Hamiltonian
// h in the state (2^n amplitudes, normalised; for example an exact ground
// state), computed exactly from the Born probabilities of every distinct
// setting: one Walsh–Hadamard transform per setting, n·2^n operations each,
// so n ≤ [hamiltonian.MaxExactQubits]. The terms the plan never covers do
// not enter: they are bias, not variance.
//
// With the plan's coefficient split (allocate.Plan.Split, MATH.md §2.5),
// O_g = Σ_{i◁g} α_{ig} h_i P_i: the merit of the split estimator.
//
// MeritOf returns an error for a nil argument, a plan of another width or
// without shots, a split that does not fit it, or a state of the wrong
// length.
func MeritOf(h *hamiltonian.Hamiltonian, p *allocate.Plan, state []complex128) (*Merit, error) {
	switch {
	case h == nil || p == nil:
		return nil, fmt.Errorf("guarantee: nil Hamiltonian or plan")
	case p.Qubits != h.Qubits():
		return nil, fmt.Errorf("guarantee: plan has %d qubits, Hamiltonian has %d", p.Qubits, h.Qubits())
	case h.Qubits() > hamiltonian.MaxExactQubits || len(state) != 1<<h.Qubits():
		return nil, fmt.Errorf("guarantee: the state has %d amplitudes, want 2^%d (at most 2^%d)", len(state), h.Qubits(), hamiltonian.MaxExactQubits)
	}
	c, err := planCoverage(h, p)
	if err != nil {
		return nil, err
	}
	sim, err := estimate.NewSimulator(state, 0, nil)
	if err != nil {
		return nil, fmt.Errorf("guarantee: state: %w", err)
	}
	m := &Merit{Shots: c.shots, Settings: len(c.settings), GroupSD: make([]float64, len(c.settings))}
	var sh shotMoments
	plan, sum := 0.0, 0.0
	for q, s := range c.settings {
		// Z = Σ c_i s_i is one shot's contribution (MATH.md §2).
		m1, m2 := sh.of(h, c, q, s, sim)
		v := max(m2-m1*m1, 0)
		mg := float64(c.mult[q])
		// O_g = m_g·Z, so Var(O_g)/m_g = m_g·Var(Z).
		plan += mg * v
		m.GroupSD[q] = mg * math.Sqrt(v)
		sum += m.GroupSD[q]
	}
	m.PlanValue = float64(c.shots) * plan
	m.Optimal = sum * sum
	return m, nil
}
