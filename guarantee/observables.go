package guarantee

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Observable is one of several observables estimated from the same shots:
// a name of the caller's choice (for reports) and its qubit operator.
type Observable struct {
	Name string
	H    *hamiltonian.Hamiltonian
}

// AllOptions adjusts [CertifyAll] and [PlanAll]. A nil *AllOptions means
// the defaults.
type AllOptions struct {
	// Split, if not nil, shares δ over the observables: observable k gets
	// δ_k = δ·Split[k]/ΣSplit. It must be fixed before the data. Nil means
	// equal shares δ/K.
	Split []float64
	// Form chooses the data bound of every observable ([Empirical]).
	Form EmpiricalForm
	// Options is passed to [Certify] for the a-priori certificates.
	Options *Options
	// Resolution is the relative precision of the budget [PlanAll] finds:
	// it stops bisecting when the bracket is at most Resolution times the
	// passing budget (each step reruns the strategy). Zero means to the
	// shot.
	Resolution float64
	// Calibration, if not nil, makes every estimate of [CertifyAll]
	// readout-mitigated with the mitigation made from these calibration
	// counts (MATH.md §2.1.1), and every bound that of the mitigated
	// estimate, covering shot noise and the calibration's uncertainty
	// (MATH.md §2.1.2, §4.8): CalibrationDelta of δ is spent once on the
	// calibration intervals, shared by all observables, and the rest is
	// split over the observables. Only the pooled data bound exists for a
	// mitigated estimate (Form must be Pooled).
	Calibration *estimate.Calibration
	// CalibrationDelta is the part of δ spent on the calibration
	// intervals; zero means δ/4. It must be in (0, δ).
	CalibrationDelta float64
	// Rates, if not nil, mitigates with readout rates taken as exact (one
	// per qubit), spending no δ on them; the bounds then hold only if the
	// rates are the true ones. Calibration and Rates exclude each other.
	Rates []estimate.Readout
}

// ObservableBound is one observable's part of a [Simultaneous] result.
type ObservableBound struct {
	Name string
	// Delta is the observable's share δ_k of the failure probability.
	Delta float64
	// Certificate is the a-priori certificate of the plan for this
	// observable at Delta (nil without a plan).
	Certificate *Certificate
	// Estimate is the grouped estimate from the records and Data its data
	// bound at Delta (both nil without records). With readout
	// mitigation ([AllOptions.Calibration] or Rates) they are the
	// mitigated estimate ([estimate.Mitigated]) and its data bound, whose
	// Bias includes the calibration bias.
	Estimate *estimate.Result
	Data     *DataBound
	// Readout holds the bounds of the mitigated estimate when AllOptions
	// asks for readout mitigation, and is nil otherwise; Certificate is
	// then nil and Readout.Certified is the a-priori bound (from the plan,
	// or from the records' settings without a plan). Its ShotDelta is
	// Delta and its CalibrationDelta the shared one.
	Readout *ReadoutBound
}

// Simultaneous holds bounds for several observables that hold together:
// with probability at least 1 − Delta every Certificate's Bound, and (as a
// separate statement, also at 1 − Delta) every Data bound, holds at once.
type Simultaneous struct {
	Delta float64
	// Split[k] is the fraction of Delta − CalibrationDelta given to
	// observable k (they add up to 1): the union bound P(some bound
	// fails) ≤ CalibrationDelta + Σ_k δ_k = Delta.
	Split  []float64
	Bounds []ObservableBound
	// CalibrationDelta is the part of Delta spent on the calibration
	// intervals (zero without AllOptions.Calibration).
	CalibrationDelta float64
}

// CertifiedBound returns the observable's a-priori bound: Readout.Certified
// with readout mitigation, Certificate.Bound otherwise (NaN without a plan
// and without mitigation).
func (b *ObservableBound) CertifiedBound() float64 {
	switch {
	case b.Readout != nil:
		return b.Readout.Certified
	case b.Certificate != nil:
		return b.Certificate.Bound
	}
	return math.NaN()
}

// split returns the normalised shares of δ for k observables.
func split(k int, w []float64) ([]float64, error) {
	out := make([]float64, k)
	if w == nil {
		for i := range out {
			out[i] = 1 / float64(k)
		}
		return out, nil
	}
	if len(w) != k {
		return nil, fmt.Errorf("guarantee: δ split has %d shares for %d observables", len(w), k)
	}
	sum := 0.0
	for i, v := range w {
		if !(v > 0) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("guarantee: δ split share %d is %v, want a positive finite number", i, v)
		}
		sum += v
	}
	for i, v := range w {
		out[i] = v / sum
	}
	return out, nil
}

func checkObservables(obs []Observable) (int, error) {
	if len(obs) == 0 {
		return 0, fmt.Errorf("guarantee: no observables")
	}
	n := -1
	for k, o := range obs {
		if o.H == nil {
			return 0, fmt.Errorf("guarantee: observable %d (%q): nil Hamiltonian", k, o.Name)
		}
		if n >= 0 && o.H.Qubits() != n {
			return 0, fmt.Errorf("guarantee: observable %d (%q) has %d qubits, the first has %d", k, o.Name, o.H.Qubits(), n)
		}
		n = o.H.Qubits()
	}
	return n, nil
}

// CertifyAll certifies several observables measured with the same plan and
// estimated from the same records (MATH.md §4.8). Observable k gets
// δ_k = δ·Split_k; its a-priori certificate ([Certify] on the plan's
// settings and shots) and its data bound ([Empirical] on the records) are
// each at δ_k, so by the union bound all certificates hold together with
// probability at least 1 − δ, and so do all data bounds. The plan may be
// nil (no certificates) or the records (no estimates); not both. The plan
// need not have been made for any one of the observables: terms it never
// covers count in each bound's bias. A coefficient split of the plan
// (Plan.Split) is not used: its weights belong to the terms of the
// Hamiltonian the plan was made for, so every observable is certified and
// estimated as the grouped estimate without a split, whose bounds hold for
// any plan (to certify a plan's own Hamiltonian with its split, use
// [CertifyPlan]).
//
// With AllOptions.Calibration every observable is readout-mitigated by the
// same mitigation (MATH.md §2.1.1) and bounded as in [CalibratedBounds]:
// CalibrationDelta is spent once on the calibration intervals (one event
// for all observables) and δ − CalibrationDelta is split over the
// observables, so all certificates, and separately all data bounds, hold
// together with probability at least 1 − δ (MATH.md §4.8). With
// AllOptions.Rates the rates are taken as exact and all of δ is split.
//
// It returns an error for no observables, observables of different widths,
// a bad split, δ outside [MinDelta, 1), or any error of Certify,
// estimate.Grouped or Empirical, naming the observable.
func CertifyAll(obs []Observable, p *allocate.Plan, rec *estimate.Records, delta float64, opts *AllOptions) (*Simultaneous, error) {
	var o AllOptions
	if opts != nil {
		o = *opts
	}
	n, err := checkObservables(obs)
	if err != nil {
		return nil, err
	}
	if !validDelta(delta) {
		return nil, fmt.Errorf("guarantee: confidence parameter δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	}
	if p == nil && rec == nil {
		return nil, fmt.Errorf("guarantee: CertifyAll needs a plan, records or both")
	}
	if p != nil && p.Qubits != n {
		return nil, fmt.Errorf("guarantee: plan has %d qubits, observables have %d", p.Qubits, n)
	}
	w, err := split(len(obs), o.Split)
	if err != nil {
		return nil, err
	}
	s := &Simultaneous{Delta: delta, Split: w, Bounds: make([]ObservableBound, len(obs))}
	m, dc, err := o.mitigation(n, delta)
	if err != nil {
		return nil, err
	}
	s.CalibrationDelta = dc
	for k, ob := range obs {
		b := ObservableBound{Name: ob.Name, Delta: (delta - dc) * w[k]}
		if !validDelta(b.Delta) {
			return nil, fmt.Errorf("guarantee: observable %d (%q): share δ_k = %v is below MinDelta", k, ob.Name, b.Delta)
		}
		if m != nil {
			if err := mitigatedObservable(&b, ob.H, p, rec, m, dc); err != nil {
				return nil, fmt.Errorf("guarantee: observable %d (%q): %w", k, ob.Name, err)
			}
			s.Bounds[k] = b
			continue
		}
		if p != nil {
			if b.Certificate, err = Certify(ob.H, p.Settings, p.Shots, b.Delta, o.Options); err != nil {
				return nil, fmt.Errorf("guarantee: observable %d (%q): %w", k, ob.Name, err)
			}
		}
		if rec != nil {
			if b.Estimate, err = estimate.Grouped(ob.H, rec, nil); err != nil {
				return nil, fmt.Errorf("guarantee: observable %d (%q): %w", k, ob.Name, err)
			}
			if b.Data, err = Empirical(ob.H, rec, b.Delta, &EmpiricalOptions{Form: o.Form}); err != nil {
				return nil, fmt.Errorf("guarantee: observable %d (%q): %w", k, ob.Name, err)
			}
		}
		s.Bounds[k] = b
	}
	return s, nil
}

// mitigation returns the readout mitigation AllOptions asks for (nil for
// none) and the part of δ spent on the calibration intervals.
func (o AllOptions) mitigation(n int, delta float64) (*estimate.Mitigation, float64, error) {
	switch {
	case o.Calibration == nil && o.Rates == nil:
		if o.CalibrationDelta != 0 {
			return nil, 0, fmt.Errorf("guarantee: calibration δ = %v without a calibration", o.CalibrationDelta)
		}
		return nil, 0, nil
	case o.Calibration != nil && o.Rates != nil:
		return nil, 0, fmt.Errorf("guarantee: both a calibration and exact readout rates given; the calibration measures the rates")
	case o.Form != Pooled:
		return nil, 0, fmt.Errorf("guarantee: a readout-mitigated estimate has only the pooled data bound, not %v", o.Form)
	}
	if o.Rates != nil {
		if len(o.Rates) != n {
			return nil, 0, fmt.Errorf("guarantee: %d readout rates for observables of %d qubits", len(o.Rates), n)
		}
		if o.CalibrationDelta != 0 {
			return nil, 0, fmt.Errorf("guarantee: calibration δ = %v with exact readout rates (no calibration to spend it on)", o.CalibrationDelta)
		}
		m, err := estimate.NewMitigation(estimate.KnownRates(o.Rates))
		return m, 0, err
	}
	if o.Calibration.Qubits() != n {
		return nil, 0, fmt.Errorf("guarantee: calibration of %d qubits, observables have %d", o.Calibration.Qubits(), n)
	}
	dc, err := ReadoutOptions{CalibrationDelta: o.CalibrationDelta}.calibrationDelta(delta)
	if err != nil {
		return nil, 0, err
	}
	m, err := o.Calibration.Mitigation(dc)
	return m, dc, err
}

// mitigatedObservable fills b, whose Delta is the observable's shot δ_k,
// with the mitigated estimate of h and its bounds (MATH.md §2.1.2): the
// certificate from the plan's settings (the records' without a plan) and
// the data bound from the records.
func mitigatedObservable(b *ObservableBound, h *hamiltonian.Hamiltonian, p *allocate.Plan, rec *estimate.Records, m *estimate.Mitigation, dc float64) error {
	var settings []pauli.Setting
	var shots []int
	if p != nil {
		settings, shots = p.Settings, p.Shots
	} else {
		settings, shots = recordSettings(rec)
	}
	r := &ReadoutBound{Delta: dc + b.Delta, CalibrationDelta: dc, ShotDelta: b.Delta, Mitigation: m}
	v := 0.0
	bias, err := mitigatedGroups(h, settings, shots, m, nil, func(_ int, g *mitigatedGroup) {
		s := 0.0
		for j := range g.coef {
			s += math.Abs(g.coef[j]) * g.half[j]
			r.CalibrationBias += float64(g.mult) * math.Abs(g.coef[j]) * g.bias[j]
		}
		v += float64(g.mult) * s * s
	})
	if err != nil {
		return err
	}
	r.Bias, r.Radius = bias, math.Sqrt(2*v*math.Log(2/b.Delta))
	r.Certified = r.Radius + r.CalibrationBias + r.Bias
	if rec != nil {
		if b.Estimate, err = estimate.Mitigated(h, rec, m, nil); err != nil {
			return err
		}
		if b.Data, _, err = MitigatedData(h, rec, m, b.Delta, nil); err != nil {
			return err
		}
		r.Energy, r.Data = b.Data.Energy, b.Data
	}
	b.Readout = r
	return nil
}

// recordSettings returns the distinct settings of rec and their shots.
func recordSettings(rec *estimate.Records) ([]pauli.Setting, []int) {
	settings := make([]pauli.Setting, rec.Groups())
	shots := make([]int, rec.Groups())
	for g := range settings {
		settings[g], shots[g] = rec.Setting(g), rec.GroupLen(g)
	}
	return settings, shots
}

// UnionHamiltonian returns the Hamiltonian Σ_k c_k |O_k|: on every Pauli
// string of any observable the coefficient Σ_k c_k |h_{k,i}|, with no
// offset. Its scaled one-norm (MATH.md §3.2) under any cover counts N_i is
// Σ_k c_k ‖h'_k‖₁, the weighted sum of the observables' scaled one-norms,
// so a strategy that lowers it (the greedy of MATH.md §5.1, sorted
// insertion, ...) plans for all observables at once with the weights c_k
// (MATH.md §4.8). Absolute values keep terms of different observables on
// the same string from cancelling. It returns an error for no observables,
// different widths, or a weight that is negative or not finite.
func UnionHamiltonian(obs []Observable, weights []float64) (*hamiltonian.Hamiltonian, error) {
	n, err := checkObservables(obs)
	if err != nil {
		return nil, err
	}
	if len(weights) != len(obs) {
		return nil, fmt.Errorf("guarantee: %d weights for %d observables", len(weights), len(obs))
	}
	var terms []hamiltonian.Term
	for k, o := range obs {
		c := weights[k]
		if !(c >= 0) || math.IsInf(c, 0) {
			return nil, fmt.Errorf("guarantee: observable %d (%q): weight %v, want a finite number ≥ 0", k, o.Name, c)
		}
		for _, t := range o.H.Terms() {
			t.Coeff = c * math.Abs(t.Coeff)
			terms = append(terms, t)
		}
	}
	return hamiltonian.New(n, 0, terms)
}

// MultiPlan is the result of [PlanAll].
type MultiPlan struct {
	// Met reports that the plan's certificates meet every target.
	Met bool
	// Shots is the plan's budget and Plan the plan (made for Union).
	Shots int
	Plan  *allocate.Plan
	// Weights are the c_k = sqrt(2 ln(2/δ_k))/ε_k of Union.
	Weights []float64
	Union   *hamiltonian.Hamiltonian
	// Certified holds the a-priori certificate of every observable at its
	// δ_k (from [CertifyAll] with the plan).
	Certified *Simultaneous
	// Evaluated is the number of budgets tried.
	Evaluated int
}

// PlanAll plans shots for several observables with their own targets:
// observable k must be certified to ε_k = targets[k] at δ_k (δ split as
// [CertifyAll]), all together at 1 − δ. The strategy a plans for
// [UnionHamiltonian] with weights c_k = sqrt(2 ln(2/δ_k))/ε_k, which makes
// the sum of the observables' relaxed radii over their targets the
// objective (MATH.md §4.8). The budget is found by doubling from 1 up to
// maxShots and then bisecting (to AllOptions.Resolution), rerunning the
// strategy at each budget; a budget is accepted when every observable's
// certificate Bound ≤ ε_k. The returned plan is always checked, but since bounds need not fall with
// every added shot the budget may not be the smallest. If maxShots is not
// enough, the plan of maxShots shots is returned with Met false.
//
// Adaptive strategies are refused (an a-priori certificate needs a fixed
// plan). It returns an error for bad targets, δ, split or maxShots < 1.
func PlanAll(obs []Observable, targets []float64, a allocate.Allocator, delta float64, maxShots int, opts *AllOptions) (*MultiPlan, error) {
	var o AllOptions
	if opts != nil {
		o = *opts
	}
	if _, err := checkObservables(obs); err != nil {
		return nil, err
	}
	switch {
	case a == nil:
		return nil, fmt.Errorf("guarantee: nil strategy")
	case len(targets) != len(obs):
		return nil, fmt.Errorf("guarantee: %d targets for %d observables", len(targets), len(obs))
	case !validDelta(delta):
		return nil, fmt.Errorf("guarantee: δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	case maxShots < 1:
		return nil, fmt.Errorf("guarantee: maxShots = %d, want at least 1", maxShots)
	}
	if _, ok := a.(allocate.Observer); ok {
		return nil, fmt.Errorf("guarantee: strategy %s reads outcomes back; its plan is not fixed before the data and has no a-priori certificate", allocate.Name(a))
	}
	if !(o.Resolution >= 0 && o.Resolution < 1) {
		return nil, fmt.Errorf("guarantee: Resolution = %v, want a number in [0, 1)", o.Resolution)
	}
	w, err := split(len(obs), o.Split)
	if err != nil {
		return nil, err
	}
	weights := make([]float64, len(obs))
	for k, eps := range targets {
		if !(eps > 0) || math.IsInf(eps, 0) {
			return nil, fmt.Errorf("guarantee: observable %d (%q): target ε = %v, want a positive number", k, obs[k].Name, eps)
		}
		dk := delta * w[k]
		if !validDelta(dk) {
			return nil, fmt.Errorf("guarantee: observable %d (%q): share δ_k = %v is below MinDelta", k, obs[k].Name, dk)
		}
		weights[k] = math.Sqrt(2*math.Log(2/dk)) / eps
	}
	union, err := UnionHamiltonian(obs, weights)
	if err != nil {
		return nil, err
	}
	m := &MultiPlan{Weights: weights, Union: union}
	try := func(n int) (bool, error) {
		p, err := allocate.Run(union, n, a, nil)
		if err != nil {
			return false, fmt.Errorf("guarantee: budget %d: %w", n, err)
		}
		s, err := CertifyAll(obs, p, nil, delta, &o)
		if err != nil {
			return false, err
		}
		m.Evaluated++
		ok := true
		for k, b := range s.Bounds {
			ok = ok && b.CertifiedBound() <= targets[k]
		}
		// Keep the smallest passing budget; until one passes, the latest.
		if ok && (!m.Met || n < m.Shots) || !ok && !m.Met {
			m.Met, m.Shots, m.Plan, m.Certified = ok, n, p, s
		}
		return ok, nil
	}
	// Doubling: the first budget that passes, or maxShots.
	lo, hi := 0, 1
	for {
		hi = min(hi, maxShots)
		ok, err := try(hi)
		if err != nil {
			return nil, err
		}
		if ok {
			break
		}
		if hi == maxShots {
			return m, nil
		}
		lo, hi = hi, 2*hi
	}
	// Bisection between a failing lo and a passing hi.
	for hi-lo > max(1, int(o.Resolution*float64(hi))) {
		mid := lo + (hi-lo)/2
		ok, err := try(mid)
		if err != nil {
			return nil, err
		}
		if ok {
			hi = mid
		} else {
			lo = mid
		}
	}
	return m, nil
}
