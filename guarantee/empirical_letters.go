package guarantee

import (
	"math"
	"math/bits"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/workshare"
	"github.com/shotplan/shotplan/pauli"
)

// empiricalLetters computes what Empirical needs from the records when the
// plan's (setting, term) cover pairs are too many to store: every group's
// statistics of its shots' values w and the residual statistics of
// residuals. It visits the pairs term by term in table order through the
// transposed settings (coverindex.Letters), so each shot's w and residual
// are summed over its terms in table order, the order of the stored path,
// and every result is the same to the last bit. The groups are shared
// among GOMAXPROCS goroutines by blocks of 64·letterChunk; each owns its
// groups' shots, and the per-term counts are integers, so the number of
// goroutines changes nothing.
func empiricalLetters(h *hamiltonian.Hamiltonian, rec *estimate.Records, c *coverage, coef []float64) ([]*groupStat, residualStats) {
	m, ng := h.Len(), rec.Groups()
	nw := pauli.Words(h.Qubits())
	off := make([]int, ng+1)
	for g := range ng {
		off[g+1] = off[g] + rec.GroupLen(g)
	}
	flat := make([]uint64, 0, off[ng]*nw)
	for g := range ng {
		for j := range rec.GroupLen(g) {
			flat = append(flat, rec.Outcome(g, j)...)
		}
	}
	supp := make([]uint64, m*nw)
	for i := range m {
		x, z := h.Table().Words(i)
		for k := range nw {
			supp[i*nw+k] = x[k] | z[k]
		}
	}
	// The pairs are visited term by term in table order, the groups
	// shared among goroutines by blocks of words: blocks calls f(w, and,
	// lo) for every block, w the goroutine's index and and its scratch;
	// the two passes below loop over the block's terms and groups
	// themselves, without a call per pair. Shot n is in fold n&1
	// (residualFolds is 2).
	l := c.letters
	workers := workshare.Workers(l.Words(), letterChunk)
	blocks := func(f func(w int, and []uint64, lo int)) {
		workshare.PerWorker(l.Words(), letterChunk, workers, func(w int) func(lo, hi int) {
			and := make([]uint64, letterChunk)
			return func(lo, hi int) { f(w, and[:hi-lo], lo) }
		})
	}

	// Pass 1: every shot's w, every group's half, and the samples and −1
	// samples of every term by fold (per goroutine, added up after).
	wv := make([]float64, off[ng])
	half := make([]float64, ng)
	type foldCounts struct{ cnt, ones [residualFolds][]int64 }
	parts := make([]foldCounts, workers)
	for w := range parts {
		for k := range residualFolds {
			parts[w].cnt[k] = make([]int64, m)
			parts[w].ones[k] = make([]int64, m)
		}
	}
	blocks(func(w int, and []uint64, lo int) {
		p := &parts[w]
		for i := range m {
			ci := coef[i]
			if ci == 0 {
				continue
			}
			l.Covering(and, i, lo)
			sp := supp[i*nw : (i+1)*nw]
			ai := math.Abs(ci)
			var cn, on [residualFolds]int64
			for k, v := range and {
				for ; v != 0; v &= v - 1 {
					g := (lo+k)<<6 + bits.TrailingZeros64(v)
					half[g] += ai
					for n := off[g]; n < off[g+1]; n++ {
						f := n & 1
						cn[f]++
						if oddParity(flat[n*nw:(n+1)*nw], sp) {
							wv[n] += ci * -1
							on[f]++
						} else {
							wv[n] += ci * 1
						}
					}
				}
			}
			for f := range residualFolds {
				p.cnt[f][i] += cn[f]
				p.ones[f][i] += on[f]
			}
		}
	})
	gs := make([]*groupStat, ng)
	for g := range gs {
		gs[g] = &groupStat{setting: c.settings[g], weight: float64(off[g+1] - off[g]), half: half[g]}
		for n := off[g]; n < off[g+1]; n++ {
			gs[g].add(wv[n])
		}
	}
	var sum, cnt [residualFolds][]float64
	for k := range residualFolds {
		sum[k], cnt[k] = make([]float64, m), make([]float64, m)
		for i := range m {
			var c, o int64
			for w := range parts {
				c += parts[w].cnt[k][i]
				o += parts[w].ones[k][i]
			}
			cnt[k][i] = float64(c)
			sum[k][i] = float64(c - 2*o)
		}
	}
	tot, tcnt, st := foldTotals(&sum, &cnt, coef)
	// Pass 2: every shot's residual about the other fold's means and the
	// leave-one-out residual of every one-shot group, as residuals.
	y := wv
	clear(y)
	r := make([]float64, ng)
	blocks(func(_ int, and []uint64, lo int) {
		for i := range m {
			ci := coef[i]
			if ci == 0 {
				continue
			}
			l.Covering(and, i, lo)
			sp := supp[i*nw : (i+1)*nw]
			// The prediction of each fold from the other's mean, as in
			// residuals.
			var other [residualFolds]float64
			var has [residualFolds]bool
			for f := range residualFolds {
				if c := cnt[f][i]; tcnt[i] > c {
					other[f], has[f] = (tot[i]-sum[f][i])/(tcnt[i]-c), true
				}
			}
			for k, v := range and {
				for ; v != 0; v &= v - 1 {
					g := (lo+k)<<6 + bits.TrailingZeros64(v)
					for n := off[g]; n < off[g+1]; n++ {
						f := n & 1
						v := 1.0
						if oddParity(flat[n*nw:(n+1)*nw], sp) {
							v = -1
						}
						if has[f] {
							y[n] += ci * (v - other[f])
						} else {
							y[n] += ci * v
						}
						if off[g+1]-off[g] == 1 && tcnt[i] > 1 {
							r[g] += ci * (v - (tot[i]-v)/(tcnt[i]-1))
						}
					}
				}
			}
		}
	})
	for g, gr := range gs {
		for n := off[g]; n < off[g+1]; n++ {
			k := n & 1
			st.sq[k] += y[n] * y[n]
			st.big[k] = max(st.big[k], 4*gr.half*gr.half)
			st.worst[k] += gr.half * gr.half
		}
		if gr.t == 1 {
			st.loo += r[g] * r[g]
		}
	}
	return gs, st
}

// letterChunk is the number of words of 64 groups a goroutine of
// empiricalLetters takes at a time (a variable for the tests).
var letterChunk = 16

// oddParity reports whether outcome o has odd parity on the support words
// s.
func oddParity(o, s []uint64) bool {
	p := 0
	for k, w := range s {
		p += bits.OnesCount64(o[k] & w)
	}
	return p&1 == 1
}

// The folds are told apart by n&1.
var _ = [1]struct{}{}[residualFolds-2]
