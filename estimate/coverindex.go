package estimate

import (
	"cmp"
	"math/bits"
	"slices"

	"github.com/shotplan/shotplan/pauli"
)

// coverIndex finds the terms a setting covers faster than a scan of every
// term when many distinct settings are visited. Each term is filed under
// its anchor: the lowest two qubits of its support (one for a weight-one
// term) and its letters there. A setting covers a term only if it has the
// term's letters on the anchor, so for every anchor pair only one of the
// nine letter pairs needs checking: about 1/9 of the terms are looked at,
// plus one step per distinct anchor pair. When the anchors are nearly as
// many as the terms the index gains nothing and a plain scan is used.
type coverIndex struct {
	n, w  int
	x, z  []uint64 // term words, row-major, w words a row
	supp  []uint64 // x|z
	scan  bool     // plain scan instead of the anchors
	pairs []anchor
	terms []int32 // term indices in anchor order
	code  []uint8 // scratch: letter code of the current setting per qubit
}

// anchor is a pair of anchor qubits (q2 = −1 for weight-one terms) with the
// ranges of terms[start[c]:start[c+1]] for each letter code pair c.
type anchor struct {
	q1, q2 int32
	start  [10]int32
}

// letter codes: x | z<<1, so X = 1, Z = 2, Y = 3.
func letterCode(x, z []uint64, q int) int {
	return int(x[q>>6]>>(q&63)&1 | (z[q>>6]>>(q&63)&1)<<1)
}

func newCoverIndex(t *pauli.Table) *coverIndex {
	n, m := t.Qubits(), t.Len()
	w := pauli.Words(n)
	ix := &coverIndex{n: n, w: w, x: make([]uint64, m*w), z: make([]uint64, m*w), supp: make([]uint64, m*w), code: make([]uint8, n)}
	type filed struct {
		q1, q2 int32
		c      int8
		term   int32
	}
	fs := make([]filed, m)
	for i := range m {
		x, z := t.Words(i)
		copy(ix.x[i*w:], x)
		copy(ix.z[i*w:], z)
		q1, q2 := -1, -1
		for k := range w {
			s := x[k] | z[k]
			ix.supp[i*w+k] = s
			for s != 0 && q2 < 0 {
				q := k<<6 + bits.TrailingZeros64(s)
				s &= s - 1
				if q1 < 0 {
					q1 = q
				} else {
					q2 = q
				}
			}
		}
		c := letterCode(x, z, q1) - 1
		if q2 >= 0 {
			c = 3*c + letterCode(x, z, q2) - 1
		}
		fs[i] = filed{int32(q1), int32(q2), int8(c), int32(i)}
	}
	slices.SortFunc(fs, func(a, b filed) int {
		return cmp.Or(cmp.Compare(a.q1, b.q1), cmp.Compare(a.q2, b.q2), cmp.Compare(a.c, b.c), cmp.Compare(a.term, b.term))
	})
	ix.terms = make([]int32, m)
	for k := 0; k < m; {
		a := anchor{q1: fs[k].q1, q2: fs[k].q2}
		e := k
		for e < m && fs[e].q1 == a.q1 && fs[e].q2 == a.q2 {
			e++
		}
		p := k
		for c := range 9 {
			a.start[c] = int32(p)
			for p < e && int(fs[p].c) == c {
				ix.terms[p] = fs[p].term
				p++
			}
		}
		a.start[9] = int32(e)
		ix.pairs = append(ix.pairs, a)
		k = e
	}
	// Each anchor costs about as much as checking a term; with more than
	// one anchor per eight terms a scan is as fast.
	ix.scan = 8*len(ix.pairs) > m
	return ix
}

// covered appends to dst the terms that s covers and returns it. The order
// is fixed for a given index and setting (anchor order, not term order).
func (ix *coverIndex) covered(dst []int, s pauli.Setting) []int {
	sx, sz := s.Words()
	w := ix.w
	if ix.scan {
		m := len(ix.x) / max(w, 1)
		if w == 1 {
			a, b := sx[0], sz[0]
			for i := range m {
				x, z := ix.x[i], ix.z[i]
				if ((x^a)|(z^b))&(x|z) == 0 {
					dst = append(dst, i)
				}
			}
			return dst
		}
		for i := range m {
			if ix.coversRow(i, sx, sz) {
				dst = append(dst, i)
			}
		}
		return dst
	}
	for q := range ix.n {
		ix.code[q] = uint8(letterCode(sx, sz, q))
	}
	for k := range ix.pairs {
		a := &ix.pairs[k]
		c := int(ix.code[a.q1]) - 1
		if a.q2 >= 0 {
			c = 3*c + int(ix.code[a.q2]) - 1
		}
		terms := ix.terms[a.start[c]:a.start[c+1]]
		if w == 1 {
			sa, sb := sx[0], sz[0]
			for _, i := range terms {
				x, z := ix.x[i], ix.z[i]
				if ((x^sa)|(z^sb))&(x|z) == 0 {
					dst = append(dst, int(i))
				}
			}
			continue
		}
		for _, i := range terms {
			if ix.coversRow(int(i), sx, sz) {
				dst = append(dst, int(i))
			}
		}
	}
	return dst
}

func (ix *coverIndex) coversRow(i int, sx, sz []uint64) bool {
	o := i * ix.w
	for k := range ix.w {
		x, z := ix.x[o+k], ix.z[o+k]
		if ((x^sx[k])|(z^sz[k]))&(x|z) != 0 {
			return false
		}
	}
	return true
}

// parity returns the parity of outcome b over the support of term i.
func (ix *coverIndex) parity(i int, b []uint64) int {
	o := i * ix.w
	c := 0
	for k := range ix.w {
		c += bits.OnesCount64(b[k] & ix.supp[o+k])
	}
	return c & 1
}
