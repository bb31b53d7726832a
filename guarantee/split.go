package guarantee

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/hamiltonian"
)

// splitState is a coefficient split (MATH.md §2.5) laid over a coverage's
// distinct settings.
type splitState struct {
	split  hamiltonian.Split
	listed []bool
	group  []int     // distinct setting q → its group in split, or −1
	alpha  []float64 // scratch: the weights of group cur, by term
	cur    int       // the distinct setting whose weights alpha holds, or −1
}

// setSplit makes the coverage's per-shot weights those of the split; an
// empty split keeps the implicit ones. It returns an error if the split
// does not fit the Hamiltonian and the settings.
func (c *coverage) setSplit(split hamiltonian.Split) error {
	c.sp = nil
	if len(split) == 0 {
		return nil
	}
	if err := split.Check(c.h, c.settings, c.mult); err != nil {
		return fmt.Errorf("guarantee: %w", err)
	}
	sp := &splitState{split: split, listed: split.Listed(c.h.Len()), group: make([]int, len(c.settings)), alpha: make([]float64, c.h.Len()), cur: -1}
	index := split.Groups()
	for q, s := range c.settings {
		g, ok := index[s.Key()]
		if !ok {
			g = -1
		}
		sp.group[q] = g
	}
	c.sp = sp
	return nil
}

// u returns the per-shot weight of term i in distinct setting q, which
// covers it: 1/N_i (MATH.md §2), or α_{iq}/m_q for a term the split lists
// (MATH.md §2.5).
func (c *coverage) u(q, i int) float64 {
	sp := c.sp
	if sp == nil || !sp.listed[i] {
		return 1 / float64(c.cover[i])
	}
	if sp.cur != q {
		if sp.cur >= 0 {
			if g := sp.group[sp.cur]; g >= 0 {
				for _, t := range sp.split[g].Terms {
					sp.alpha[t] = 0
				}
			}
		}
		if g := sp.group[q]; g >= 0 {
			for k, t := range sp.split[g].Terms {
				sp.alpha[t] = sp.split[g].Weights[k]
			}
		}
		sp.cur = q
	}
	return sp.alpha[i] / float64(c.mult[q])
}

// splitLoads returns s_Q = Σ_{i◁Q, keep} |h_i| u(Q, i) for every distinct
// setting (a nil drop keeps every term): V = Σ_Q m_Q s_Q² is the
// certificate's variance with the split (MATH.md §2.5).
func (c *coverage) splitLoads(drop []bool) []float64 {
	s := make([]float64, len(c.settings))
	for q := range c.settings {
		sum := 0.0
		for _, i := range c.terms(q) {
			if drop == nil || !drop[i] {
				sum += math.Abs(c.h.Coeff(int(i))) * c.u(q, int(i))
			}
		}
		s[q] = sum
	}
	return s
}

// certifySplit is certify for a coverage with a split (MATH.md §2.5):
// V = Σ_g (Σ_i |h_i| α_{ig})²/m_g, term i's share Radius·v_i/V with
// v_i = |h_i| Σ_g m_g s_g u(g, i), and the scaled one-norm
// Σ_i |h_i| r_i, r_i² = Σ_g m_g u(g, i)² = Σ_g α_{ig}²/m_g, which bounds
// sqrt(V) (Cauchy–Schwarz). The truncations are the threshold rule with
// N_i replaced by 1/r_i² and the optimal search of MATH.md §3.3 over the
// terms that rule drops, with the split's per-(term, setting) weights.
func certifySplit(c *coverage, delta float64, opts *Options) *Certificate {
	h := c.h
	l := math.Log(2 / delta)
	sq := math.Sqrt(2 * l)
	s := c.splitLoads(nil)
	v := c.variance(s)
	cert := &Certificate{
		Delta: delta, Shots: c.shots, Settings: len(c.settings), Cover: c.cover,
		Variance: v, Radius: math.Sqrt(2 * v * l),
	}
	load := make([]float64, h.Len())
	r2 := make([]float64, h.Len())
	for q := range c.settings {
		mq := float64(c.mult[q])
		for _, i := range c.terms(q) {
			u := c.u(q, int(i))
			load[i] += mq * s[q] * u
			r2[i] += mq * u * u
		}
	}
	cert.Share = make([]float64, h.Len())
	cert.RelaxedShare = make([]float64, h.Len())
	for i, n := range c.cover {
		abs := math.Abs(h.Coeff(i))
		if n == 0 {
			cert.Uncovered++
			cert.Bias += abs
			cert.Share[i] = abs
			cert.RelaxedShare[i] = abs
			continue
		}
		r := abs * math.Sqrt(r2[i])
		cert.ScaledOneNorm += r
		cert.RelaxedShare[i] = sq * r
		if v > 0 {
			cert.Share[i] = cert.Radius * abs * load[i] / v
		}
	}
	cert.RelaxedRadius = cert.ScaledOneNorm * sq
	cert.Bound = cert.Radius + cert.Bias
	cert.Top = topContributions(c, cert.Share, cert.RelaxedShare, min(opts.top(), h.Len()))
	// Threshold: drop i when r_i > 1/c(δ), i.e. when its relaxed share
	// c(δ)|h_i| r_i exceeds its bias |h_i| (MATH.md §3.3 with 1/r_i² for N_i).
	thr := make([]bool, h.Len())
	for i, n := range c.cover {
		thr[i] = n == 0 || 2*l*r2[i] > 1
	}
	cert.Threshold = evaluateSplit(c, r2, thr, delta, "threshold: drop terms with 2 ln(2/δ)·Σ_g α_ig²/m_g > 1 (coefficient split)")
	eval := func(drop []bool, method string) Truncation { return evaluateSplit(c, r2, drop, delta, method) }
	cert.Optimal = optimalTruncation(c, s, thr, "2 ln(2/δ)·Σ_g α_ig²/m_g > 1 (coefficient split)", eval, delta, opts.enumerate(), opts.searchBudget())
	return cert
}

// splitDropWeights is dropWeights with a split: candidate k (term i) has
// fac[k] = |h_i| and, in setting q = rev[j], rel[j] = u(q, i) — α_{iq}/m_q
// if the split lists i (zero where its group does not), 1/N_i if not — so
// that fac[k]·rel[j] is the product splitLoads adds. The weights are looked
// up by (group, candidate) rather than through u, whose scratch holds one
// setting at a time while rev goes candidate by candidate.
func (c *coverage) splitDropWeights(cand []int, pos []int32, cnt []int, rev []int32) (fac, rel []float64) {
	sp := c.sp
	type key struct{ g, k int32 }
	alpha := make(map[key]float64)
	for g, gr := range sp.split {
		for t, i := range gr.Terms {
			if p := pos[i]; p >= 0 {
				alpha[key{int32(g), p}] = gr.Weights[t]
			}
		}
	}
	fac = make([]float64, len(cand))
	rel = make([]float64, len(rev))
	for k, i := range cand {
		fac[k] = math.Abs(c.h.Coeff(i))
		for j := cnt[k]; j < cnt[k+1]; j++ {
			q := rev[j]
			switch g := sp.group[q]; {
			case !sp.listed[i]:
				rel[j] = 1 / float64(c.cover[i])
			case g >= 0:
				rel[j] = alpha[key{int32(g), int32(k)}] / float64(c.mult[q])
			}
		}
	}
	return fac, rel
}

// evaluateSplit fills the bound of a dropped set under the split; Lower and
// Exact are left for the caller (the search) to set.
func evaluateSplit(c *coverage, r2 []float64, drop []bool, delta float64, method string) Truncation {
	l := math.Log(2 / delta)
	t := Truncation{Drop: drop, Method: method}
	for i, d := range drop {
		abs := math.Abs(c.h.Coeff(i))
		if d {
			t.Dropped++
			t.Bias += abs
			continue
		}
		t.RelaxedRadius += abs * math.Sqrt(r2[i])
	}
	t.RelaxedRadius *= math.Sqrt(2 * l)
	t.Variance = c.variance(c.splitLoads(drop))
	t.Radius = math.Sqrt(2 * t.Variance * l)
	t.Bound = t.Bias + t.Radius
	return t
}
