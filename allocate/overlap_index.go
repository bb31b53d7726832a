package allocate

import (
	"math/bits"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// The indexed searches of [Overlap]: which group a term joins first
// (sorted insertion through conflict sets, as [Sorted] does), how far a
// group's extension must read, and which groups cover a term (letter sets
// of the groups, 64 groups a word). Each gives exactly the answers of a
// scan over every group, so the plan does not depend on them; the work
// that is independent per group or per term is shared among GOMAXPROCS
// goroutines, each writing only its own groups' or terms' entries.

// parallelChunks runs f(lo, hi) over [0, n) in chunks of size chunk,
// shared among up to GOMAXPROCS goroutines. f must only write data of its
// own range, so that the result does not depend on the schedule.
func parallelChunks(n, chunk int, f func(lo, hi int)) {
	workers := min(runtime.GOMAXPROCS(0), (n+chunk-1)/chunk)
	if workers < 2 {
		for lo := 0; lo < n; lo += chunk {
			f(lo, min(lo+chunk, n))
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			for {
				lo := int(next.Add(int64(chunk))) - chunk
				if lo >= n {
					return
				}
				f(lo, min(lo+chunk, n))
			}
		})
	}
	wg.Wait()
}

// overlapGroups returns the distinct settings of the overlapping groups
// (see [Overlap]) and every term's home: the group sorted insertion put it
// in, an index into the settings.
func overlapGroups(h *hamiltonian.Hamiltonian, fill pauli.Letter) ([]pauli.Setting, []int) {
	rk := newRanked(h)
	n, w, m := rk.n, rk.w, len(rk.order)
	gx, gz, gm, homeRank, groups := firstFitGroups(rk)
	// Extension: every term, in rank order, that fits a group's letters
	// so far joins it. A term whose support lies inside the group's qubits
	// and fits adds no letter, so once the group's qubits hold the support
	// of every term no later term changes it and the walk stops. Groups
	// are independent: each worker extends its own.
	parallelChunks(groups, 16, func(lo, hi int) {
		for g := lo; g < hi; g++ {
			ex, ez, em := gx[g*w:(g+1)*w], gz[g*w:(g+1)*w], gm[g*w:(g+1)*w]
			full := func() bool {
				for k := range w {
					if rk.used[k]&^em[k] != 0 {
						return false
					}
				}
				return true
			}
			if full() {
				continue
			}
			for r := range m {
				x, z := rk.row(r)
				grow, bad := uint64(0), uint64(0)
				for k := range w {
					s := x[k] | z[k]
					bad |= ((x[k] ^ ex[k]) | (z[k] ^ ez[k])) & s & em[k]
					grow |= s &^ em[k]
				}
				if bad != 0 || grow == 0 {
					continue
				}
				for k := range w {
					ex[k] |= x[k]
					ez[k] |= z[k]
					em[k] |= x[k] | z[k]
				}
				if full() {
					break
				}
			}
		}
	})
	fx, fz := letterBits(fill)
	index := make(map[string]int)
	of := make([]int, groups)
	var out []pauli.Setting
	x, z := make([]uint64, w), make([]uint64, w)
	for g := range groups {
		for k := range w {
			free := rk.all[k] &^ gm[g*w+k]
			x[k] = gx[g*w+k] | free&fx
			z[k] = gz[g*w+k] | free&fz
		}
		st, err := pauli.NewSetting(pauli.FromWords(n, x, z))
		if err != nil {
			panic("allocate: overlap built an invalid setting") // letters are X, Y or Z on every qubit
		}
		key := st.Key()
		j, ok := index[key]
		if !ok {
			j = len(out)
			index[key] = j
			out = append(out, st)
		}
		of[g] = j
	}
	home := make([]int, m)
	for r, i := range rk.order {
		home[i] = of[homeRank[r]]
	}
	return out, home
}

// firstFitGroups is sorted insertion over the ranked terms: each joins the
// first group whose letters so far agree with it where both act, or opens
// a new one. It returns the groups' letters (x, z and support words, group
// g at g·w), every rank's group and the number of groups. The first fit
// reads conflict sets, as [Sorted.Init] does: word j of set 3q+L holds,
// for groups 64j to 64j+63, the groups with a letter other than code L on
// qubit q.
func firstFitGroups(rk *ranked) (gx, gz, gm []uint64, homeRank []int32, groups int) {
	n, w, m := rk.n, rk.w, len(rk.order)
	homeRank = make([]int32, m)
	var conflict []uint64
	var codes []int32
	for r := range m {
		x, z := rk.row(r)
		codes = codes[:0]
		for q := range supportOf(x, z) {
			codes = append(codes, int32(3*q)+letterIndex(x, z, q))
		}
		// X and Y first: they rule groups out soonest in Jordan–Wigner
		// Hamiltonians. The order only changes the speed.
		nz := 0
		for i, c := range codes {
			if c%3 != 1 {
				codes[nz], codes[i] = codes[i], codes[nz]
				nz++
			}
		}
		g := groups
		for j := 0; j*64 < groups; j++ {
			row := conflict[3*n*j : 3*n*(j+1)]
			var bad uint64
			for _, c := range codes {
				bad |= row[c]
				if bad == ^uint64(0) {
					break
				}
			}
			if bad != ^uint64(0) {
				g = min(g, j*64+bits.TrailingZeros64(^bad))
				break
			}
		}
		if g == groups {
			gx = append(gx, make([]uint64, w)...)
			gz = append(gz, make([]uint64, w)...)
			gm = append(gm, make([]uint64, w)...)
			if g%64 == 0 {
				conflict = append(conflict, make([]uint64, 3*n)...)
			}
			groups++
		}
		row, bit := conflict[3*n*(g/64):3*n*(g/64+1)], uint64(1)<<(g%64)
		for _, c := range codes {
			q := int(c / 3)
			if gm[g*w+q>>6]>>(q&63)&1 == 0 {
				for l := range int32(3) {
					if l != c%3 {
						row[3*int32(q)+l] |= bit
					}
				}
			}
		}
		for k := range w {
			gx[g*w+k] |= x[k]
			gz[g*w+k] |= z[k]
			gm[g*w+k] |= x[k] | z[k]
		}
		homeRank[r] = int32(g)
	}
	return gx, gz, gm, homeRank, groups
}

// refBlock holds the (term, group) cover pairs of the terms lo to
// lo+len(off)−2, term-major: term lo+t is covered by the groups
// grp[off[t]:off[t+1]], in increasing order, with weights α in alpha at
// the same positions.
type refBlock struct {
	lo    int
	off   []int32
	grp   []int32
	alpha []float64
}

// overlapBlockTerms is the number of terms per [refBlock].
const overlapBlockTerms = 1024

// coverBlocks returns the cover pairs of every term of h against the
// local settings, in blocks of blockTerms terms. A setting covers a term
// when it has the term's letter on each of its qubits: the intersection
// of the term's letter sets of the settings, 64 settings a word. Only the
// words where the sparsest of the term's sets is not empty are read, each
// until the intersection is. The blocks are filled by GOMAXPROCS
// goroutines, each its own.
func coverBlocks(h *hamiltonian.Hamiltonian, settings []pauli.Setting, blockTerms int) []refBlock {
	n, m := h.Qubits(), h.Len()
	words := (len(settings) + 63) / 64
	sets := make([]uint64, 3*n*words) // set 3q+l at (3q+l)·words
	for g, st := range settings {
		x, z := st.Words()
		for q := range n {
			if c := letterIndex(x, z, q); c >= 0 {
				sets[(3*q+int(c))*words+g/64] |= 1 << (g % 64)
			}
		}
	}
	// nonEmpty[c] lists the words of set c that are not empty.
	nonEmpty := make([][]int32, 3*n)
	for c := range nonEmpty {
		for j, v := range sets[c*words : (c+1)*words] {
			if v != 0 {
				nonEmpty[c] = append(nonEmpty[c], int32(j))
			}
		}
	}
	last := ^uint64(0) // the settings of the last word
	if len(settings)%64 != 0 {
		last = 1<<(len(settings)%64) - 1
	}
	tab := h.Table()
	blocks := make([]refBlock, (m+blockTerms-1)/blockTerms)
	parallelChunks(len(blocks), 1, func(lo, hi int) {
		var codes []int32
		var buf []int32
		for b := lo; b < hi; b++ {
			bl := &blocks[b]
			bl.lo = b * blockTerms
			end := min(bl.lo+blockTerms, m)
			bl.off = make([]int32, 1, end-bl.lo+1)
			buf = buf[:0]
			for i := bl.lo; i < end; i++ {
				x, z := tab.Words(i)
				codes = codes[:0]
				sparsest := -1
				for q := range supportOf(x, z) {
					c := 3*q + int(letterIndex(x, z, q))
					if sparsest < 0 || len(nonEmpty[c]) < len(nonEmpty[codes[sparsest]/int32(words)]) {
						sparsest = len(codes)
					}
					codes = append(codes, int32(c*words))
				}
				if sparsest < 0 {
					// The identity: every setting covers it.
					for j := range words {
						v := ^uint64(0)
						if j == words-1 {
							v = last
						}
						for ; v != 0; v &= v - 1 {
							buf = append(buf, int32(j*64+bits.TrailingZeros64(v)))
						}
					}
					bl.off = append(bl.off, int32(len(buf)))
					continue
				}
				codes[0], codes[sparsest] = codes[sparsest], codes[0]
				for _, j := range nonEmpty[codes[0]/int32(words)] {
					v := sets[codes[0]+j]
					for _, c := range codes[1:] {
						if v &= sets[c+j]; v == 0 {
							break
						}
					}
					for ; v != 0; v &= v - 1 {
						buf = append(buf, j*64+int32(bits.TrailingZeros64(v)))
					}
				}
				bl.off = append(bl.off, int32(len(buf)))
			}
			bl.grp = slices.Clone(buf)
			bl.alpha = make([]float64, len(bl.grp))
		}
	})
	return blocks
}
