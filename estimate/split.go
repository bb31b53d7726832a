package estimate

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// groupedSplit is [Grouped] with a coefficient split (MATH.md §2.5): term
// i's mean is Σ_g α_{ig}·mean_g(s_i) over the distinct settings g of the
// records, with the split's weights for the terms it lists and
// α_{ig} = m_g/N_i for the others. One shot of g contributes
// Z = Σ_i c_{ig} s_i, c_{ig} = h_i α_{ig}/m_g, and the standard error is
// estimated as in Grouped from the Z of every shot (MATH.md §2.2 with
// c_{ig} in place of h_i/N_i; a setting's variance from running sums, as
// a [Stream] keeps them). It reads every (shot, covered term) pair once
// per pass, two passes.
func groupedSplit(h *hamiltonian.Hamiltonian, rec *Records, c *config, split hamiltonian.Split) (*Result, error) {
	G := rec.Groups()
	settings := make([]pauli.Setting, G)
	shots := make([]int, G)
	for g := range G {
		settings[g], shots[g] = rec.Setting(g), rec.GroupLen(g)
	}
	if err := split.Check(h, settings, shots); err != nil {
		return nil, fmt.Errorf("estimate: Grouped: the records do not fit the split: %w", err)
	}
	m := h.Len()
	tab := h.Table()
	coef := h.Coeffs()
	listed := split.Listed(m)
	index := split.Groups()
	rows := make([][]int, G)
	res := &Result{Means: make([]float64, m), Cover: make([]int, m), Shots: rec.Len(), Energy: h.Offset()}
	for g, s := range settings {
		rows[g] = tab.Covered(nil, s)
		for _, i := range rows[g] {
			res.Cover[i] += shots[g]
		}
	}
	// Pass 1: every group's sums of the samples of its terms; the plain
	// sums (over all shots) for the leave-one-out residuals.
	plain := make([]float64, m)
	gsum := make([][]float64, G)
	var buf []int8
	samples := func(g, j int) []int8 {
		if cap(buf) < len(rows[g]) {
			buf = make([]int8, len(rows[g]))
		}
		buf = buf[:len(rows[g])]
		tab.SettingSamples(buf, rows[g], settings[g], rec.Outcome(g, j))
		return buf
	}
	for g := range G {
		gsum[g] = make([]float64, len(rows[g]))
		for j := range shots[g] {
			for k, s := range samples(g, j) {
				gsum[g][k] += float64(s)
			}
		}
		for k, i := range rows[g] {
			plain[i] += gsum[g][k]
		}
	}
	// Weights α_{ig} and the per-shot coefficients c_{ig} of the terms in
	// the energy (zero for the others).
	alpha := make([]float64, m) // scratch: group g's split weights by term
	cg := make([][]float64, G)
	for g := range G {
		gi, ok := index[settings[g].Key()]
		if ok {
			for k, i := range split[gi].Terms {
				alpha[i] = split[gi].Weights[k]
			}
		}
		cg[g] = make([]float64, len(rows[g]))
		mg := float64(shots[g])
		for k, i := range rows[g] {
			a, u := mg/float64(res.Cover[i]), 1/float64(res.Cover[i])
			if listed[i] {
				a, u = alpha[i], alpha[i]/mg
			}
			// The term's mean gathers α_{ig}·mean_g(s_i).
			res.Means[i] += a * gsum[g][k] / mg
			if !c.excluded(i) {
				// h_i·u_{ig}, u = α_{ig}/m_g or 1/N_i, rounded as the
				// data bounds of package guarantee weigh a shot's sample.
				cg[g][k] = coef[i] * u * c.scale[i]
			}
		}
		if ok {
			for _, i := range split[gi].Terms {
				alpha[i] = 0
			}
		}
	}
	c.finishSplitMeans(coef, res)
	// Pass 2: Z of every shot; the sample variance of a group with two or
	// more shots, the squared leave-one-out residual of a one-shot group,
	// and c² for a term covered by a single shot (MATH.md §2.2).
	vsum := 0.0
	var z []float64
	for g := range G {
		z = z[:0]
		for j := range shots[g] {
			v, r := 0.0, 0.0
			for k, s := range samples(g, j) {
				ck := cg[g][k]
				if ck == 0 {
					continue
				}
				i := rows[g][k]
				v += ck * float64(s)
				if shots[g] == 1 {
					if n := res.Cover[i]; n > 1 {
						r += ck * (float64(s) - (plain[i]-float64(s))/float64(n-1))
					} else {
						vsum += ck * ck // no data on its spread: Var(s) ≤ 1
					}
				}
			}
			z = append(z, v)
			if shots[g] == 1 {
				vsum += r * r
			}
		}
		if len(z) > 1 {
			vsum += float64(len(z)) * runningVariance(z)
		}
	}
	res.StdErr = math.Sqrt(vsum)
	c.finish(h, res, func(i int) bool { return res.Cover[i] == 0 })
	return res, nil
}

// finishSplitMeans completes the means of a split estimate, which hold
// Σ_g α_{ig}·mean_g(s_i) (MATH.md §2.5): NaN for a term no shot covers,
// otherwise times the term's scale, and adds h_i·ô_i of every term not
// excluded to the energy. groupedSplit and the streamed estimate share it.
func (c *config) finishSplitMeans(coef []float64, res *Result) {
	for i := range res.Means {
		if res.Cover[i] == 0 {
			res.Means[i] = math.NaN()
			continue
		}
		res.Means[i] *= c.scale[i]
		if !c.excluded(i) {
			res.Energy += coef[i] * res.Means[i]
		}
	}
}
