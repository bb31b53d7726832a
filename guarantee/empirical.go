package guarantee

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// EmpiricalForm chooses how [Empirical] and [Sequential] turn the spread of
// the data into a bound. Every form is rigorous at the stated confidence for
// a plan fixed before the data (not adaptive).
type EmpiricalForm int

const (
	// Pooled bounds the sum over all shots at once, which grows like the
	// square root of the number of groups instead of linearly (derived
	// here). With probability 1 − δ/2, every group's standard deviation is
	// at most sqrt(V_g) + w_g sqrt(2 ln(2G/δ)/(t_g − 1)) (Maurer & Pontil
	// 2009, their bound on the sample standard deviation, one-sided,
	// rescaled to width w_g, V_g the unbiased sample variance of t_g
	// samples, G groups; MATH.md §4.2, §4.3), capped at the
	// largest possible value w_g/2, which a group of one shot gets. Then
	// Bernstein's inequality for the independent centred shot terms, each
	// within ±b with b the largest group width, bounds the sum at δ/2
	// ([BernsteinRadius] with those variances). The default: it was the
	// tightest form in every case of the package's coverage simulation.
	Pooled EmpiricalForm = iota
	// PerGroupAMS bounds each distinct setting's mean separately with the
	// two-sided empirical Bernstein bound of Audibert, Munos & Szepesvári
	// (2009, Theorem 1; [EmpiricalBernsteinAMS]) at its share of δ, and adds
	// the groups' radii (a union bound over the groups, with the shares of
	// [EmpiricalOptions].Shares).
	PerGroupAMS
	// PerGroupMP is PerGroupAMS with the bound of Maurer & Pontil (2009,
	// Theorem 4; [EmpiricalBernsteinMP]) applied to each side at half the
	// group's share. A group of one shot gets the trivial radius (its
	// interval's width).
	PerGroupMP
	// Residual learns the variance from every shot, also on plans whose
	// settings are measured once (MATH.md §4.7). The shots are split into
	// two folds fixed by the plan (alternate shots in the records' order);
	// each shot's residual about the prediction from the other fold's term
	// means has an expected square at least its variance, so the folds'
	// sums of squared residuals, raised by a lower-tail bound for sums of
	// non-negative variables (Maurer 2003) at δ/4 per fold, bound the
	// variance of the estimate with probability 1 − δ/2,
	// and Bernstein's inequality bounds the sum of the shots' errors at
	// δ/2. A term covered by few shots keeps close to its worst-case
	// variance: on random Pauli plans of molecules the randomised route
	// ([IIDOf], [Anytime]) is far tighter. Only [Empirical] takes it.
	Residual
)

func (f EmpiricalForm) String() string {
	switch f {
	case PerGroupAMS:
		return "per-group empirical Bernstein (Audibert, Munos & Szepesvári 2009), union bound over groups"
	case PerGroupMP:
		return "per-group empirical Bernstein (Maurer & Pontil 2009, Thm 4), union bound over groups"
	case Pooled:
		return "pooled: variance bounds (Maurer & Pontil 2009, Thm 10) and Bernstein's inequality for the sum"
	case Residual:
		return "residual: variance from two-fold residuals (Maurer 2003 lower tail) and Bernstein's inequality for the sum"
	}
	return fmt.Sprintf("EmpiricalForm(%d)", int(f))
}

// EmpiricalOptions adjusts [Empirical]. A nil *EmpiricalOptions means the
// defaults.
type EmpiricalOptions struct {
	// Exclude marks terms left out of the estimate, as
	// estimate.Options.Exclude (for example a [Truncation]'s Drop); their
	// |h_i| is added to the bias. Nil leaves none out.
	Exclude []bool
	// Form chooses the bound; the zero value is Pooled.
	Form EmpiricalForm
	// Shares, if not nil, splits δ over the groups of the records (in the
	// records' group order): with the per-group forms group g gets
	// δ·Shares[g]/ΣShares for its mean, with Pooled half that for its
	// variance bound (the other half of δ goes to the sum). It must be
	// chosen before seeing the data. Nil means equal shares.
	Shares []float64
	// Split, if not nil, is the coefficient split of the plan the records
	// come from (allocate.Plan.Split): the bound is then about the split
	// estimate of estimate.Grouped with the same split, each shot of
	// setting g giving w = Σ_{i◁g, kept} h_i (α_{ig}/m_g) s_i (MATH.md
	// §2.5, §4.3, §4.7), with m_g the records' shots of g. Every setting it
	// names must be in the records. Only [Empirical] takes it.
	Split hamiltonian.Split
}

// DataBound is a bound on the error of the grouped estimate (MATH.md §2)
// from the data: with probability at least 1 − Delta, |Energy − E| ≤ Bound.
type DataBound struct {
	// Energy is the grouped estimate the bound is about (without the
	// excluded terms), and Shots the number of shots it uses.
	Energy float64
	Shots  int
	// Delta is the failure probability.
	Delta float64
	// Radius bounds the statistical error; Bias = Σ|h_i| over the excluded
	// and never-covered terms; Bound = Radius + Bias.
	Radius, Bias, Bound float64
	// Form is the method of Radius.
	Form EmpiricalForm
	// Groups details every distinct setting.
	Groups []GroupBound
	// ApproxRadius is z·(standard error) with z the normal quantile at
	// 1 − Delta/2 and the standard error from the groups' sample variances;
	// from [Empirical], a setting measured once adds its squared
	// leave-one-out residual and a term covered once h_i² (MATH.md §2.2,
	// §4.7): an APPROXIMATE interval from the normal approximation, not a
	// guarantee. It is reported for comparison only.
	ApproxRadius float64
}

// GroupBound is one distinct setting's part of a [DataBound]. Its shots give
// i.i.d. values w = Σ_{i◁Q, kept} (h_i/N_i) s_i in [−Half, Half], and the
// estimate adds Weight times their mean.
type GroupBound struct {
	Setting pauli.Setting
	// Samples is the number of shots of the setting and Weight the factor
	// of their mean in the estimate (equal to Samples for a single batch
	// of data).
	Samples int
	Weight  float64
	// Mean and Variance are the sample mean and the unbiased sample
	// variance (zero for one sample) of w; Half bounds |w|.
	Mean, Variance, Half float64
	// Delta is the group's share of δ (per-group forms) and Radius the
	// bound on |mean − expectation| it gives; Weight·Radius is the group's
	// part of the DataBound's Radius. Pooled: Delta is the share of its
	// variance bound and Radius is zero. Residual: both are zero.
	Delta, Radius float64
}

// groupStat accumulates the values w of one distinct setting.
type groupStat struct {
	setting  pauli.Setting
	weight   float64 // factor of the mean in the estimate
	half     float64 // |w| ≤ half
	t        int
	sum, ssq float64 // Σ (w − shift), Σ (w − shift)²
	shift    float64 // first value, for a stable variance
}

func (g *groupStat) add(w float64) {
	if g.t == 0 {
		g.shift = w
	}
	d := w - g.shift
	g.t++
	g.sum += d
	g.ssq += d * d
}

func (g *groupStat) mean() float64 { return g.shift + g.sum/float64(g.t) }

// variance returns the unbiased sample variance, zero for t < 2.
func (g *groupStat) variance() float64 {
	if g.t < 2 {
		return 0
	}
	m := g.sum / float64(g.t)
	return max(0, (g.ssq-float64(g.t)*m*m)/float64(g.t-1))
}

// addOutcomes adds the w values of outcomes (w words each), where rows
// are the group's kept covered terms in table order and coef their weights.
func (g *groupStat) addOutcomes(tab *pauli.Table, rows []int, coef []float64, out func(j int) pauli.Bits, count int, buf []int8) []int8 {
	if cap(buf) < len(rows) {
		buf = make([]int8, len(rows))
	}
	buf = buf[:len(rows)]
	for j := range count {
		if g.setting.IsLocal() {
			tab.Samples(buf, rows, out(j))
		} else {
			// An entangled setting reads each term through its circuit.
			tab.SettingSamples(buf, rows, g.setting, out(j))
		}
		w := 0.0
		for k, s := range buf {
			w += coef[k] * float64(s)
		}
		g.add(w)
	}
	return buf
}

// radius combines the groups into the statistical radius of the estimate
// at confidence 1 − δ.
func radius(gs []*groupStat, delta float64, form EmpiricalForm, shares []float64) (float64, []GroupBound) {
	out := make([]GroupBound, len(gs))
	total := 0.0
	for _, s := range shares {
		total += s
	}
	share := func(k int) float64 {
		if shares == nil {
			return delta / float64(len(gs))
		}
		return delta * shares[k] / total
	}
	r := 0.0
	switch form {
	case PerGroupAMS, PerGroupMP:
		for k, g := range gs {
			gb := GroupBound{Setting: g.setting, Samples: g.t, Weight: g.weight, Mean: g.mean(), Variance: g.variance(), Half: g.half, Delta: share(k)}
			width := 2 * g.half
			rad := width
			if gb.Delta > 0 && g.half > 0 {
				if form == PerGroupAMS {
					biased := gb.Variance * float64(g.t-1) / float64(g.t)
					rad = min(width, EmpiricalBernsteinAMS(g.t, biased, width, gb.Delta))
				} else if g.t >= 2 {
					rad = min(width, EmpiricalBernsteinMP(g.t, gb.Variance, width, gb.Delta/2))
				}
			}
			if g.half == 0 {
				rad = 0
			}
			gb.Radius = rad
			out[k] = gb
			r += g.weight * rad
		}
	case Pooled, Residual:
		// Residual: the groups are reported as for Pooled, and the caller
		// replaces the radius.
		// Variance bounds at δ/(2G) each, then Bernstein at δ/2 for
		// Σ_g (weight_g/t_g) Σ_{n∈g} (w_n − μ_g).
		v, b := 0.0, 0.0
		for k, g := range gs {
			dv := share(k) / 2
			gb := GroupBound{Setting: g.setting, Samples: g.t, Weight: g.weight, Mean: g.mean(), Variance: g.variance(), Half: g.half, Delta: dv}
			sd := g.half
			if g.t >= 2 && dv > 0 {
				sd = min(sd, math.Sqrt(gb.Variance)+2*g.half*math.Sqrt(2*math.Log(1/dv)/float64(g.t-1)))
			}
			c := g.weight / float64(g.t)
			v += float64(g.t) * c * c * sd * sd
			b = max(b, c*2*g.half)
			out[k] = gb
		}
		if b > 0 {
			r = BernsteinRadius(1, v, b, delta/2)
		}
	}
	return r, out
}

// approxRadius is z_{1−δ/2} · sqrt(Σ_g (weight_g/t_g)² t_g Var_g).
func approxRadius(gs []*groupStat, delta float64) float64 {
	return approxRadiusLOO(gs, delta, 0)
}

// approxRadiusLOO is approxRadius with the variance of the one-shot groups
// (for which Var_g is zero), loo, added.
func approxRadiusLOO(gs []*groupStat, delta, loo float64) float64 {
	v := loo
	for _, g := range gs {
		c := g.weight / float64(g.t)
		v += c * c * float64(g.t) * g.variance()
	}
	return distuv.UnitNormal.Quantile(1-delta/2) * math.Sqrt(v)
}

// groupRows gives the kept covered terms of a group (in table order), their
// weights and half = Σ|weights|, the bound on the group's |w|; the slices
// are valid until the next call.
type groupRows func(q int) (rows []int, coef []float64, half float64)

// prepareGroups builds the groups of c's distinct settings with per-term
// weights coef_i (h_i/N_i, zero for excluded and uncovered terms), reading
// the covered terms from c instead of scanning the table again. The groups
// keep no copy of their terms: the returned groupRows cuts them, one group
// at a time, from c's lists, which it sorts into table order in place
// (the order Table.Covered gives, so every sum runs in that order). A
// group's half is set by the caller from groupRows.
func prepareGroups(c *coverage, coef []float64) ([]*groupStat, groupRows) {
	c.sortTerms()
	gs := make([]*groupStat, len(c.settings))
	for q, s := range c.settings {
		gs[q] = &groupStat{setting: s}
	}
	var rows []int
	var cf []float64
	return gs, func(q int) ([]int, []float64, float64) {
		rows, cf = rows[:0], cf[:0]
		half := 0.0
		for _, i := range c.terms(q) {
			if coef[i] != 0 {
				w := coef[i]
				if c.sp != nil {
					w = c.h.Coeff(int(i)) * c.u(q, int(i)) // MATH.md §2.5
				}
				rows = append(rows, int(i))
				cf = append(cf, w)
				half += math.Abs(w)
			}
		}
		return rows, cf, half
	}
}

// checkExclude validates an exclusion list.
func checkExclude(h *hamiltonian.Hamiltonian, exclude []bool) error {
	if exclude != nil && len(exclude) != h.Len() {
		return fmt.Errorf("guarantee: exclusion list has %d entries, Hamiltonian has %d terms", len(exclude), h.Len())
	}
	return nil
}

// Empirical bounds the error of the grouped estimate from the records of a
// plan of fixed settings (MATH.md §4.3): the shots of one distinct setting Q
// are i.i.d., each giving w = Σ_{i◁Q} (h_i/N_i) s_i in [−s_Q, s_Q], and the
// estimate is h_0 + Σ_Q m_Q · mean_Q(w), so its error is at most
// Σ_Q m_Q |mean_Q(w) − E w| plus the bias of the terms left out. Each group's
// deviation is bounded by an empirical Bernstein bound at its share of δ
// (a union bound over the groups; see [EmpiricalForm] for the forms).
//
// The settings must have been fixed before the data: for an adaptive plan
// the bound does not hold. Empirical returns an error for δ outside (0, 1),
// records of another width, no records, an exclusion list or shares of the
// wrong length, or a negative or non-finite share.
func Empirical(h *hamiltonian.Hamiltonian, rec *estimate.Records, delta float64, opts *EmpiricalOptions) (*DataBound, error) {
	var o EmpiricalOptions
	if opts != nil {
		o = *opts
	}
	if h == nil || rec == nil {
		return nil, fmt.Errorf("guarantee: nil Hamiltonian or records")
	}
	if !validDelta(delta) {
		return nil, fmt.Errorf("guarantee: confidence parameter δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	}
	if rec.Qubits() != h.Qubits() {
		return nil, fmt.Errorf("guarantee: records have %d qubits, Hamiltonian has %d", rec.Qubits(), h.Qubits())
	}
	if rec.Len() == 0 {
		return nil, fmt.Errorf("guarantee: no shots in the records")
	}
	if err := checkExclude(h, o.Exclude); err != nil {
		return nil, err
	}
	if err := checkShares(o.Shares, rec.Groups()); err != nil {
		return nil, err
	}
	if o.Form < Pooled || o.Form > Residual {
		return nil, fmt.Errorf("guarantee: unknown empirical form %d", int(o.Form))
	}
	settings := make([]pauli.Setting, rec.Groups())
	shots := make([]int, rec.Groups())
	for g := range settings {
		settings[g] = rec.Setting(g)
		shots[g] = rec.GroupLen(g)
	}
	// Every group of the records holds shots, so the coverage keeps the
	// groups in their order: distinct setting q is group q.
	c, err := newCoverage(h, settings, shots)
	if err != nil {
		return nil, err
	}
	if err := c.setSplit(o.Split); err != nil {
		return nil, err
	}
	coef, bias := estimatorWeights(h, c.cover, 1, o.Exclude)
	gs, rowsOf := prepareGroups(c, coef)
	var buf []int8
	for g, gr := range gs {
		gr.weight = float64(shots[g])
		rows, cf, half := rowsOf(g)
		gr.half = half
		buf = gr.addOutcomes(h.Table(), rows, cf, func(j int) pauli.Bits { return rec.Outcome(g, j) }, shots[g], buf)
	}
	return fixedBound(h, gs, rowsOf, coef, bias, rec.Len(), delta, o.Form, o.Shares, rec.Outcome), nil
}

// fixedBound finishes the data bound of a fixed plan from groups whose
// weight is their number of shots, rowsOf giving their terms; out(g, j) is
// outcome j of group g.
func fixedBound(h *hamiltonian.Hamiltonian, gs []*groupStat, rowsOf groupRows, coef []float64, bias float64, shots int, delta float64, form EmpiricalForm, shares []float64, out func(g, j int) pauli.Bits) *DataBound {
	b := finishBound(h, gs, bias, shots, delta, form, shares)
	st := residuals(h.Table(), gs, rowsOf, coef, out)
	b.ApproxRadius = approxRadiusLOO(gs, delta, st.loo)
	if form == Residual {
		w := 0.0
		for k, g := range gs {
			w = max(w, 2*g.half)
			b.Groups[k].Delta = 0
		}
		b.Radius = residualRadius(st, w, delta)
		b.Bound = b.Radius + b.Bias
	}
	return b
}

// estimatorWeights returns coef_i = h_i/(scale·N_i) for the terms in the
// estimate (covered and not excluded), zero for the others, and the bias of
// the others.
func estimatorWeights(h *hamiltonian.Hamiltonian, cover []int, scale float64, exclude []bool) ([]float64, float64) {
	coef := make([]float64, h.Len())
	bias := 0.0
	for i, n := range cover {
		if n == 0 || (exclude != nil && exclude[i]) {
			bias += math.Abs(h.Coeff(i))
			continue
		}
		coef[i] = h.Coeff(i) / (scale * float64(n))
	}
	return coef, bias
}

func finishBound(h *hamiltonian.Hamiltonian, gs []*groupStat, bias float64, shots int, delta float64, form EmpiricalForm, shares []float64) *DataBound {
	r, groups := radius(gs, delta, form, shares)
	e := h.Offset()
	for _, g := range gs {
		if g.t > 0 {
			e += g.weight * g.mean()
		}
	}
	return &DataBound{
		Energy: e, Shots: shots, Delta: delta, Radius: r, Bias: bias, Bound: r + bias,
		Form: form, Groups: groups, ApproxRadius: approxRadius(gs, delta),
	}
}

func checkShares(shares []float64, groups int) error {
	if shares == nil {
		return nil
	}
	if len(shares) != groups {
		return fmt.Errorf("guarantee: %d δ shares for %d groups", len(shares), groups)
	}
	sum := 0.0
	for g, s := range shares {
		if !(s >= 0) || math.IsInf(s, 0) {
			return fmt.Errorf("guarantee: δ share %d is %v, want a finite non-negative number", g, s)
		}
		sum += s
	}
	if !(sum > 0) {
		return fmt.Errorf("guarantee: δ shares add up to %v, want a positive total", sum)
	}
	return nil
}
