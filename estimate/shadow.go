package estimate

import (
	"fmt"
	"math"
	"math/bits"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// UniformShadow returns the classical-shadow estimate for settings drawn
// uniformly at random, every qubit's basis independent and uniform on X, Y,
// Z (Huang, Kueng & Preskill, arXiv:2002.08953; MATH.md §5.3). A shot gives
// term i of weight k the value 3^k·s_i when its setting covers the term
// and 0 otherwise, an unbiased estimate of ⟨P_i⟩ whose second moment is
// exactly 3^k. Energy is the median of means (Options.Batches) of the
// single-shot energies X_n = h_0 + Σ_i h_i·(value of term i).
//
// The estimate is unbiased only if the settings really were drawn that way
// (for example by allocate's uniform random strategy); for any other plan
// use [Grouped]. StdErr is the sample standard deviation of the X_n over
// √N, the standard error of their plain mean; X_n are i.i.d. under the
// random draw. It is +Inf with a single shot.
func UniformShadow(h *hamiltonian.Hamiltonian, rec *Records, opts *Options) (*Result, error) {
	c, err := newConfig(h, rec, opts, "UniformShadow")
	if err != nil {
		return nil, err
	}
	wt := make([]float64, h.Len())
	for i := range wt {
		v := 1.0
		for range h.Table().Weight(i) {
			v *= 3 // exact for weights up to 33
		}
		wt[i] = v
	}
	return shadow(h, rec, c, wt, nil)
}

// BiasedShadow returns the locally biased classical-shadow estimate
// (Hadfield, Bravyi, Raymond & Mezzacapo, arXiv:2006.15788; MATH.md §5.4)
// for settings whose qubit q basis was drawn independently from beta[q],
// the probabilities of X, Y and Z in that order. A shot gives term i the
// value s_i·Π_{q ∈ supp P_i} 1/beta[q][P_i(q)] when its setting covers the
// term and 0 otherwise. A term with a zero probability on one of its
// letters can never be covered; it is left out and its |h_i| added to
// Result.Bias. Energy, batches and StdErr are as in [UniformShadow].
//
// BiasedShadow returns an error if beta does not have one distribution per
// qubit (non-negative entries summing to 1 within 1e-9), or if a recorded
// setting has a basis that beta gives probability zero, which shows the
// records were not drawn from beta.
func BiasedShadow(h *hamiltonian.Hamiltonian, rec *Records, beta [][3]float64, opts *Options) (*Result, error) {
	c, err := newConfig(h, rec, opts, "BiasedShadow")
	if err != nil {
		return nil, err
	}
	if len(beta) != h.Qubits() {
		return nil, fmt.Errorf("estimate: %w: BiasedShadow: %d distributions for %d qubits", ErrFormat, len(beta), h.Qubits())
	}
	for q, b := range beta {
		s := 0.0
		for _, p := range b {
			if !(p >= 0 && p <= 1) {
				return nil, fmt.Errorf("estimate: %w: BiasedShadow: qubit %d: probability %v outside [0, 1]", ErrFormat, q, p)
			}
			s += p
		}
		if math.Abs(s-1) > 1e-9 {
			return nil, fmt.Errorf("estimate: %w: BiasedShadow: qubit %d: probabilities sum to %v, want 1", ErrFormat, q, s)
		}
	}
	wt := make([]float64, h.Len())
	for i := range wt {
		v := 1.0
		for q, l := range h.Pauli(i).Letters() {
			p := beta[q][l-pauli.X]
			if p == 0 {
				v = 0
				break
			}
			v /= p
		}
		wt[i] = v
	}
	return shadow(h, rec, c, wt, beta)
}

// shadow computes the inverse-probability estimate with per-term weights
// wt (zero: never coverable). If beta is not nil every recorded setting is
// checked against it.
func shadow(h *hamiltonian.Hamiltonian, rec *Records, c *config, wt []float64, beta [][3]float64) (*Result, error) {
	nShots := rec.Len()
	if nShots == 0 {
		return nil, fmt.Errorf("estimate: shadow estimate: no shots")
	}
	if err := noEntangled(rec, "shadow estimate"); err != nil {
		return nil, err
	}
	k := c.batches
	if k > nShots {
		return nil, fmt.Errorf("estimate: %w: %d batches for %d shots", ErrFormat, k, nShots)
	}
	if beta != nil {
		for g := range rec.Groups() {
			s := rec.Setting(g)
			for q := range s.Qubits() {
				if beta[q][s.At(q)-pauli.X] == 0 {
					return nil, fmt.Errorf("estimate: setting %s has basis %v on qubit %d, which beta gives probability zero", s, s.At(q), q)
				}
			}
		}
	}
	m := h.Len()
	coef := h.Coeffs()
	sw := newSweep(rec, h.Table())

	// batch[p] is the batch of the shot at position p: shot k (in shot
	// order) falls in batch ⌊k·K/N⌋.
	batch := make([]int32, nShots)
	size := make([]int, k)
	for run, start := range rec.runStart {
		end := nShots
		if run+1 < len(rec.runStart) {
			end = rec.runStart[run+1]
		}
		p := sw.off[rec.runGroup[run]] + rec.runPos[run]
		for s := start; s < end; s++ {
			b := s * k / nShots
			batch[p+s-start] = int32(b)
			size[b]++
		}
	}

	res := &Result{Means: make([]float64, m), Cover: make([]int, m), Shots: nShots}
	x := make([]float64, nShots) // single-shot energies X_n by position
	for p := range x {
		x[p] = h.Offset()
	}
	// A covering shot gives term i the value ±v[i] and the energy ±e[i].
	v := make([]float64, m)
	e := make([]float64, m)
	for i := range m {
		v[i] = wt[i] * c.scale[i]
		if !c.excluded(i) {
			e[i] = coef[i] * v[i]
		}
	}
	termSum := make([]float64, m*k) // term i's batch sums at termSum[i*k:]
	// One-shot groups are visited 64 at a time with bit-sliced outcomes;
	// their energies and batches are kept by group.
	xg := make([]float64, 64*sw.words)
	bg := make([]int32, 64*sw.words)
	// wb[kw] is the batch shared by all groups of word kw when they all
	// have one shot, or −1: then a term's batch sum over the word is one
	// signed count.
	wb := make([]int32, sw.words)
	for kw := range wb {
		wb[kw] = -1
	}
	for g := range rec.Groups() {
		bg[g] = batch[sw.off[g]]
		kw := g >> 6
		switch {
		case sw.off[g+1]-sw.off[g] != 1:
			wb[kw] = -2 // never shared
		case g&63 == 0:
			wb[kw] = bg[g]
		case wb[kw] != bg[g]:
			wb[kw] = -2
		}
	}
	pass := &shadowPass{sw: sw, cover: res.Cover, x: x, xg: xg, bg: bg, wb: wb, batch: batch}
	for k0 := 0; k0 < sw.words; k0 += blockWords {
		k1 := min(k0+blockWords, sw.words)
		sw.sliceBlock(k0, k1)
		for i := range m {
			if wt[i] == 0 {
				continue
			}
			rs, ts := sw.rows(i), termSum[i*k:(i+1)*k]
			for kw := k0; kw < k1; kw++ {
				if u := sw.covering(rs, kw); u != 0 {
					pass.addWord(i, kw, k0, u, rs, v[i], e[i], ts)
				}
			}
		}
	}
	for g := range rec.Groups() {
		if sw.off[g+1]-sw.off[g] == 1 {
			x[sw.off[g]] += xg[g]
		}
	}
	bs := make([]float64, k)
	for i := range m {
		if wt[i] == 0 {
			res.Means[i] = math.NaN()
			continue
		}
		for b := range bs {
			bs[b] = termSum[i*k+b] / float64(size[b])
		}
		res.Means[i] = median(bs)
	}
	// Energy: the median over batches of the batch means of X_n.
	clear(bs)
	for p, xn := range x {
		bs[batch[p]] += xn
	}
	for b := range bs {
		bs[b] /= float64(size[b])
	}
	res.Energy = median(bs)
	res.StdErr = math.Inf(1)
	if nShots > 1 {
		res.StdErr = math.Sqrt(sampleVariance(x) / float64(nShots))
	}
	// Terms that can never be covered are left out.
	c.finish(h, res, func(i int) bool { return wt[i] == 0 })
	return res, nil
}

// shadowPass holds the accumulators of the shadow estimate's pass over the
// terms, block of words by block of words.
type shadowPass struct {
	sw    *sweep
	cover []int     // N_i
	x     []float64 // single-shot energies by position (groups of several shots)
	xg    []float64 // single-shot energies of one-shot groups, by group
	bg    []int32   // batches of one-shot groups, by group
	wb    []int32   // batch shared by every one-shot group of a word, or negative
	batch []int32   // batch of each position
}

// addWord adds term i's contributions from the groups u (non-zero) of word
// kw of the sliced block starting at word k0 that cover it (its letter sets
// are rs): the term's value ±vi to its batch sums ts and its energy ±ei to
// the shots' energies.
func (ps *shadowPass) addWord(i, kw, k0 int, u uint64, rs []int32, vi, ei float64, ts []float64) {
	sw := ps.sw
	if one := u & sw.one[kw]; one != 0 {
		ps.cover[i] += bits.OnesCount64(one)
		odd := sw.oddSlice(rs, kw, k0)
		xk, bk := ps.xg[kw<<6:kw<<6+64], ps.bg[kw<<6:kw<<6+64]
		if b := ps.wb[kw]; b >= 0 {
			// One batch for the whole word: the batch sum is one signed
			// count.
			ts[b] += vi * float64(bits.OnesCount64(one)-2*bits.OnesCount64(one&odd))
			for ; one != 0; one &= one - 1 {
				t := bits.TrailingZeros64(one)
				xk[t] += ei - 2*ei*float64(odd>>t&1)
			}
		} else {
			for ; one != 0; one &= one - 1 {
				t := bits.TrailingZeros64(one)
				sign := 1 - 2*float64(odd>>t&1)
				xk[t] += sign * ei
				ts[bk[t]] += sign * vi
			}
		}
	}
	supp, w := sw.termSupp(i), sw.w
	for u &^= sw.one[kw]; u != 0; u &= u - 1 {
		g := kw<<6 + bits.TrailingZeros64(u)
		lo, hi := sw.off[g], sw.off[g+1]
		ps.cover[i] += hi - lo
		for p := lo; p < hi; p++ {
			sign := 1 - 2*float64(pauli.Bits(sw.flat[p*w:(p+1)*w]).Parity(supp))
			ps.x[p] += sign * ei
			ts[ps.batch[p]] += sign * vi
		}
	}
}

// median returns the median of v, reordering v. For an even length it is
// the mean of the two middle values.
func median(v []float64) float64 {
	slices.Sort(v)
	n := len(v)
	if n%2 == 1 {
		return v[n/2]
	}
	return (v[n/2-1] + v[n/2]) / 2
}

// sampleVariance returns the unbiased sample variance of x (len ≥ 2),
// computed from deviations about the first value so that equal values give
// exactly zero.
func sampleVariance(x []float64) float64 {
	mean := 0.0
	for _, v := range x {
		mean += v - x[0]
	}
	mean /= float64(len(x))
	ss := 0.0
	for _, v := range x {
		d := v - x[0] - mean
		ss += d * d
	}
	return ss / float64(len(x)-1)
}
