package estimate

import (
	"math"
	"math/bits"

	"github.com/shotplan/shotplan/hamiltonian"
)

// Grouped returns the grouped estimate of MATH.md §2, which works for every
// plan: each term's mean ô_i is the average of its ±1 samples over the N_i
// shots whose setting covers it, and Energy = h_0 + Σ h_i ô_i over the
// covered, not excluded terms.
//
// The standard error estimates Var(Σ_n Y_n) of MATH.md §3.1 from the data.
// The error of the estimate is a sum over shots of Y_n, the shot's
// contribution Z_n = Σ_{i ◁ Q_n} (h_i/N_i) s_{i,n} minus its mean; shots
// are independent and shots of one setting identically distributed, so
// Var(Σ_n Y_n) = Σ_g m_g Var_g(Z) over the distinct settings g with m_g
// shots. Because Z_n sums every term the shot feeds, the covariances of
// terms that share shots are included. A setting with m_g ≥ 2 shots
// contributes m_g times the unbiased sample variance of its Z_n; a setting
// with one shot has no variance of its own, and contributes (Z_n − μ̂_g)²
// with μ̂_g = Σ_{i ◁ Q_g} (h_i/N_i) ô_i, the pooled estimate of its mean
// (slightly low, by a share of order 1/N_i). The settings are taken as
// fixed: for a randomised plan this is the variance given the settings
// drawn, and for an adaptive plan it ignores the adaptation.
//
// Grouped returns an error if the widths differ or the options are invalid.
func Grouped(h *hamiltonian.Hamiltonian, rec *Records, opts *Options) (*Result, error) {
	c, err := newConfig(h, rec, opts, "Grouped")
	if err != nil {
		return nil, err
	}
	m := h.Len()
	ix := newCoverIndex(h.Table())
	coef := h.Coeffs()
	w := ix.w
	cover := make([]int, m)
	ones := make([]int, m)
	var cov []int

	// Pass 1: cover counts and the number of −1 samples of every term.
	for g := range rec.Groups() {
		cov = ix.covered(cov[:0], rec.Setting(g))
		out := rec.out[g]
		mg := len(out) / w
		for _, i := range cov {
			cover[i] += mg
			ones[i] += ix.countOdd(i, out)
		}
	}
	res := &Result{Means: make([]float64, m), Cover: cover, Shots: rec.Len(), Energy: h.Offset()}
	a := make([]float64, m) // a_i = h_i·scale_i/N_i for the terms in the energy
	for i := range m {
		if cover[i] == 0 {
			res.Means[i] = math.NaN()
			continue
		}
		res.Means[i] = c.scale[i] * (1 - 2*float64(ones[i])/float64(cover[i]))
		if !c.excluded(i) {
			a[i] = coef[i] * c.scale[i] / float64(cover[i])
			res.Energy += coef[i] * res.Means[i]
		}
	}

	// Pass 2: every shot's contribution Z_n, and the variance of their sum.
	var (
		ca   []float64 // a_i of the covered terms in the energy
		cs   []uint64  // their support words
		zs   []float64 // Z_n of the group's shots
		vsum float64
	)
	for g := range rec.Groups() {
		cov = ix.covered(cov[:0], rec.Setting(g))
		ca, cs = ca[:0], cs[:0]
		total, mu := 0.0, 0.0
		for _, i := range cov {
			if a[i] == 0 {
				continue
			}
			ca = append(ca, a[i])
			cs = append(cs, ix.supp[i*w:(i+1)*w]...)
			total += a[i]
			mu += a[i] * (1 - 2*float64(ones[i])/float64(cover[i]))
		}
		if len(ca) == 0 {
			continue
		}
		out := rec.out[g]
		mg := len(out) / w
		zs = zs[:0]
		for j := range mg {
			zs = append(zs, total-2*oddSum(ca, cs, out[j*w:(j+1)*w]))
		}
		if mg == 1 {
			d := zs[0] - mu
			vsum += d * d
			continue
		}
		// Deviations from the first shot keep identical values exactly
		// zero apart.
		mean := 0.0
		for _, z := range zs {
			mean += z - zs[0]
		}
		mean /= float64(mg)
		ss := 0.0
		for _, z := range zs {
			d := z - zs[0] - mean
			ss += d * d
		}
		vsum += float64(mg) * ss / float64(mg-1)
	}
	res.StdErr = math.Sqrt(vsum)
	c.finish(h, res, func(i int) bool { return cover[i] == 0 })
	return res, nil
}

// countOdd returns the number of outcomes in out (w words each) with odd
// parity over the support of term i.
func (ix *coverIndex) countOdd(i int, out []uint64) int {
	n := 0
	if ix.w == 1 {
		s := ix.supp[i]
		for _, b := range out {
			n += bits.OnesCount64(b&s) & 1
		}
		return n
	}
	for o := 0; o < len(out); o += ix.w {
		n += ix.parity(i, out[o:o+ix.w])
	}
	return n
}

// oddSum returns Σ_k a[k] over the terms k whose support words (cs, w =
// len(b) words each) have odd parity with outcome b.
func oddSum(a []float64, cs []uint64, b []uint64) float64 {
	s := 0.0
	w := len(b)
	if w == 1 {
		b0 := b[0]
		for k, m := range cs {
			if bits.OnesCount64(b0&m)&1 == 1 {
				s += a[k]
			}
		}
		return s
	}
	for k := range a {
		c := 0
		for i, m := range cs[k*w : (k+1)*w] {
			c += bits.OnesCount64(b[i] & m)
		}
		if c&1 == 1 {
			s += a[k]
		}
	}
	return s
}
