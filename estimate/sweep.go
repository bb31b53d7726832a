package estimate

import (
	"math/bits"

	"github.com/shotplan/shotplan/internal/symplectic"
	"github.com/shotplan/shotplan/pauli"
)

// sweep holds what the estimators need to visit every (term, shot) sample
// term by term, so that a term's cover count is known before its samples
// are read.
//
// For every qubit q and letter l it keeps the set of groups (distinct
// settings) with l on q, as a bit set over groups; the groups covering a
// term are the intersection of the sets of its letters, computed 64 groups
// a word and abandoned for a word once it is empty. That costs about
// weight·G/64 word operations per term for G groups, with no search per
// setting. The outcomes are copied into one array in group order
// (position off[g]+j for outcome j of group g), and the samples are visited
// in blocks of groups so that the outcomes and per-shot sums of a block stay
// in cache while every term passes over them.
type sweep struct {
	n, w  int
	words int      // words per group set: ⌈G/64⌉
	sets  []uint64 // set of (q, l) at sets[(3q+l−1)·words:]
	off   []int    // group g's outcomes are at positions off[g]..off[g+1]
	flat  []uint64 // outcomes by position, w words each
	one   []uint64 // the groups with a single shot, a bit set

	// Bit q of the single outcome of each one-shot group of the current
	// block, as a bit set over the block's groups: slice[q*blockWords+k−k0].
	slice []uint64

	rowOff []int    // term i's letters are rowIdx[rowOff[i]:rowOff[i+1]]
	rowIdx []int32  // 3q+l−1 for each letter
	supp   []uint64 // support words of every term, w a term
}

// blockWords is the number of group-set words (64 groups each) visited per
// block: 4096 groups.
const blockWords = 64

func newSweep(rec *Records, t *pauli.Table) *sweep {
	ng := rec.Groups()
	s := &sweep{n: rec.Qubits(), w: rec.w, words: (ng + 63) >> 6}
	s.sets = make([]uint64, 3*s.n*s.words)
	s.off = make([]int, ng+1)
	s.flat = make([]uint64, 0, rec.Len()*s.w)
	s.one = make([]uint64, s.words)
	for g := range ng {
		if rec.GroupLen(g) == 1 {
			s.one[g>>6] |= 1 << (g & 63)
		}
		// An entangled setting has no letters: it is in no letter set, so
		// covering never returns it (see entangled.go for its path).
		if st := rec.Setting(g); st.IsLocal() {
			x, z := st.Words()
			for q := range s.n {
				s.sets[(3*q+int(symplectic.Code(x, z, q))-1)*s.words+g>>6] |= 1 << (g & 63)
			}
		}
		s.off[g+1] = s.off[g] + rec.GroupLen(g)
		s.flat = append(s.flat, rec.out[g]...)
	}
	m := t.Len()
	s.rowOff = make([]int, m+1)
	s.supp = make([]uint64, 0, m*s.w)
	for i := range m {
		x, z := t.Words(i)
		for k := range x {
			u := x[k] | z[k]
			s.supp = append(s.supp, u)
			for u != 0 {
				q := k<<6 + bits.TrailingZeros64(u)
				u &= u - 1
				s.rowIdx = append(s.rowIdx, int32(3*q+int(symplectic.Code(x, z, q))-1))
			}
		}
		s.rowOff[i+1] = len(s.rowIdx)
	}
	return s
}

// rows returns the set indices of term i's letters.
func (s *sweep) rows(i int) []int32 { return s.rowIdx[s.rowOff[i]:s.rowOff[i+1]] }

// covering returns word k of the set of groups covering the term with
// letter sets rs (non-empty: terms are not the identity).
func (s *sweep) covering(rs []int32, k int) uint64 {
	v := s.sets[int(rs[0])*s.words+k]
	for _, r := range rs[1:] {
		if v == 0 {
			return 0
		}
		v &= s.sets[int(r)*s.words+k]
	}
	return v
}

// sliceBlock fills s.slice with the outcome bits of the one-shot groups in
// group-set words k0..k1−1 (at most blockWords of them).
func (s *sweep) sliceBlock(k0, k1 int) {
	if s.slice == nil {
		s.slice = s.newSlice()
	}
	s.sliceInto(s.slice, k0, k1)
}

// newSlice returns scratch for sliceInto.
func (s *sweep) newSlice() []uint64 { return make([]uint64, s.n*blockWords) }

// sliceInto is sliceBlock into the scratch slice (from newSlice), so that
// goroutines can each fill their own.
func (s *sweep) sliceInto(slice []uint64, k0, k1 int) {
	clear(slice)
	for k := k0; k < k1; k++ {
		for v := s.one[k]; v != 0; v &= v - 1 {
			t := bits.TrailingZeros64(v)
			b := s.flat[s.off[k<<6+t]*s.w:]
			for wd := range s.w {
				for u := b[wd]; u != 0; u &= u - 1 {
					q := wd<<6 + bits.TrailingZeros64(u)
					slice[q*blockWords+k-k0] |= 1 << t
				}
			}
		}
	}
}

// oddSlice returns, for word k of the current block (k0 its first word),
// the one-shot groups whose outcome has odd parity on the qubits of term
// letters rs.
func (s *sweep) oddSlice(rs []int32, k, k0 int) uint64 { return oddIn(s.slice, rs, k, k0) }

// oddIn is oddSlice on the scratch slice filled by sliceInto.
func oddIn(slice []uint64, rs []int32, k, k0 int) uint64 {
	var p uint64
	for _, r := range rs {
		p ^= slice[int(r/3)*blockWords+k-k0]
	}
	return p
}

// termSupp returns the support words of term i.
func (s *sweep) termSupp(i int) []uint64 { return s.supp[i*s.w : (i+1)*s.w] }
