package guarantee

import (
	"errors"
	"fmt"
	"math"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
)

// ErrBudgetDependent is returned (wrapped) by [PlanBudget] in prefix mode
// when the strategy's plan for a budget is not the start of its plan for a
// larger budget, so that prefixes are not the plans the strategy makes; use
// BudgetOptions.Rerun for such strategies.
var ErrBudgetDependent = errors.New("guarantee: the strategy's plan depends on its budget")

// BudgetOptions describes the search of [PlanBudget].
type BudgetOptions struct {
	// MaxShots is the largest budget considered; it must be positive.
	MaxShots int
	// Rerun selects the rerun search (see PlanBudget); false selects the
	// prefix search.
	Rerun bool
	// Step is the grid of the rerun search: budgets Step, 2·Step, ... and
	// MaxShots. Zero means 1 (every budget).
	Step int
	// Options is passed to [Certify] for the final certificate.
	Options *Options
}

// Budget is the result of [PlanBudget].
type Budget struct {
	// Certified reports that some budget up to MaxShots certifies the
	// target; Shots is the smallest such budget, or MaxShots if none.
	Certified bool
	Shots     int
	// Plan and Certificate are the plan of Shots shots and its certificate.
	Plan        *allocate.Plan
	Certificate *Certificate
	// Evaluated is the number of budgets whose bound was evaluated.
	Evaluated int
}

// PlanBudget finds the smallest number of shots for which strategy a's plan
// for h certifies accuracy eps at confidence 1 − delta: a [Certificate]
// certified bound (radius of MATH.md §3.1 plus bias, nothing dropped) of at most eps.
// V need not fall with every added shot (MATH.md §3.4), so no budget is
// skipped on that assumption: every candidate budget is evaluated.
//
// # Prefix search (the default)
//
// The strategy is run once to MaxShots. For n = 1, 2, ..., MaxShots in turn,
// the first n shots of that plan are certified; the answer is the first n
// whose Bound ≤ eps. V is updated shot by shot (adding a shot of Q changes
// N_i for i ◁ Q, hence s_Q' of every setting Q' seen so far that covers such
// a term), and a budget that passes is re-certified from scratch before it is
// accepted, so rounding cannot decide the answer. A shot costs
// Σ_{i◁Q} #{distinct settings so far covering i}. Finally the strategy is run
// at the answer's budget: if its plan differs from the prefix, the strategy
// plans differently for different budgets (for example sorted insertion,
// whose shares depend on the budget) and PlanBudget returns an error
// wrapping [ErrBudgetDependent].
//
// # Rerun search
//
// The strategy is run afresh at every budget n = Step, 2·Step, ..., and
// MaxShots, and each plan is certified; the answer is the first that
// passes. It is exact over that grid; Step 1 gives the exact smallest
// budget at the cost of MaxShots runs.
//
// Adaptive strategies (those implementing [allocate.Observer]) are refused:
// an a-priori certificate needs a plan fixed before the data (MATH.md §4).
//
// Every candidate budget costs a pass over the plan, so the search is slow
// on molecules at chemical accuracy; [BudgetOf] answers in copies of one
// plan in a single coverage scan.
func PlanBudget(h *hamiltonian.Hamiltonian, a allocate.Allocator, eps, delta float64, s *BudgetOptions) (*Budget, error) {
	switch {
	case h == nil || a == nil || s == nil:
		return nil, fmt.Errorf("guarantee: nil Hamiltonian, strategy or options")
	case !(eps > 0) || math.IsInf(eps, 0):
		return nil, fmt.Errorf("guarantee: target ε = %v, want a positive number", eps)
	case !validDelta(delta):
		return nil, fmt.Errorf("guarantee: δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	case s.MaxShots < 1:
		return nil, fmt.Errorf("guarantee: MaxShots = %d, want at least 1", s.MaxShots)
	case s.Step < 0:
		return nil, fmt.Errorf("guarantee: Step = %d, want 0 or more", s.Step)
	}
	if _, ok := a.(allocate.Observer); ok {
		return nil, fmt.Errorf("guarantee: strategy %s reads outcomes back; its plan is not fixed before the data and has no a-priori certificate", allocate.Name(a))
	}
	if s.Rerun {
		return rerunBudget(h, a, eps, delta, s)
	}
	return prefixBudget(h, a, eps, delta, s)
}

func rerunBudget(h *hamiltonian.Hamiltonian, a allocate.Allocator, eps, delta float64, s *BudgetOptions) (*Budget, error) {
	step := max(s.Step, 1)
	b := &Budget{}
	for n := step; ; n += step {
		n = min(n, s.MaxShots)
		p, err := allocate.Run(h, n, a, nil)
		if err != nil {
			return nil, fmt.Errorf("guarantee: budget %d: %w", n, err)
		}
		c, err := CertifyPlan(h, p, delta, s.Options)
		if err != nil {
			return nil, err
		}
		b.Evaluated++
		b.Shots, b.Plan, b.Certificate = n, p, c
		if c.Bound <= eps {
			b.Certified = true
			return b, nil
		}
		if n == s.MaxShots {
			return b, nil
		}
	}
}

func prefixBudget(h *hamiltonian.Hamiltonian, a allocate.Allocator, eps, delta float64, s *BudgetOptions) (*Budget, error) {
	full, err := allocate.Run(h, s.MaxShots, a, nil)
	if err != nil {
		return nil, fmt.Errorf("guarantee: %w", err)
	}
	c, err := newCoverage(h, full.Settings, full.Shots)
	if err != nil {
		return nil, err
	}
	index := make(map[string]int, len(c.settings))
	for q, st := range c.settings {
		index[st.Key()] = q
	}
	l := math.Log(2 / delta)
	m := h.Len()
	cover := make([]int, m)
	seen := make([][]int32, m) // distinct settings so far covering term i
	mult := make([]int, len(c.settings))
	load := make([]float64, len(c.settings))
	v, bias := 0.0, h.OneNorm()
	b := &Budget{}
	n := 0
	for k, st := range full.Settings {
		q := index[st.Key()]
		rows := c.terms(q)
		for range full.Shots[k] {
			if mult[q] == 0 {
				// A new distinct setting: its load starts at the current
				// a_i of its terms (it has no shots yet, so V is unchanged).
				for _, i := range rows {
					seen[i] = append(seen[i], int32(q))
					if cover[i] > 0 {
						load[q] += math.Abs(h.Coeff(int(i))) / float64(cover[i])
					}
				}
			}
			for _, i := range rows {
				abs := math.Abs(h.Coeff(int(i)))
				old := 0.0
				if cover[i] > 0 {
					old = abs / float64(cover[i])
				} else {
					bias -= abs
				}
				cover[i]++
				da := abs/float64(cover[i]) - old
				for _, r := range seen[i] {
					s0 := load[r]
					load[r] += da
					v += float64(mult[r]) * (load[r]*load[r] - s0*s0)
				}
			}
			mult[q]++
			v += load[q] * load[q]
			n++
			b.Evaluated++
			if max(bias, 0)+math.Sqrt(2*max(v, 0)*l) > eps*(1+1e-9) {
				continue
			}
			// A candidate: certify the prefix exactly.
			p := prefixPlan(full, n)
			cert, err := CertifyPlan(h, p, delta, s.Options)
			if err != nil {
				return nil, err
			}
			if cert.Bound > eps {
				continue
			}
			again, err := allocate.Run(h, n, a, nil)
			if err != nil {
				return nil, fmt.Errorf("guarantee: budget %d: %w", n, err)
			}
			if !samePlan(again, p) {
				return nil, fmt.Errorf("%w: %s at budget %d differs from the first %d shots of its plan for %d; use BudgetOptions.Rerun", ErrBudgetDependent, allocate.Name(a), n, n, s.MaxShots)
			}
			b.Certified, b.Shots, b.Plan, b.Certificate = true, n, p, cert
			return b, nil
		}
	}
	cert, err := CertifyPlan(h, full, delta, s.Options)
	if err != nil {
		return nil, err
	}
	b.Shots, b.Plan, b.Certificate = s.MaxShots, full, cert
	return b, nil
}

// prefixPlan returns the plan of the first n shots of p.
func prefixPlan(p *allocate.Plan, n int) *allocate.Plan {
	out := &allocate.Plan{Qubits: p.Qubits, Stats: p.Stats}
	for k, st := range p.Settings {
		if n == 0 {
			break
		}
		t := min(n, p.Shots[k])
		out.Settings = append(out.Settings, st)
		out.Shots = append(out.Shots, t)
		n -= t
	}
	return out
}

func samePlan(a, b *allocate.Plan) bool {
	if len(a.Settings) != len(b.Settings) {
		return false
	}
	for k := range a.Settings {
		if !a.Settings[k].Equal(b.Settings[k]) || a.Shots[k] != b.Shots[k] {
			return false
		}
	}
	return true
}

// ImportanceShots returns the closed-form budget of single-term importance
// sampling (MATH.md §3.5): every output lies in [−‖h‖_1, ‖h‖_1], so by
// Hoeffding N = ⌈2‖h‖_1² ln(2/δ)/ε²⌉ shots give |error| ≤ ε with probability
// at least 1 − δ, for every state. It is [HoeffdingShots] with width
// 2‖h‖_1, and returns an error unless ε > 0 is finite and 0 < δ < 1, if h
// has no non-identity term, or if the count is beyond math.MaxInt/2.
func ImportanceShots(h *hamiltonian.Hamiltonian, eps, delta float64) (int, error) {
	switch {
	case h == nil || h.Len() == 0:
		return 0, fmt.Errorf("guarantee: Hamiltonian has no non-identity term")
	case !(eps > 0) || math.IsInf(eps, 0):
		return 0, fmt.Errorf("guarantee: ε = %v, want a positive number", eps)
	case !validDelta(delta):
		return 0, fmt.Errorf("guarantee: δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	}
	n := HoeffdingShots(eps, 2*h.OneNorm(), delta)
	if n == math.MaxInt {
		return 0, fmt.Errorf("guarantee: ε = %v with ‖h‖_1 = %v needs more shots than an int holds", eps, h.OneNorm())
	}
	return n, nil
}
