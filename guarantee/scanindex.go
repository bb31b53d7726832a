package guarantee

import (
	"math/bits"
	"slices"

	"github.com/shotplan/shotplan/pauli"
)

// scanIndex finds the terms a setting covers faster than a scan of every
// term. The terms are bucketed by their anchors, the first two qubits of
// their support (one qubit for weight-one terms), and by the letters there.
// A setting has one letter on each anchor, so of the nine buckets of an
// anchor pair it visits exactly one: a scan costs one lookup per distinct
// anchor pair plus a word comparison for about 1/9 of the terms of weight
// two or more (1/3 of the weight-one terms).
type scanIndex struct {
	w      int
	q1, q2 []int32  // anchor qubits of pair p; q2[p] < 0 for one anchor
	start  []int32  // pair p, letters j: positions start[9p+j]:start[9p+j+1]
	words  []uint64 // per position: the term's x words then its z words
	term   []int32  // per position: the term's index
	codes  []uint8  // scratch: the setting's letter codes
}

// letterCode returns 0, 1, 2 for X, Z, Y on qubit q (x | z<<1, minus one),
// and 255 for the identity.
func letterCode(x, z []uint64, q int) uint8 {
	return uint8(x[q>>6]>>(q&63)&1|(z[q>>6]>>(q&63)&1)<<1) - 1
}

func newScanIndex(t *pauli.Table) *scanIndex {
	m := t.Len()
	n := t.Qubits()
	w := pauli.Words(n)
	ix := &scanIndex{w: w, codes: make([]uint8, n)}
	type pair struct{ q1, q2 int32 }
	pairOf := make(map[pair]int32)
	slot := make([]int32, m) // 9·pair + letters
	var count []int32
	for i := range m {
		x, z := t.Words(i)
		k := pair{-1, -1}
		var c1, c2 uint8
		for wi := range x {
			s := x[wi] | z[wi]
			for s != 0 && k.q2 < 0 {
				q := wi<<6 + bits.TrailingZeros64(s)
				s &= s - 1
				if k.q1 < 0 {
					k.q1, c1 = int32(q), letterCode(x, z, q)
				} else {
					k.q2, c2 = int32(q), letterCode(x, z, q)
				}
			}
			if k.q2 >= 0 {
				break
			}
		}
		p, ok := pairOf[k]
		if !ok {
			p = int32(len(ix.q1))
			pairOf[k] = p
			ix.q1, ix.q2 = append(ix.q1, k.q1), append(ix.q2, k.q2)
			count = append(count, make([]int32, 9)...)
		}
		j := int32(c1) * 3
		if k.q2 >= 0 {
			j += int32(c2)
		}
		slot[i] = 9*p + j
		count[slot[i]]++
	}
	ix.start = make([]int32, len(count)+1)
	for b, c := range count {
		ix.start[b+1] = ix.start[b] + c
	}
	fill := append([]int32(nil), ix.start[:len(count)]...)
	ix.words = make([]uint64, 2*w*m)
	ix.term = make([]int32, m)
	for i := range m {
		p := fill[slot[i]]
		fill[slot[i]]++
		x, z := t.Words(i)
		copy(ix.words[int(p)*2*w:], x)
		copy(ix.words[int(p)*2*w+w:], z)
		ix.term[p] = int32(i)
	}
	return ix
}

// covered appends to dst the indices of the terms s covers, bucket by
// bucket (not in increasing order), and returns the extended slice.
func (ix *scanIndex) covered(dst []int32, s pauli.Setting) []int32 {
	sx, sz := s.Words()
	for q := range ix.codes {
		ix.codes[q] = letterCode(sx, sz, q)
	}
	w := ix.w
	for p, q1 := range ix.q1 {
		j := 9*p + 3*int(ix.codes[q1])
		if q2 := ix.q2[p]; q2 >= 0 {
			j += int(ix.codes[q2])
		}
		lo, hi := int(ix.start[j]), int(ix.start[j+1])
		if lo == hi {
			continue
		}
		if w == 1 {
			// Branch-free: write every candidate, advance past the
			// covered ones (about a third of them match, which a branch
			// would mispredict).
			dst = slices.Grow(dst, hi-lo)
			n := len(dst)
			out := dst[:n+hi-lo]
			x0, z0 := sx[0], sz[0]
			words := ix.words[2*lo : 2*hi]
			terms := ix.term[lo:hi]
			for k, t := range terms {
				x, z := words[2*k], words[2*k+1]
				out[n] = t
				n += b2i(((x^x0)|(z^z0))&(x|z) == 0)
			}
			dst = dst[:n]
			continue
		}
	rows:
		for r := lo; r < hi; r++ {
			row := ix.words[r*2*w : (r+1)*2*w]
			for k := range w {
				x, z := row[k], row[w+k]
				if ((x^sx[k])|(z^sz[k]))&(x|z) != 0 {
					continue rows
				}
			}
			dst = append(dst, ix.term[r])
		}
	}
	return dst
}

func b2i(b bool) int {
	if b {
		return 1
	}
	return 0
}
