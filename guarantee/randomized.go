package guarantee

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Randomized describes a plan whose every shot draws its setting
// independently from one fixed distribution π (MATH.md §4.1): uniformly or
// locally biased random bases, or any plan turned into a mixture. Then the
// single-shot values
//
//	X = h_0 + Σ_{i◁Q, f_i>0} (h_i/f_i) s_i
//
// are i.i.d. with mean E minus the terms π never covers, and lie in an
// interval of width Width.
type Randomized struct {
	// Cover[i] is f_i = Σ_Q π(Q) [P_i ◁ Q], term i's cover probability.
	Cover []float64
	// Width bounds the range of X: 2 max_Q Σ_{i◁Q} |h_i|/f_i over the
	// settings π can draw, or an upper bound on it.
	Width float64

	// accepts reports whether π can draw a setting; nil (a Randomized
	// built by hand) accepts every setting.
	accepts func(pauli.Setting) bool
}

// MixtureOf returns the distribution that draws settings[k] with
// probability weights[k]/Σweights. Width is exact (the largest over the
// settings of positive weight). It returns an error for lengths that
// disagree, a setting of the wrong width, or weights that are negative,
// non-finite or all zero.
func MixtureOf(h *hamiltonian.Hamiltonian, settings []pauli.Setting, weights []float64) (*Randomized, error) {
	if len(settings) != len(weights) {
		return nil, fmt.Errorf("guarantee: %d settings but %d weights", len(settings), len(weights))
	}
	total := 0.0
	for k, w := range weights {
		if !(w >= 0) || math.IsInf(w, 0) {
			return nil, fmt.Errorf("guarantee: setting %d (%s): weight %v, want a finite non-negative number", k, settings[k], w)
		}
		total += w
	}
	if !(total > 0) {
		return nil, fmt.Errorf("guarantee: mixture weights add up to %v, want a positive total", total)
	}
	if h == nil {
		return nil, fmt.Errorf("guarantee: nil Hamiltonian")
	}
	for k, s := range settings {
		if s.Qubits() != h.Qubits() {
			return nil, fmt.Errorf("guarantee: setting %d (%s) has %d qubits, Hamiltonian has %d", k, s, s.Qubits(), h.Qubits())
		}
	}
	f := make([]float64, h.Len())
	tab := h.Table()
	var buf []int
	support := make(map[string]bool)
	for k, s := range settings {
		if weights[k] == 0 {
			continue
		}
		support[s.Key()] = true
		buf = tab.Covered(buf[:0], s)
		for _, i := range buf {
			f[i] += weights[k] / total
		}
	}
	r := &Randomized{Cover: f, accepts: func(s pauli.Setting) bool { return support[s.Key()] }}
	for k, s := range settings {
		if weights[k] == 0 {
			continue
		}
		buf = tab.Covered(buf[:0], s)
		sum := 0.0
		for _, i := range buf {
			sum += math.Abs(h.Coeff(i)) / f[i]
		}
		r.Width = max(r.Width, 2*sum)
	}
	return r, nil
}

// ProductOf returns the distribution that draws qubit q's basis X, Y, Z
// with probabilities probs[q][0], probs[q][1], probs[q][2], independently
// over the qubits (uniform random bases: 1/3 each; MATH.md §5.3, §5.4).
// Then f_i = Π_{q ∈ supp P_i} probs[q][P_i[q]]. Width is the upper bound
// 2 Σ_{f_i>0} |h_i|/f_i: the exact largest range over all settings is a hard
// maximisation, and any upper bound keeps the bounds valid. It returns an
// error if a row is negative, non-finite or does not add up to 1 (within
// 1e-9).
func ProductOf(h *hamiltonian.Hamiltonian, probs [][3]float64) (*Randomized, error) {
	if h == nil {
		return nil, fmt.Errorf("guarantee: nil Hamiltonian")
	}
	if len(probs) != h.Qubits() {
		return nil, fmt.Errorf("guarantee: %d rows of basis probabilities for %d qubits", len(probs), h.Qubits())
	}
	for q, p := range probs {
		sum := 0.0
		for _, v := range p {
			if !(v >= 0) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("guarantee: qubit %d: basis probabilities %v, want finite non-negative numbers", q, p)
			}
			sum += v
		}
		if math.Abs(sum-1) > 1e-9 {
			return nil, fmt.Errorf("guarantee: qubit %d: basis probabilities %v add up to %v, want 1", q, p, sum)
		}
	}
	r := &Randomized{Cover: make([]float64, h.Len())}
	for i := range h.Len() {
		p := h.Pauli(i)
		f := 1.0
		for q := range h.Qubits() {
			if l := p.At(q); l != pauli.I {
				f *= probs[q][l-1]
			}
		}
		r.Cover[i] = f
		if f > 0 {
			r.Width += 2 * math.Abs(h.Coeff(i)) / f
		}
	}
	r.accepts = func(s pauli.Setting) bool {
		if !s.IsLocal() {
			return false // letter-by-letter draws give local settings only
		}
		for q := range s.Qubits() {
			if probs[q][s.At(q)-1] == 0 {
				return false
			}
		}
		return true
	}
	return r, nil
}

// RandomizedBound bounds the error of the mean of the single-shot values X of
// MATH.md §4.1 from records of a randomised plan with distribution d: the
// X_n are i.i.d. in an interval of width d.Width, so a bound for the mean of
// bounded i.i.d. samples applies directly: with form Pooled (the default), a
// variance bound (Maurer & Pontil 2009; MATH.md §4.2) and Bernstein's
// inequality at δ/2 each; with PerGroupAMS the empirical Bernstein bound of
// Audibert, Munos & Szepesvári; with PerGroupMP that of Maurer & Pontil,
// Theorem 4, two-sided. The
// estimate is that mean, and the terms d never covers (f_i = 0) and the
// excluded ones go into the bias. opts.Shares is ignored (one group).
//
// It returns an error for δ outside [MinDelta, 1), records of another width or
// without shots, or a recorded setting d cannot draw.
func RandomizedBound(h *hamiltonian.Hamiltonian, rec *estimate.Records, d *Randomized, delta float64, opts *EmpiricalOptions) (*DataBound, error) {
	var o EmpiricalOptions
	if opts != nil {
		o = *opts
	}
	switch {
	case h == nil || rec == nil || d == nil:
		return nil, fmt.Errorf("guarantee: nil Hamiltonian, records or distribution")
	case !validDelta(delta):
		return nil, fmt.Errorf("guarantee: confidence parameter δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	case rec.Qubits() != h.Qubits():
		return nil, fmt.Errorf("guarantee: records have %d qubits, Hamiltonian has %d", rec.Qubits(), h.Qubits())
	case rec.Len() == 0:
		return nil, fmt.Errorf("guarantee: no shots in the records")
	case len(d.Cover) != h.Len():
		return nil, fmt.Errorf("guarantee: distribution has cover probabilities for %d terms, Hamiltonian has %d", len(d.Cover), h.Len())
	case o.Form < Pooled || o.Form > PerGroupMP:
		return nil, fmt.Errorf("guarantee: unknown empirical form %d", int(o.Form))
	}
	if err := checkExclude(h, o.Exclude); err != nil {
		return nil, err
	}
	coef := make([]float64, h.Len())
	bias := 0.0
	for i, f := range d.Cover {
		if f <= 0 || (o.Exclude != nil && o.Exclude[i]) {
			bias += math.Abs(h.Coeff(i))
			continue
		}
		coef[i] = h.Coeff(i) / f
	}
	all := &groupStat{weight: 1, half: d.Width / 2}
	tab := h.Table()
	var rows, kept []int
	var kcoef []float64
	var buf []int8
	for g := range rec.Groups() {
		s := rec.Setting(g)
		if d.accepts != nil && !d.accepts(s) {
			return nil, fmt.Errorf("guarantee: recorded setting %s cannot be drawn from the distribution", s)
		}
		rows = tab.Covered(rows[:0], s)
		kept, kcoef = kept[:0], kcoef[:0]
		for _, i := range rows {
			if coef[i] != 0 {
				kept = append(kept, i)
				kcoef = append(kcoef, coef[i])
			}
		}
		buf = all.addOutcomes(tab, kept, kcoef, func(j int) pauli.Bits { return rec.Outcome(g, j) }, rec.GroupLen(g), buf)
	}
	return finishBound(h, []*groupStat{all}, bias, rec.Len(), delta, o.Form, nil), nil
}
