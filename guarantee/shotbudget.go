package guarantee

import (
	"fmt"
	"github.com/shotplan/shotplan/pauli"
	"math"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/statevec"
)

// ShotBudget is the answer of [BudgetOf]: the shots a plan needs for
// accuracy ε at confidence 1 − δ, counted in copies of that plan (the
// reference plan). A copy of a plan measures every setting of it for as many
// shots again, so R copies of a plan of N_0 shots are the plan with every
// shot count multiplied by R: N_i becomes R·N_i, and V of MATH.md §3.1
// becomes V/R, while the terms the plan never covers stay uncovered.
type ShotBudget struct {
	// Epsilon and Delta are the target: |error| ≤ Epsilon with probability
	// at least 1 − Delta.
	Epsilon, Delta float64
	// Reference is the number of shots of one copy, Settings its distinct
	// settings.
	Reference, Settings int
	// Bias is Σ|h_i| over the terms the plan never covers: no number of
	// copies removes it. Reachable reports Bias < Epsilon; when it is false
	// the shot counts below are zero and the proxy is not evaluated.
	Bias      float64
	Reachable bool

	// Variance is V of one copy (MATH.md §3.1). Copies is the smallest
	// number R of copies whose certificate has Total = Bias +
	// sqrt(2 (V/R) ln(2/δ)) ≤ Epsilon, and Shots = Copies·Reference: the
	// worst-case, a-priori answer. [CertifyPlan] of the plan with every
	// shot count multiplied by Copies certifies Epsilon; with Copies − 1 it
	// does not.
	Variance     float64
	Copies       int
	Shots        int
	ExactShots   float64 // Reference·2 V ln(2/δ)/(Epsilon − Bias)², before rounding up to whole copies
	ProxyCopies  int     // copies for the normal-approximation error bar under the proxy (see ProxyVariance)
	ProxyShots   int     // ProxyCopies·Reference
	AnytimeShots int     // see IIDVariance

	// ProxyVariance is the variance of one copy's grouped estimate (MATH.md
	// §2) in the proxy state, or V (its largest value over all states)
	// without one. ProxyCopies is the smallest R with
	// z·sqrt(ProxyVariance/R) + Bias ≤ Epsilon, z the two-sided normal
	// quantile at 1 − δ: the copies at which the approximate error bar that
	// estimate prints is expected to reach Epsilon if the device's state
	// were the proxy. It is an expectation, not a guarantee.
	ProxyVariance float64
	// IIDVariance is the single-shot variance σ² of the plan's i.i.d. view
	// d = [IIDOf](h, p) (every shot draws its setting from the plan's
	// shares, each term weighed by h_i/f_i), of its shifted values when
	// [ShotBudgetOptions].Baseline is set (d.WithBaseline, MATH.md §4.11), in
	// the proxy state; without one, the upper bound Σ_Q π(Q)(A_Q + |C_Q|)²
	// over all states ([AnytimeBudget] with a nil state). AnytimeShots is
	// ⌈2 σ² ln(2/δ)/(Epsilon − Bias)²⌉, the sample size the anytime route
	// ([Anytime]) tunes its bets for when it knows σ²: the shots at which
	// a normal-width interval at the Hoeffding level reaches Epsilon. Both
	// are [AnytimeBudget] of d. The betting sequence's own price for
	// holding at every time comes on top (measured in BENCHMARKS.md); it
	// is an expectation, not a guarantee.
	IIDVariance float64
	// Baseline reports that IIDVariance and AnytimeShots are of the
	// shifted values ([ShotBudgetOptions].Baseline).
	Baseline bool
	// Proxy names the variance proxy: "worst case" or "state".
	Proxy string
}

// BudgetOf answers "how many shots for accuracy ε?" for the plan p (the
// reference plan, fixed before the data) in time linear in the plan: one
// coverage scan, no re-planning. Deterministic strategies make plans whose
// shot counts grow in proportion to the budget, so copies of one plan at a
// moderate reference budget are the natural unit; the answer is exact about
// copies ("Copies copies of p certify ε") and approximate about the
// strategy's own plan at Shots, which shares out the shots the same way up
// to rounding.
//
// state, if not nil, is the proxy state (2^n amplitudes, for example an
// exact ground state or a Hartree–Fock determinant) for ProxyVariance and
// IIDVariance; nil means the worst case. The plan stays fixed before the
// data, so the a-priori Copies never depends on the proxy. A proxy costs
// one Walsh–Hadamard transform of 2^n Born probabilities per distinct
// setting, n·2^n operations, and needs n ≤ [hamiltonian.MaxExactQubits].
//
// BudgetOf returns an error for ε ≤ 0, δ outside (0, 1), a plan that does
// not match h, or a state of the wrong length. It is [BudgetWith] with
// only a state.
func BudgetOf(h *hamiltonian.Hamiltonian, p *allocate.Plan, eps, delta float64, state []complex128) (*ShotBudget, error) {
	return BudgetWith(h, p, eps, delta, &ShotBudgetOptions{State: state})
}

// ShotBudgetOptions are the optional inputs of [BudgetWith]. The zero value
// (or nil) is the worst case without a baseline.
type ShotBudgetOptions struct {
	// State is the proxy state of [BudgetOf], nil for the worst case.
	State []complex128
	// Baseline, if not nil, holds the constants c_i of every term (one
	// per term of h, each in [−1, 1], for example [BaselineOf] of a
	// Hartree–Fock determinant) that the anytime route shifts its
	// single-shot values by ([IID.WithBaseline], MATH.md §4.11).
	// IIDVariance and AnytimeShots are then those of
	// IIDOf(h, p).WithBaseline(Baseline); the a-priori Copies and the
	// grouped estimate's ProxyVariance do not change.
	Baseline []float64
}

// BudgetWith is [BudgetOf] with options: the proxy state and the baseline
// of the anytime route. It also returns an error for a baseline that
// [IID.WithBaseline] refuses (naming the term).
func BudgetWith(h *hamiltonian.Hamiltonian, p *allocate.Plan, eps, delta float64, opt *ShotBudgetOptions) (*ShotBudget, error) {
	if opt == nil {
		opt = &ShotBudgetOptions{}
	}
	state := opt.State
	switch {
	case h == nil || p == nil:
		return nil, fmt.Errorf("guarantee: nil Hamiltonian or plan")
	case !(eps > 0) || math.IsInf(eps, 0):
		return nil, fmt.Errorf("guarantee: target ε = %v, want a positive number", eps)
	case !validDelta(delta):
		return nil, fmt.Errorf("guarantee: δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	case p.Qubits != h.Qubits():
		return nil, fmt.Errorf("guarantee: plan has %d qubits, Hamiltonian has %d", p.Qubits, h.Qubits())
	}
	c, err := planCoverage(h, p)
	if err != nil {
		return nil, err
	}
	var s []float64
	if c.sp != nil {
		s = c.splitLoads(nil) // MATH.md §2.5
	} else {
		s = c.loads(c.weights(), nil)
	}
	v := c.variance(s)
	b := &ShotBudget{
		Epsilon: eps, Delta: delta, Reference: c.shots, Settings: len(c.settings),
		Variance: v, ProxyVariance: v, IIDVariance: float64(c.shots) * v, Proxy: "worst case",
	}
	for i, n := range c.cover {
		if n == 0 {
			b.Bias += math.Abs(h.Coeff(i))
		}
	}
	if state != nil && len(state) != 1<<h.Qubits() {
		return nil, fmt.Errorf("guarantee: the proxy state has %d amplitudes, want 2^%d", len(state), h.Qubits())
	}
	if opt.Baseline != nil {
		if err := checkBaseline(h, opt.Baseline); err != nil {
			return nil, err
		}
		b.Baseline = true
	}
	margin := eps - b.Bias
	b.Reachable = margin > 0
	if !b.Reachable {
		return b, nil
	}
	if state != nil {
		if err := proxyVariances(c, state, b); err != nil {
			return nil, err
		}
		b.Proxy = "state"
	}
	l := math.Log(2 / delta)
	// Copies: the smallest R with Bias + sqrt(2 V l / R) ≤ ε. The closed
	// form is checked in floating point (as certify computes it) and
	// nudged by one copy either way, so rounding cannot decide it.
	total := func(r float64) float64 { return b.Bias + math.Sqrt(2*(v/r)*l) }
	x := 2 * v * l / (margin * margin)
	b.ExactShots = float64(c.shots) * x
	r, err := wholeCopies(x, c.shots, func(r float64) bool { return total(r) <= eps })
	if err != nil {
		return nil, err
	}
	b.Copies, b.Shots = r, r*c.shots
	z := math.Sqrt2 * math.Erfinv(1-delta)
	xp := z * z * b.ProxyVariance / (margin * margin)
	if b.ProxyCopies, err = wholeCopies(xp, c.shots, func(r float64) bool {
		return z*math.Sqrt(b.ProxyVariance/r)+b.Bias <= eps
	}); err != nil {
		return nil, err
	}
	b.ProxyShots = b.ProxyCopies * c.shots
	// The anytime figures are those of the distribution the anytime route
	// draws from: one path with AnytimeBudget.
	d, err := IIDOf(h, p)
	if err != nil {
		return nil, err
	}
	if d, err = d.WithBaseline(opt.Baseline); err != nil {
		return nil, err
	}
	if b.AnytimeShots, b.IIDVariance, err = AnytimeBudget(d, eps, delta, state); err != nil {
		return nil, err
	}
	return b, nil
}

// wholeCopies returns the smallest whole R ≥ 1 with ok(R), starting from the
// real solution x of the closed form.
func wholeCopies(x float64, shots int, ok func(r float64) bool) (int, error) {
	if x > float64(math.MaxInt/2)/float64(shots) {
		return 0, fmt.Errorf("guarantee: more than %d shots needed", math.MaxInt/2)
	}
	r := max(int(math.Ceil(x)), 1)
	for r > 1 && ok(float64(r-1)) {
		r--
	}
	for !ok(float64(r)) {
		r++
	}
	return r, nil
}

// proxyVariances sets b.ProxyVariance from the state.
//
// For a distinct setting Q let c_i = h_i/N_i and read term i as
// σ_i·χ_{m_i}(b), with χ_m(b) = (−1)^{|b∧m|} the parity of the outcome on
// the term's Z-image m_i and σ_i its sign ([pauli.Setting.Diagonal]). With
// F_Q[m] = Σ_b p_Q(b) χ_m(b), the Walsh–Hadamard transform of the Born
// probabilities, and χ_{m}χ_{m'} = χ_{m⊕m'},
//
//	M1_Q = E_Q[Σ c_i σ_i χ_{m_i}] = Σ_i c_i σ_i F_Q[m_i],
//	M2_Q = E_Q[(Σ c_i σ_i χ_{m_i})²] = Σ_{i,j} c_i c_j σ_i σ_j F_Q[m_i ⊕ m_j].
//
// The grouped estimate of one copy sums m_Q independent shots of each Q, so
// its variance is Σ_Q m_Q (M2_Q − M1_Q²).
func proxyVariances(c *coverage, state []complex128, b *ShotBudget) error {
	h := c.h
	n := h.Qubits()
	if n > hamiltonian.MaxExactQubits || len(state) != 1<<n {
		return fmt.Errorf("guarantee: the proxy state has %d amplitudes, want 2^%d", len(state), n)
	}
	sim, err := estimate.NewSimulator(state, 0, nil)
	if err != nil {
		return fmt.Errorf("guarantee: proxy state: %w", err)
	}
	var sh shotMoments
	grouped := 0.0
	for q, s := range c.settings {
		m1, m2 := sh.of(h, c, q, s, sim)
		grouped += float64(c.mult[q]) * max(m2-m1*m1, 0)
	}
	b.ProxyVariance = grouped
	return nil
}

// shotMoments computes the first two moments of one shot's contribution
// Z = Σ_i (h_i/N_i) s_i of a setting to the grouped estimate (MATH.md §2,
// §2.3; with a split, Z = Σ_i h_i (α_{iq}/m_q) s_i, MATH.md §2.5) in a state, from the Walsh–Hadamard transform of the setting's
// outcome distribution: E[s_i] and E[s_i s_j] are its entries at the masks
// of the bits term i (and j) read. Its slices are scratch space reused from
// call to call.
type shotMoments struct {
	p     []float64
	masks []uint64
	coef  []float64
}

// of returns E[Z] and E[Z²] for setting q (s) of c in the simulator's state.
func (sh *shotMoments) of(h *hamiltonian.Hamiltonian, c *coverage, q int, s pauli.Setting, sim *estimate.Simulator) (m1, m2 float64) {
	tab := h.Table()
	sh.p = sim.Probabilities(sh.p, s)
	statevec.WalshHadamard(sh.p)
	sh.masks, sh.coef = sh.masks[:0], sh.coef[:0]
	for _, i := range c.terms(q) {
		var mask uint64
		sign := 1
		if s.IsLocal() {
			// A local setting reads a term on its support.
			x, z := tab.Words(int(i))
			mask = x[0] | z[0]
		} else {
			d, sg, ok := s.Diagonal(tab.At(int(i)))
			if !ok {
				continue
			}
			_, zz := d.Words()
			mask, sign = zz[0], sg
		}
		sh.masks = append(sh.masks, mask)
		sh.coef = append(sh.coef, float64(sign)*h.Coeff(int(i))*c.u(q, int(i)))
	}
	for a, ma := range sh.masks {
		m1 += sh.coef[a] * sh.p[ma]
		m2 += sh.coef[a] * sh.coef[a]
		for j := a + 1; j < len(sh.masks); j++ {
			m2 += 2 * sh.coef[a] * sh.coef[j] * sh.p[ma^sh.masks[j]]
		}
	}
	return m1, m2
}

// AnytimeBudget returns the exact single-shot variance σ² of d (of X_c
// when d has a baseline, MATH.md §4.11) in the proxy state (2^n
// amplitudes, n ≤ [hamiltonian.MaxExactQubits]) and the shots
// ⌈2 σ² ln(2/δ)/(ε − Bias)²⌉ the anytime route tunes its bets for, the
// formula of [ShotBudget].AnytimeShots; an expectation, not a guarantee.
// It costs one Walsh–Hadamard transform of 2^n Born probabilities per
// setting of d's support.
//
// A nil state means the worst case: σ² is then the upper bound
// Σ_Q π(Q)(A_Q + |C_Q|)² over all states, with A_Q = Σ_{i◁Q, f_i>0}
// |h_i|/f_i and C_Q = Σ_{i◁Q, f_i>0} (h_i/f_i) c_i (0 without a baseline):
// given Q, X_c − h_0 − C = Σ (h_i/f_i) s_i − C_Q lies within A_Q + |C_Q|
// of 0, and Var X_c ≤ E[(X_c − h_0 − C)²] (MATH.md §4.11). A baseline
// never lowers this bound; it pays only near its state.
//
// It returns an error for ε ≤ Bias (shots is then unbounded), δ outside
// (0, 1), or a state of the wrong length.
func AnytimeBudget(d *IID, eps, delta float64, state []complex128) (shots int, variance float64, err error) {
	switch {
	case d == nil || d.h == nil:
		return 0, 0, fmt.Errorf("guarantee: the distribution was not made by NewIID or IIDOf")
	case !(eps > 0) || math.IsInf(eps, 0):
		return 0, 0, fmt.Errorf("guarantee: target ε = %v, want a positive number", eps)
	case !validDelta(delta):
		return 0, 0, fmt.Errorf("guarantee: δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	case !(eps > d.Bias):
		return 0, 0, fmt.Errorf("guarantee: target ε = %v is not above the bias %v of terms π never covers", eps, d.Bias)
	}
	if state == nil {
		variance = d.worstVariance()
	} else {
		n := d.h.Qubits()
		if n > hamiltonian.MaxExactQubits || len(state) != 1<<n {
			return 0, 0, fmt.Errorf("guarantee: the proxy state has %d amplitudes, want 2^%d", len(state), n)
		}
		sim, err := estimate.NewSimulator(state, 0, nil)
		if err != nil {
			return 0, 0, fmt.Errorf("guarantee: proxy state: %w", err)
		}
		variance = d.stateVariance(sim)
	}
	l := math.Log(2 / delta)
	margin := eps - d.Bias
	x := math.Ceil(2 * variance * l / (margin * margin))
	if x > float64(math.MaxInt/2) {
		return 0, variance, fmt.Errorf("guarantee: the anytime route needs more than %d shots", math.MaxInt/2)
	}
	return max(int(x), 1), variance, nil
}

// worstVariance returns Σ_k π_k (A_k + |C_k|)², the bound on Var(X_c)
// over all states of AnytimeBudget with a nil state.
func (d *IID) worstVariance() float64 {
	v := 0.0
	for k := range d.Settings {
		a := 0.0
		for _, x := range d.coef[k] {
			a += math.Abs(x)
		}
		if d.base != nil {
			a += math.Abs(d.shift[k])
		}
		v += d.Prob[k] * a * a
	}
	return v
}

// stateVariance returns Var(X) (Var(X_c) with a baseline) in the
// simulator's state. For setting k let a_j = h_i/f_i of its j-th term, read
// as σ_j χ_{m_j}(b) (see proxyVariances); with F the Walsh–Hadamard
// transform of the Born probabilities, E[s_j] = σ_j F[m_j] and
// E[s_j s_l] = σ_j σ_l F[m_j ⊕ m_l], so
//
//	M1_k = Σ_j a_j (E[s_j] − c_j),
//	M2_k = Σ_{j,l} a_j a_l (E[s_j s_l] − c_j E[s_l] − c_l E[s_j] + c_j c_l),
//
// and Var = Σ_k π_k M2_k − (Σ_k π_k M1_k)².
func (d *IID) stateVariance(sim *estimate.Simulator) float64 {
	tab := d.h.Table()
	var p, e, c []float64
	var masks []uint64
	m1, m2 := 0.0, 0.0
	for k, s := range d.Settings {
		p = sim.Probabilities(p, s)
		statevec.WalshHadamard(p)
		masks, e, c = masks[:0], e[:0], c[:0]
		for j, i := range d.rows[k] {
			var mask uint64
			sign := 1.0
			if s.IsLocal() {
				x, z := tab.Words(i)
				mask = x[0] | z[0]
			} else {
				mask, sign = d.image[k][j], float64(d.sign[k][j])
			}
			masks = append(masks, mask)
			e = append(e, sign)
			ci := 0.0
			if d.base != nil {
				ci = d.base[i]
			}
			c = append(c, ci)
		}
		a := d.coef[k]
		for j, mj := range masks {
			ej := e[j] * p[mj]
			m1 += d.Prob[k] * a[j] * (ej - c[j])
			for l, ml := range masks {
				el := e[l] * p[ml]
				sjl := 1.0
				if j != l {
					sjl = e[j] * e[l] * p[mj^ml]
				}
				m2 += d.Prob[k] * a[j] * a[l] * (sjl - c[j]*el - c[l]*ej + c[j]*c[l])
			}
		}
	}
	return max(m2-m1*m1, 0)
}
