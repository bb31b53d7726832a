package estimate

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/hamiltonian"
)

// ImportanceSampling returns the single-term importance-sampling estimate
// of MATH.md §3.5. Shot n drew term drawn[n] (shots in the order they were
// added to rec) with probability |h_i|/‖h‖₁ and was measured in a setting
// that covers it; its value is X_n = h_0 + ‖h‖₁·sign(h_i)·s_n, an unbiased
// estimate of the energy, and Energy is the mean of the X_n. StdErr is
// their sample standard deviation over √N (+Inf with a single shot); the
// X_n are i.i.d. under the random draw. Means[i] is the mean sample of
// term i over the shots that drew it and Cover[i] the number of those
// shots.
//
// The estimate is unbiased only if the terms were drawn with those
// probabilities; for any other plan use [Grouped]. Excluded terms
// (Options.Exclude) contribute zero. ImportanceSampling returns an error if
// drawn does not have one entry per shot, an entry is not a term index, or
// a shot's setting does not cover its drawn term.
func ImportanceSampling(h *hamiltonian.Hamiltonian, rec *Records, drawn []int, opts *Options) (*Result, error) {
	c, err := newConfig(h, rec, opts, "ImportanceSampling")
	if err != nil {
		return nil, err
	}
	if err := readoutEntangled(opts, rec, "ImportanceSampling"); err != nil {
		return nil, err
	}
	nShots := rec.Len()
	if len(drawn) != nShots {
		return nil, fmt.Errorf("estimate: %d drawn terms for %d shots", len(drawn), nShots)
	}
	if nShots == 0 {
		return nil, fmt.Errorf("estimate: no shots")
	}
	m := h.Len()
	coef := h.Coeffs()
	norm := h.OneNorm()
	t := h.Table()
	res := &Result{Means: make([]float64, m), Cover: make([]int, m), Shots: nShots}
	sums := make([]float64, m)
	x := make([]float64, nShots)
	type image struct {
		mask []uint64
		sign int
	}
	images := make(map[[2]int]image)
	for k, s := range rec.Shots() {
		i := drawn[k]
		if i < 0 || i >= m {
			return nil, fmt.Errorf("estimate: shot %d drew term %d, Hamiltonian has %d terms", k, i, m)
		}
		if !t.CoversRow(i, s.Setting) {
			return nil, fmt.Errorf("estimate: shot %d: setting %s does not cover its drawn term %d (%s)", k, s.Setting, i, h.Pauli(i))
		}
		var v float64
		if s.Setting.IsLocal() {
			v = float64(1 - 2*t.Parity(i, s.Outcome))
		} else {
			// An entangled setting reads term i as sign·(−1)^(parity on
			// its Z-image); the image is found once per (group, term),
			// not conjugated through the circuit every shot.
			key := [2]int{s.Group, i}
			im, ok := images[key]
			if !ok {
				z, sign, _ := s.Setting.Diagonal(t.At(i))
				_, im.mask = z.Words()
				im.sign = sign
				images[key] = im
			}
			v = float64(im.sign * (1 - 2*s.Outcome.Parity(im.mask)))
		}
		v *= c.scale[i]
		res.Cover[i]++
		sums[i] += v
		x[k] = h.Offset()
		if !c.excluded(i) {
			x[k] += norm * math.Copysign(1, coef[i]) * v
		}
	}
	for i := range m {
		if res.Cover[i] == 0 {
			res.Means[i] = math.NaN()
			continue
		}
		res.Means[i] = sums[i] / float64(res.Cover[i])
	}
	mean := 0.0
	for _, v := range x {
		mean += v
	}
	res.Energy = mean / float64(nShots)
	res.StdErr = math.Inf(1)
	if nShots > 1 {
		res.StdErr = math.Sqrt(sampleVariance(x) / float64(nShots))
	}
	// Every term can be drawn, so none is left out for lack of samples:
	// the bias comes from excluded terms only.
	c.finish(h, res, func(int) bool { return false })
	return res, nil
}
