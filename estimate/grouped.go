package estimate

import (
	"math"
	"math/bits"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/workshare"
	"github.com/shotplan/shotplan/pauli"
)

// groupedSplitMin is the least work, in terms times words of group sets,
// that Grouped shares among goroutines: below it one core does both passes.
const groupedSplitMin = 1 << 20

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
// contributes m_g times the unbiased sample variance of its Z_n. A setting
// with one shot has no variance of its own; it contributes the square of
// its leave-one-out residual R_g = Σ_{i ◁ Q_g} (h_i/N_i)(s_{i,g} − ô_i^{(−g)}),
// where ô_i^{(−g)} is term i's mean over its other N_i − 1 shots. For a
// single term E[R_g²] = Var(s_i)·N_i/(N_i − 1), so this errs on the high
// side by that factor rather than on the low side as the residual from ô_i
// itself would. A term covered by a single shot (N_i = 1) leaves nothing to
// compare with; it adds h_i² (times the square of the mitigation factor),
// the largest variance a ±1 sample can have, and its covariance with other
// terms is ignored. The
// settings are taken as fixed: for a randomised plan this is the variance
// given the settings drawn, and for an adaptive plan it ignores the
// adaptation.
//
// The work is two passes over the (term, shot) samples, each with about
// weight·G/64 word operations per term for G distinct settings; memory is
// a few words per shot. Entangled settings ([pauli.NewFamilySetting]) are
// handled apart: their covered terms are found through their circuits, and
// each term is read as the sign times the parity of the outcome on its
// Z-image; readout mitigation (Options.Readout) is refused for them.
//
// With Options.Split, the terms the split lists are estimated with its
// weights (MATH.md §2.5) by a plainer two-pass loop over every (shot,
// covered term) pair, and the standard error is formed in the same way
// from each shot's Z_n = Σ_i (h_i α_{ig}/m_g) s_{i,n}.
//
// Grouped returns an error if the widths differ, the records hold no shot
// (wrapping [ErrFormat]), the options are invalid or the records do not fit
// the split (a setting it names is missing, or it fails
// [hamiltonian.Split.Check]).
func Grouped(h *hamiltonian.Hamiltonian, rec *Records, opts *Options) (*Result, error) {
	c, err := newConfig(h, rec, opts, "Grouped")
	if err != nil {
		return nil, err
	}
	if err := readoutEntangled(opts, rec, "Grouped"); err != nil {
		return nil, err
	}
	if opts != nil && len(opts.Split) > 0 {
		return groupedSplit(h, rec, c, opts.Split)
	}
	m := h.Len()
	coef := h.Coeffs()
	sw := newSweep(rec, h.Table())
	res := &Result{Means: make([]float64, m), Cover: make([]int, m), Shots: rec.Len(), Energy: h.Offset()}
	// Pass 1, by blocks of groups: cover counts and the number of −1
	// samples of every term. The blocks are shared among GOMAXPROCS
	// goroutines, each with its own counts (integers, added up after, so
	// the result does not depend on the split).
	ones := make([]int, m)
	w := sw.w
	workers := 1
	if int64(m)*int64(sw.words) >= groupedSplitMin {
		workers = workshare.Workers(sw.words, blockWords)
	}
	partCover, partOnes := make([][]int, workers), make([][]int, workers)
	workshare.PerWorker(sw.words, blockWords, workers, func(wk int) func(k0, k1 int) {
		cover, on := res.Cover, ones
		if wk > 0 {
			cover, on = make([]int, m), make([]int, m)
			partCover[wk], partOnes[wk] = cover, on
		}
		slice := sw.newSlice()
		return func(k0, k1 int) {
			// One-shot groups are counted 64 at a time: the parities of
			// their outcomes on a term's qubits are XORs of bit-sliced
			// outcomes.
			sw.sliceInto(slice, k0, k1)
			for i := range m {
				rs, supp := sw.rows(i), sw.termSupp(i)
				n, odd := 0, 0
				for k := k0; k < k1; k++ {
					v := sw.covering(rs, k)
					if v == 0 {
						continue
					}
					if one := v & sw.one[k]; one != 0 {
						n += bits.OnesCount64(one)
						odd += bits.OnesCount64(one & oddIn(slice, rs, k, k0))
						v &^= one
					}
					for ; v != 0; v &= v - 1 {
						g := k<<6 + bits.TrailingZeros64(v)
						lo, hi := sw.off[g], sw.off[g+1]
						n += hi - lo
						odd += countOdd(sw.flat[lo*w:hi*w], supp)
					}
				}
				cover[i] += n
				on[i] += odd
			}
		}
	})
	for wk := 1; wk < workers; wk++ {
		for i := range m {
			res.Cover[i] += partCover[wk][i]
			ones[i] += partOnes[wk][i]
		}
	}
	eg := entangledGroups(rec, h.Table())
	groupedEntangledCounts(sw, eg, res.Cover, ones)
	// a_i = h_i·scale_i/N_i for the terms in the energy, zero for the
	// others; raw_i the unmitigated mean.
	a := make([]float64, m)
	raw := make([]float64, m)
	for i := range m {
		n := res.Cover[i]
		if n == 0 {
			res.Means[i] = math.NaN()
			continue
		}
		raw[i] = 1 - 2*float64(ones[i])/float64(n)
		res.Means[i] = c.scale[i] * raw[i]
		if !c.excluded(i) {
			a[i] = coef[i] * c.scale[i] / float64(n)
			res.Energy += coef[i] * res.Means[i]
		}
	}

	// Pass 2, by blocks of groups: Z_n of every shot of a many-shot group,
	// by position, and the leave-one-out residual R_g of every one-shot
	// group (see above), by group.
	z := make([]float64, rec.Len())
	r := make([]float64, 64*sw.words) // by group; padded to whole words
	vsum := 0.0
	for i := range m {
		if a[i] != 0 && res.Cover[i] == 1 {
			vsum += a[i] * a[i] // no data on its spread: the bound Var(s) ≤ 1
		}
	}
	// The blocks are shared among the goroutines as in pass 1: a block
	// writes only the z of its groups' shots and the r of its groups, each
	// summed over the terms in table order as on one core.
	workshare.PerWorker(sw.words, blockWords, workers, func(int) func(k0, k1 int) {
		slice := sw.newSlice()
		return func(k0, k1 int) {
			sw.sliceInto(slice, k0, k1)
			for i := range m {
				ai := a[i]
				if ai == 0 {
					continue
				}
				rs, supp := sw.rows(i), sw.termSupp(i)
				n := res.Cover[i]
				// A one-shot group adds d_i·(s − raw_i) = base − step·odd,
				// with d_i = a_i·N_i/(N_i − 1), zero for N_i = 1.
				di := 0.0
				if n > 1 {
					di = ai * float64(n) / float64(n-1)
				}
				base, step := di*(1-raw[i]), 2*di
				for k := k0; k < k1; k++ {
					v := sw.covering(rs, k)
					if v == 0 {
						continue
					}
					if one := v & sw.one[k]; one != 0 && di != 0 {
						odd := oddIn(slice, rs, k, k0)
						rk := r[k<<6 : k<<6+64]
						for ; one != 0; one &= one - 1 {
							t := bits.TrailingZeros64(one)
							rk[t] += base - step*float64(odd>>t&1)
						}
					}
					for v &^= sw.one[k]; v != 0; v &= v - 1 {
						g := k<<6 + bits.TrailingZeros64(v)
						lo, hi := sw.off[g], sw.off[g+1]
						addSamples(z[lo:hi], sw.flat[lo*w:hi*w], supp, ai)
					}
				}
			}
		}
	})
	groupedEntangledSums(sw, eg, a, raw, res.Cover, z, r)
	for g := range rec.Groups() {
		if zs := z[sw.off[g]:sw.off[g+1]]; len(zs) > 1 {
			vsum += float64(len(zs)) * runningVariance(zs)
		} else {
			vsum += r[g] * r[g]
		}
	}
	res.StdErr = math.Sqrt(vsum)
	c.finish(h, res, func(i int) bool { return res.Cover[i] == 0 })
	return res, nil
}

// countOdd returns the number of outcomes in out (len(supp) words each)
// with odd parity over the support words supp.
func countOdd(out, supp []uint64) int {
	n := 0
	if len(supp) == 1 {
		s := supp[0]
		for _, b := range out {
			n += bits.OnesCount64(b&s) & 1
		}
		return n
	}
	w := len(supp)
	for j := 0; j < len(out); j += w {
		n += pauli.Bits(out[j : j+w]).Parity(supp)
	}
	return n
}

// addSamples adds a·s_n to z[n] for each outcome n of out (len(supp) words
// each), s_n = ±1 the sample of the string with support words supp. The
// loops are free of branches on the parity, which is random.
func addSamples(z []float64, out, supp []uint64, a float64) {
	if len(supp) == 1 {
		s := supp[0]
		out = out[:len(z)]
		for j, b := range out {
			odd := bits.OnesCount64(b&s) & 1
			z[j] += a - 2*a*float64(odd)
		}
		return
	}
	w := len(supp)
	for j := range z {
		z[j] += a - 2*a*float64(pauli.Bits(out[j*w:(j+1)*w]).Parity(supp))
	}
}
