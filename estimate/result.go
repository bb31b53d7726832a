package estimate

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/shotplan/shotplan/hamiltonian"
)

// Options tunes the estimators. A nil *Options means the defaults; every
// field's zero value is a default.
type Options struct {
	// Exclude marks terms to leave out of the energy: term i is dropped
	// when Exclude[i] is true, and its |h_i| is added to Result.Bias (for
	// example the truncation set of a certificate). Its mean is still
	// reported. Nil drops nothing; otherwise the length must be the number
	// of terms.
	Exclude []bool

	// Readout, if not nil, mitigates readout error: every sample of term i
	// is divided by Π_{q ∈ supp P_i} (1 − P01_q − P10_q). This removes the
	// bias exactly when flips are independent and symmetric (P01 = P10 on
	// each qubit); otherwise Result.ReadoutBias bounds what remains. The
	// division also scales each term's spread up by the same factor, so the
	// standard error grows. The length must be the qubit count, and
	// P01 + P10 < 1 on every qubit.
	Readout []Readout

	// Confidence is the nominal coverage of Result.ApproxInterval, in
	// (0, 1). Zero means 0.95.
	Confidence float64

	// Split, if not nil, is the coefficient split of the plan the records
	// come from (allocate.Plan.Split, MATH.md §2.5): [Grouped] estimates
	// the terms it lists as Σ_g α_{ig}·mean_g(s_i) over the distinct
	// settings g, and the others as without it. Every setting it names
	// must be in the records (a plan measured in full). The other
	// estimators ignore it.
	Split hamiltonian.Split

	// Batches is the number of batches of the median-of-means estimate used
	// by [UniformShadow] and [BiasedShadow]: the shots, in shot order, are
	// cut into Batches contiguous batches of near-equal size, and the
	// median of the batch means is reported. Zero means 1 (the plain mean).
	// The other estimators ignore it.
	Batches int
}

// Result is an energy estimate.
type Result struct {
	// Energy is the estimate of tr(ρH).
	Energy float64

	// StdErr is a standard error estimated from the data (see the package
	// documentation for how each estimator computes it). It is not a
	// guarantee; see package guarantee for bounds that hold with a stated
	// probability.
	StdErr float64

	// ApproxInterval is Energy ± z·StdErr with z the standard normal
	// quantile for Confidence: an approximate interval from the normal
	// approximation, not a guarantee.
	ApproxInterval [2]float64

	// Confidence is the nominal coverage of ApproxInterval.
	Confidence float64

	// Bias bounds the bias from terms left out: Σ|h_i| over the excluded
	// terms and the terms the estimator has no sample for ([Grouped]: the
	// terms no shot covered, B_0 of MATH.md §2; [BiasedShadow]: terms its
	// distribution never covers). The estimate aims at
	// E − Σ_{left out} h_i o_i, so |E[Energy] − E| ≤ Bias (plus
	// ReadoutBias).
	Bias float64

	// ReadoutBias bounds the bias that readout mitigation leaves when
	// flips are asymmetric: Σ_i |h_i| (Π_{q ∈ supp P_i} (1 + |P10_q − P01_q| /
	// (1 − P01_q − P10_q)) − 1) over the terms in the energy. It is zero
	// without mitigation or with symmetric flips.
	ReadoutBias float64

	// Means[i] is the estimate of ⟨P_i⟩ (mitigated if Options.Readout is
	// set), or NaN when the estimator has none: for [Grouped] and
	// [ImportanceSampling] when Cover[i] is zero, for the shadow estimators
	// when the term can never be covered (a coverable term that no shot
	// covered has the valid estimate 0).
	Means []float64

	// Cover[i] is the number of shots that gave term i a sample (N_i of
	// MATH.md §2; for [ImportanceSampling], the shots that drew term i).
	Cover []int

	// Shots is the number of shots used.
	Shots int
}

// config is the checked form of the options for one estimate.
type config struct {
	exclude     []bool    // nil or one per term
	scale       []float64 // per-term mitigation factor 1/Π λ_q (1 without)
	readoutBias []float64 // per-term bound of the relative bias left by mitigation
	confidence  float64
	z           float64
	batches     int
}

// newConfig checks opts against h and rec.
func newConfig(h *hamiltonian.Hamiltonian, rec *Records, opts *Options, what string) (*config, error) {
	if h == nil || rec == nil {
		return nil, fmt.Errorf("estimate: %s: nil Hamiltonian or records", what)
	}
	if h.Qubits() != rec.Qubits() {
		return nil, fmt.Errorf("estimate: %s: Hamiltonian has %d qubits, records have %d", what, h.Qubits(), rec.Qubits())
	}
	if rec.Len() == 0 {
		// Without a shot there is no estimate, only a zero-width interval
		// around the offset.
		return nil, fmt.Errorf("estimate: %w: %s: the records hold no shot", ErrFormat, what)
	}
	var o Options
	if opts != nil {
		o = *opts
	}
	c := &config{confidence: o.Confidence, batches: o.Batches}
	if c.confidence == 0 {
		c.confidence = 0.95
	}
	if !(c.confidence > 0 && c.confidence < 1) {
		return nil, fmt.Errorf("estimate: %w: %s: confidence %v outside (0, 1)", ErrFormat, what, o.Confidence)
	}
	c.z = distuv.UnitNormal.Quantile(0.5 + c.confidence/2)
	if c.batches == 0 {
		c.batches = 1
	}
	if c.batches < 0 {
		return nil, fmt.Errorf("estimate: %w: %s: %d batches", ErrFormat, what, o.Batches)
	}
	if o.Exclude != nil {
		if len(o.Exclude) != h.Len() {
			return nil, fmt.Errorf("estimate: %w: %s: Exclude has %d entries for %d terms", ErrFormat, what, len(o.Exclude), h.Len())
		}
		c.exclude = o.Exclude
	}
	m := h.Len()
	c.scale = make([]float64, m)
	for i := range c.scale {
		c.scale[i] = 1
	}
	if o.Readout != nil {
		if err := checkReadout(o.Readout, h.Qubits(), what); err != nil {
			return nil, err
		}
		lambda := make([]float64, len(o.Readout))
		ratio := make([]float64, len(o.Readout))
		for q, e := range o.Readout {
			lambda[q] = 1 - e.P01 - e.P10
			if !(lambda[q] > 0) {
				return nil, fmt.Errorf("estimate: %w: %s: qubit %d: P01 + P10 = %v leaves nothing to mitigate (need < 1)", ErrFormat, what, q, e.P01+e.P10)
			}
			ratio[q] = math.Abs(e.P10-e.P01) / lambda[q]
		}
		c.readoutBias = make([]float64, m)
		for i := range m {
			f, r := 1.0, 1.0
			for q := range h.Pauli(i).Support() {
				f *= lambda[q]
				r *= 1 + ratio[q]
			}
			c.scale[i] = 1 / f
			c.readoutBias[i] = r - 1
		}
	}
	return c, nil
}

// excluded reports whether term i is left out by the options.
func (c *config) excluded(i int) bool { return c.exclude != nil && c.exclude[i] }

// finish fills the interval and the bias bounds of r; leftOut reports the
// terms the estimator could not include for lack of samples.
func (c *config) finish(h *hamiltonian.Hamiltonian, r *Result, leftOut func(i int) bool) {
	r.Confidence = c.confidence
	r.ApproxInterval = [2]float64{r.Energy - c.z*r.StdErr, r.Energy + c.z*r.StdErr}
	coef := h.Coeffs()
	for i := range coef {
		switch {
		case c.excluded(i) || leftOut(i):
			r.Bias += math.Abs(coef[i])
		case c.readoutBias != nil:
			r.ReadoutBias += math.Abs(coef[i]) * c.readoutBias[i]
		}
	}
}
