package allocate

import (
	"math/bits"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/workshare"
	"github.com/shotplan/shotplan/pauli"
)

// The indexed searches of [Overlap]: which group a term joins first
// (sorted insertion through conflict sets, as [Sorted] does), how far a
// group's extension must read, and which groups cover a term (letter sets
// of the groups, 64 groups a word). Each gives exactly the answers of a
// scan over every group, so the plan does not depend on them; the work
// that is independent per group or per term is shared among GOMAXPROCS
// goroutines, each writing only its own groups' or terms' entries.

// overlapGroups returns the distinct settings of the overlapping groups
// (see [Overlap]) and every term's home: the group sorted insertion put it
// in, an index into the settings.
func overlapGroups(h *hamiltonian.Hamiltonian, fill pauli.Letter) ([]pauli.Setting, []int) {
	rk := newRanked(h)
	n, w, m := rk.n, rk.w, len(rk.order)
	gx, gz, gm, homeRank, groups := overlapFirstFit(rk)
	// Extension: every term, in rank order, that fits a group's letters
	// so far joins it. A term whose support lies inside the group's qubits
	// and fits adds no letter, so once the group's qubits hold the support
	// of every term no later term changes it and the walk stops. Groups
	// are independent: each worker extends its own.
	workshare.Chunks(groups, 16, func(lo, hi int) {
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

// overlapFirstFit is sorted insertion over the ranked terms: each joins the
// first group whose letters so far agree with it where both act, or opens
// a new one. It returns the groups' letters (x, z and support words, group
// g at g·w), every rank's group and the number of groups. The first fit
// reads conflict sets, as [Sorted.Init] does: word j of set 3q+L holds,
// for groups 64j to 64j+63, the groups with a letter other than code L on
// qubit q.
//
// The search is shared among GOMAXPROCS goroutines without changing its
// answer: the ranks go in batches, every term of a batch first finds its
// first fit among the groups there were before the batch (in parallel;
// nothing is written), and then the batch is placed in rank order. A
// group only gains conflicts, so a group before the one found still
// conflicts; the one found still fits unless an earlier term of the batch
// gave it new letters (then it is tested again, and the search goes on
// past it); if none was found, only the groups opened in the batch remain.
func overlapFirstFit(rk *ranked) (gx, gz, gm []uint64, homeRank []int32, groups int) {
	n, w, m := rk.n, rk.w, len(rk.order)
	homeRank = make([]int32, m)
	var conflict []uint64
	// conflicts[c] counts the groups in conflict set c: those with a letter
	// on qubit q, less those with letter code L there.
	conflicts := make([]int, 3*n)
	// codesOf returns the letter codes 3q+L of rank r, largest conflict
	// sets first (insertion sort; a term has few letters), so that a word
	// of groups is ruled out soonest. The order only changes the speed.
	codesOf := func(codes []int32, r int) []int32 {
		x, z := rk.row(r)
		codes = codes[:0]
		for q := range supportOf(x, z) {
			codes = append(codes, int32(3*q)+letterIndex(x, z, q))
			for k := len(codes) - 1; k > 0 && conflicts[codes[k]] > conflicts[codes[k-1]]; k-- {
				codes[k], codes[k-1] = codes[k-1], codes[k]
			}
		}
		return codes
	}
	// scan returns the first group g, from ≤ g < upto, in no conflict set
	// of codes, or upto.
	scan := func(codes []int32, from, upto int) int {
		for j := from / 64; j*64 < upto; j++ {
			row := conflict[3*n*j : 3*n*(j+1)]
			var bad uint64
			if j == from/64 {
				bad = 1<<(from%64) - 1
			}
			for _, c := range codes {
				if bad |= row[c]; bad == ^uint64(0) {
					break
				}
			}
			if bad != ^uint64(0) {
				return min(upto, j*64+bits.TrailingZeros64(^bad))
			}
		}
		return upto
	}
	const batch = 1024
	spec := make([]int32, batch)
	var modified []bool // the groups that gained letters in this batch
	var touched []int32
	var codes []int32
	for r0 := 0; r0 < m; r0 += batch {
		r1, before := min(r0+batch, m), groups
		workshare.Chunks(r1-r0, 64, func(lo, hi int) {
			var codes []int32
			var sc firstFitScratch
			for t := lo; t < hi; t++ {
				codes = codesOf(codes, r0+t)
				spec[t] = int32(sc.scan(conflict, 3*n, codes, before))
			}
		})
		for r := r0; r < r1; r++ {
			codes = codesOf(codes, r)
			g := int(spec[r-r0])
			switch {
			case g == before:
				g = scan(codes, before, groups)
			case modified[g]:
				g = scan(codes, g, groups)
			}
			if g == groups {
				gx = append(gx, make([]uint64, w)...)
				gz = append(gz, make([]uint64, w)...)
				gm = append(gm, make([]uint64, w)...)
				modified = append(modified, false)
				if g%64 == 0 {
					conflict = append(conflict, make([]uint64, 3*n)...)
				}
				groups++
			}
			row, bit := conflict[3*n*(g/64):3*n*(g/64+1)], uint64(1)<<(g%64)
			grew := false
			for _, c := range codes {
				q := int(c / 3)
				if gm[g*w+q>>6]>>(q&63)&1 == 0 {
					grew = true
					for l := range int32(3) {
						if l != c%3 {
							row[3*int32(q)+l] |= bit
							conflicts[3*int32(q)+l]++
						}
					}
				}
			}
			if grew && !modified[g] {
				modified[g] = true
				touched = append(touched, int32(g))
			}
			x, z := rk.row(r)
			for k := range w {
				gx[g*w+k] |= x[k]
				gz[g*w+k] |= z[k]
				gm[g*w+k] |= x[k] | z[k]
			}
			homeRank[r] = int32(g)
		}
		for _, g := range touched {
			modified[g] = false
		}
		touched = touched[:0]
	}
	return gx, gz, gm, homeRank, groups
}

// firstFitScratch is the storage of [firstFitScratch.scan].
type firstFitScratch struct {
	acc [64]uint64
	at  [64]int32
}

// scan returns the first group g < upto in no conflict set of codes (rows
// of stride words of conflict, as in [overlapFirstFit]), or upto: the
// answer of a scan word by word. The words go in slices of 4, 8, ... 64:
// the first four sets are read at every word of a slice, the words not
// yet full are kept in a list (without a branch per word), and each
// further set is read only at the words of the list; the first word left
// holds the answer.
func (sc *firstFitScratch) scan(conflict []uint64, stride int, codes []int32, upto int) int {
	words := (upto + 63) / 64
	var c0, c1, c2, c3 int
	switch len(codes) {
	case 0:
		return min(upto, 0)
	case 1:
		c0 = int(codes[0])
		c1, c2, c3 = c0, c0, c0
	case 2:
		c0, c1 = int(codes[0]), int(codes[1])
		c2, c3 = c1, c1
	case 3:
		c0, c1, c2 = int(codes[0]), int(codes[1]), int(codes[2])
		c3 = c2
	default:
		c0, c1, c2, c3 = int(codes[0]), int(codes[1]), int(codes[2]), int(codes[3])
	}
	rest := codes[min(4, len(codes)):]
	w := 4
	for j0 := 0; j0 < words; j0 += w {
		w = min(2*w, 64)
		j1 := min(j0+w, words)
		acc, at := sc.acc[:j1-j0], sc.at[:j1-j0]
		n := 0
		for j := j0; j < j1; j++ {
			row := conflict[stride*j : stride*(j+1)]
			v := row[c0] | row[c1] | row[c2] | row[c3]
			acc[n], at[n] = v, int32(j)
			n += nonZero(^v)
		}
		for _, c := range rest {
			if n == 0 {
				break
			}
			m := 0
			for t := range n {
				v := acc[t] | conflict[stride*int(at[t])+int(c)]
				acc[m], at[m] = v, at[t]
				m += nonZero(^v)
			}
			n = m
		}
		if n > 0 {
			return min(upto, int(at[0])*64+bits.TrailingZeros64(^acc[0]))
		}
	}
	return upto
}

// overlapBlock holds the (term, group) cover pairs of the terms lo to
// lo+len(off)−2, term-major: term lo+t is covered by the groups
// grp[off[t]:off[t+1]], in increasing order, with weights α in alpha at
// the same positions.
type overlapBlock struct {
	lo    int
	off   []int32
	grp   []int32
	alpha []float64
	// dq and inv, once the shares are fixed, are d and 1/d of the
	// per-term step of each pair ([splitModel.fixShares]); sum1[t] and
	// bad[t] are the sum of term lo+t's 1/d in pair order and whether one
	// of its d is not positive and finite (see [badD]), the same for
	// every sweep.
	dq, inv []float64
	sum1    []float64
	bad     []uint64
}

// overlapBlockTerms is the number of terms per [overlapBlock].
const overlapBlockTerms = 1024

// overlapCover is the transpose of a list of local settings: for every qubit
// q and letter code l, the set of the settings with that letter on q, 64
// settings a word. A setting covers a term when it has the term's letter
// on each of its qubits, so the settings that cover a term are the
// intersection of the term's sets, read a slice of words at a time for a
// run of terms ([overlapCover.appendRun]), the sets taken from the
// sparsest.
type overlapCover struct {
	tab      *pauli.Table
	n, words int
	sets     []uint64 // set 3q+l at (3q+l)·words
	count    []int    // the settings in each set
	last     uint64   // the settings of the last word
}

// newOverlapCover builds the sets of the settings for the terms of h.
func newOverlapCover(h *hamiltonian.Hamiltonian, settings []pauli.Setting) *overlapCover {
	n := h.Qubits()
	cs := &overlapCover{tab: h.Table(), n: n, words: (len(settings) + 63) / 64, last: ^uint64(0)}
	cs.sets = make([]uint64, 3*n*cs.words)
	for g, st := range settings {
		x, z := st.Words()
		for q := range n {
			if c := letterIndex(x, z, q); c >= 0 {
				cs.sets[(3*q+int(c))*cs.words+g/64] |= 1 << (g % 64)
			}
		}
	}
	cs.count = make([]int, 3*n)
	for c := range cs.count {
		for _, v := range cs.sets[c*cs.words : (c+1)*cs.words] {
			cs.count[c] += bits.OnesCount64(v)
		}
	}
	if len(settings)%64 != 0 {
		cs.last = 1<<(len(settings)%64) - 1
	}
	return cs
}

// overlapCoverWords is the number of words of every set that
// [overlapCover.appendRun] reads for all terms of a run before the next
// words: 150 sets of 64 words (50 qubits) take 77 KB, which stay in cache
// while the run's terms read them.
const overlapCoverWords = 64

// overlapRunTerms is the number of terms of a run of [overlapCover.appendRun].
const overlapRunTerms = 64

// coverScratch is the reusable storage of [overlapCover.appendRun].
type coverScratch struct {
	codes []int32 // the codes of the run's terms, sparsest first, times words
	coff  []int32 // term t's codes at coff[t] to coff[t+1]−1
	acc   [overlapCoverWords]uint64
	at    [overlapCoverWords]int32
	// The settings found, piece after piece: piece r·k+t, of term t and
	// slice r of the words, at tmp[piece[r·k+t]:piece[r·k+t+1]].
	tmp   []int32
	piece []int32
}

// appendRun appends to grp the settings that cover each term lo to hi−1,
// in increasing order, and to off the length of grp after each term. The
// words of the sets are read a slice at a time for every term of the run,
// so that a slice is read from memory once per run rather than once per
// term; the answer is that of a scan term by term.
func (cs *overlapCover) appendRun(grp, off []int32, lo, hi int, sc *coverScratch) ([]int32, []int32) {
	words := cs.words
	k := hi - lo
	sc.codes, sc.coff = sc.codes[:0], append(sc.coff[:0], 0)
	sc.tmp, sc.piece = sc.tmp[:0], append(sc.piece[:0], 0)
	for t := range k {
		x, z := cs.tab.Words(lo + t)
		at := len(sc.codes)
		for q := range supportOf(x, z) {
			sc.codes = append(sc.codes, int32(3*q)+letterIndex(x, z, q))
			// Sparsest sets first (insertion sort: a term has few
			// letters), so that the intersection of a word is empty
			// soonest.
			for l := len(sc.codes) - 1; l > at && cs.count[sc.codes[l]] < cs.count[sc.codes[l-1]]; l-- {
				sc.codes[l], sc.codes[l-1] = sc.codes[l-1], sc.codes[l]
			}
		}
		for l := at; l < len(sc.codes); l++ {
			sc.codes[l] *= int32(words)
		}
		sc.coff = append(sc.coff, int32(len(sc.codes)))
	}
	for j0 := 0; j0 < words; j0 += overlapCoverWords {
		j1 := min(j0+overlapCoverWords, words)
		for t := range k {
			codes := sc.codes[sc.coff[t]:sc.coff[t+1]]
			dst := sc.tmp
			if len(codes) == 0 {
				// The identity: every setting covers it.
				for j := j0; j < j1; j++ {
					v := ^uint64(0)
					if j == words-1 {
						v = cs.last
					}
					for ; v != 0; v &= v - 1 {
						dst = append(dst, int32(j*64+bits.TrailingZeros64(v)))
					}
				}
			} else {
				dst = cs.intersect(dst, codes, j0, j1, sc)
			}
			sc.tmp = dst
			sc.piece = append(sc.piece, int32(len(dst)))
		}
	}
	for t := range k {
		for p := t; p+1 < len(sc.piece); p += k {
			grp = append(grp, sc.tmp[sc.piece[p]:sc.piece[p+1]]...)
		}
		off = append(off, int32(len(grp)))
	}
	return grp, off
}

// intersect appends to dst the settings of words j0 to j1−1 (at most
// overlapCoverWords) in every set of codes (at least one, offsets of sets,
// sparsest first), in increasing order. The first four sets are read for
// every word; the words not yet empty are kept in a list (without a branch
// per word), and each further set is read only at the words of the list.
func (cs *overlapCover) intersect(dst, codes []int32, j0, j1 int, sc *coverScratch) []int32 {
	w := j1 - j0
	acc, at := sc.acc[:w], sc.at[:w]
	s0 := cs.sets[int(codes[0])+j0 : int(codes[0])+j1]
	n := 0
	switch len(codes) {
	case 1:
		for j, v := range s0 {
			acc[n], at[n] = v, int32(j)
			n += nonZero(v)
		}
	case 2:
		s1 := cs.sets[int(codes[1])+j0 : int(codes[1])+j1][:w]
		for j, v := range s0 {
			v &= s1[j]
			acc[n], at[n] = v, int32(j)
			n += nonZero(v)
		}
	case 3:
		s1 := cs.sets[int(codes[1])+j0 : int(codes[1])+j1][:w]
		s2 := cs.sets[int(codes[2])+j0 : int(codes[2])+j1][:w]
		for j, v := range s0 {
			v &= s1[j] & s2[j]
			acc[n], at[n] = v, int32(j)
			n += nonZero(v)
		}
	default:
		s1 := cs.sets[int(codes[1])+j0 : int(codes[1])+j1][:w]
		s2 := cs.sets[int(codes[2])+j0 : int(codes[2])+j1][:w]
		s3 := cs.sets[int(codes[3])+j0 : int(codes[3])+j1][:w]
		for j, v := range s0 {
			v &= s1[j] & s2[j] & s3[j]
			acc[n], at[n] = v, int32(j)
			n += nonZero(v)
		}
		for _, c := range codes[min(4, len(codes)):] {
			if n == 0 {
				break
			}
			set := cs.sets[int(c)+j0 : int(c)+j1]
			m := 0
			for t := range n {
				v := acc[t] & set[at[t]]
				acc[m], at[m] = v, at[t]
				m += nonZero(v)
			}
			n = m
		}
	}
	for t := range n {
		base := int32(j0+int(at[t])) * 64
		for v := acc[t]; v != 0; v &= v - 1 {
			dst = append(dst, base+int32(bits.TrailingZeros64(v)))
		}
	}
	return dst
}

// nonZero is 1 if v ≠ 0, else 0, without a branch.
func nonZero(v uint64) int { return int((v | -v) >> 63) }

// blocks returns the cover pairs of every term, in blocks of blockTerms
// terms, filled by GOMAXPROCS goroutines, each its own blocks.
func (cs *overlapCover) blocks(blockTerms int) []overlapBlock {
	m := cs.tab.Len()
	blocks := make([]overlapBlock, (m+blockTerms-1)/blockTerms)
	workshare.Chunks(len(blocks), 4, func(lo, hi int) {
		var sc coverScratch
		var buf []int32
		for b := lo; b < hi; b++ {
			bl := &blocks[b]
			bl.lo = b * blockTerms
			end := min(bl.lo+blockTerms, m)
			bl.off = make([]int32, 1, end-bl.lo+1)
			buf = buf[:0]
			for r := bl.lo; r < end; r += overlapRunTerms {
				buf, bl.off = cs.appendRun(buf, bl.off, r, min(r+overlapRunTerms, end), &sc)
			}
			bl.grp = slices.Clone(buf)
			bl.alpha = make([]float64, len(bl.grp))
		}
	})
	return blocks
}
