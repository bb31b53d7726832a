package allocate

import (
	"cmp"
	"fmt"
	"math"
	"math/bits"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// ranked holds the terms of a Hamiltonian in rank order — by |h_i|
// descending, ties by term index — with their symplectic words laid out row
// by row (x words, then z words), so that hot loops read one contiguous
// slice.
type ranked struct {
	n, w  int
	order []int32   // order[r] is the term index of rank r
	abs   []float64 // abs[r] = |h_order[r]|
	words []uint64  // row r: x at words[2wr:], z at words[2wr+w:]
	used  []uint64  // qubits in the support of some term
	all   []uint64  // every qubit
}

func newRanked(h *hamiltonian.Hamiltonian) *ranked {
	m, n := h.Len(), h.Qubits()
	w := pauli.Words(n)
	rk := &ranked{n: n, w: w, order: make([]int32, m), abs: make([]float64, m), words: make([]uint64, 2*w*m), used: make([]uint64, w), all: make([]uint64, w)}
	coef := h.Coeffs()
	fillIota(rk.order)
	slices.SortFunc(rk.order, func(a, b int32) int {
		if c := cmp.Compare(math.Abs(coef[b]), math.Abs(coef[a])); c != 0 {
			return c
		}
		return cmp.Compare(a, b)
	})
	t := h.Table()
	for r, i := range rk.order {
		rk.abs[r] = math.Abs(coef[i])
		x, z := t.Words(int(i))
		copy(rk.words[2*w*r:], x)
		copy(rk.words[2*w*r+w:], z)
		for k := range w {
			rk.used[k] |= x[k] | z[k]
		}
	}
	for q := range n {
		rk.all[q>>6] |= 1 << (q & 63)
	}
	return rk
}

// fillIota sets v[i] = i.
func fillIota(v []int32) {
	for i := range v {
		v[i] = int32(i)
	}
}

// row returns the x and z words of rank r.
func (rk *ranked) row(r int) (x, z []uint64) {
	o := 2 * rk.w * r
	return rk.words[o : o+rk.w], rk.words[o+rk.w : o+2*rk.w]
}

// letterAt returns the letter of qubit q in the words x, z.
func letterAt(x, z []uint64, q int) pauli.Letter {
	b := x[q>>6]>>(q&63)&1 | (z[q>>6]>>(q&63)&1)<<1
	return [4]pauli.Letter{pauli.I, pauli.X, pauli.Z, pauli.Y}[b]
}

// supportOf iterates over the support of the string with words x, z: the
// word-level form of [pauli.String.Support], for rows read from a table or
// [ranked] without copying them into a String.
func supportOf(x, z []uint64) func(func(int) bool) {
	return func(yield func(int) bool) {
		for i := range x {
			s := x[i] | z[i]
			for s != 0 {
				if !yield(i<<6 + bits.TrailingZeros64(s)) {
					return
				}
				s &= s - 1
			}
		}
	}
}

// letterBits returns the symplectic bits of a letter as all-zero or
// all-one words.
func letterBits(l pauli.Letter) (x, z uint64) {
	switch l {
	case pauli.X:
		return ^uint64(0), 0
	case pauli.Y:
		return ^uint64(0), ^uint64(0)
	case pauli.Z:
		return 0, ^uint64(0)
	}
	return 0, 0
}

// writeLetters writes the letters of the n-qubit words x, z into dst.
func writeLetters(dst []pauli.Letter, x, z []uint64) {
	for q := range dst {
		dst[q] = letterAt(x, z, q)
	}
}

// fillLetter returns the letter a strategy puts on the qubits it leaves
// free: l, or Z for the zero value pauli.I. The error, prefixed by the
// strategy's name, rejects a value that is not a letter.
func fillLetter(name string, l pauli.Letter) (pauli.Letter, error) {
	switch {
	case l > pauli.Z:
		return 0, fmt.Errorf("%s: fill letter %d is not I, X, Y or Z", name, l)
	case l == pauli.I:
		return pauli.Z, nil
	}
	return l, nil
}

// writeSetting writes the letters of the local setting s into dst. An
// entangled setting has no letters: the error, prefixed by the strategy's
// name, tells the caller to use NextBatch.
func writeSetting(dst []pauli.Letter, name string, s pauli.Setting) error {
	if !s.IsLocal() {
		return fmt.Errorf("%s: setting %s is entangled and has no letters; use NextBatch", name, s)
	}
	for q := range dst {
		dst[q] = s.At(q)
	}
	return nil
}

// pairIndexMaxQubits is the widest register for which coverIndex buckets
// terms by their two lowest support qubits (n²·9 buckets) and pre-filters by
// the next two; wider registers use the lowest qubit alone (3n buckets).
const pairIndexMaxQubits = 128

// coverIndex finds the terms a setting covers without testing every term.
// A setting covers a term only if it agrees with the term's letters on the
// term's two lowest support qubits, so the terms are bucketed by those
// qubits and letters, and a query reads only the buckets whose letters agree
// with the setting: about a ninth of the terms of weight ≥ 2. For registers
// of more than 64 qubits each entry also carries its third and fourth
// support qubits and letters in one word, which settles terms of weight ≤ 4
// without reading their bit words; only heavier terms that pass are tested
// word-wise. Registers wider than
// pairIndexMaxQubits are bucketed by the lowest support qubit alone (a
// third of the terms read) and tested word-wise.
type coverIndex struct {
	n, w  int
	pairs bool
	start []int32  // bucket b holds entries start[b]..start[b+1]-1
	ids   []int32  // caller's row number of each entry
	extra []uint32 // pair mode: third and fourth support qubits, see extraOf
	words []uint64 // entry e: x at words[2we:], z at words[2we+w:]
	code  []uint8  // scratch: letter code 0, 1, 2 of each qubit of the query
}

// Layout of an extra word: bits 0–6 the third support qubit, 7–8 its letter
// code, 9 set if there is one; bits 10–16, 17–18, 19 the same for the fourth;
// bit 20 set if the term has more than four support qubits.
const (
	extraHas3 = 1 << 9
	extraHas4 = 1 << 19
	extraMore = 1 << 20
)

func newCoverIndex(n, rows int, row func(i int) (x, z []uint64)) *coverIndex {
	w := pauli.Words(n)
	c := &coverIndex{n: n, w: w, pairs: n <= pairIndexMaxQubits, code: make([]uint8, n)}
	nb := 3 * n
	if c.pairs {
		nb += 9 * n * n
	}
	bucket := make([]int32, rows)
	count := make([]int32, nb+1)
	for i := range rows {
		x, z := row(i)
		bucket[i] = c.bucketOf(x, z)
		count[bucket[i]+1]++
	}
	for b := 1; b <= nb; b++ {
		count[b] += count[b-1]
	}
	c.start = append([]int32(nil), count...)
	c.ids = make([]int32, rows)
	c.words = make([]uint64, 2*w*rows)
	if c.pairs {
		c.extra = make([]uint32, rows)
	}
	for i := range rows {
		e := count[bucket[i]]
		count[bucket[i]]++
		c.ids[e] = int32(i)
		x, z := row(i)
		copy(c.words[2*w*int(e):], x[:w])
		copy(c.words[2*w*int(e)+w:], z[:w])
		if c.pairs {
			c.extra[e] = extraOf(x[:w], z[:w])
		}
	}
	return c
}

// letterCode returns 0, 1, 2 for X, Z, Y on qubit q (−1 for I).
func letterCode(x, z []uint64, q int) int32 {
	return int32(x[q>>6]>>(q&63)&1|(z[q>>6]>>(q&63)&1)<<1) - 1
}

// supportQubits appends to dst the first up-to-max support qubits of the
// string with words x, z, and reports whether it has more.
func supportQubits(dst []int, x, z []uint64, max int) ([]int, bool) {
	for k := range x {
		s := x[k] | z[k]
		for s != 0 {
			if len(dst) == max {
				return dst, true
			}
			dst = append(dst, k<<6+bits.TrailingZeros64(s))
			s &= s - 1
		}
	}
	return dst, false
}

// extraOf packs the third and fourth support qubits of a term (pair mode).
func extraOf(x, z []uint64) uint32 {
	var buf [4]int
	qs, more := supportQubits(buf[:0], x, z, 4)
	var e uint32
	if len(qs) > 2 {
		e |= uint32(qs[2]) | uint32(letterCode(x, z, qs[2]))<<7 | extraHas3
	}
	if len(qs) > 3 {
		e |= uint32(qs[3])<<10 | uint32(letterCode(x, z, qs[3]))<<17 | extraHas4
	}
	if more {
		e |= extraMore
	}
	return e
}

// bucketOf returns the bucket of the term with words x, z.
func (c *coverIndex) bucketOf(x, z []uint64) int32 {
	var buf [2]int
	qs, _ := supportQubits(buf[:0], x, z, 2)
	n := int32(c.n)
	if c.pairs && len(qs) == 2 {
		return ((int32(qs[0])*n+int32(qs[1]))*3+letterCode(x, z, qs[0]))*3 + letterCode(x, z, qs[1])
	}
	base := int32(0)
	if c.pairs {
		base = 9 * n * n
	}
	return base + int32(qs[0])*3 + letterCode(x, z, qs[0])
}

// appendCovered appends to dst the row numbers of the terms covered by the
// setting with words sx, sz, in bucket order.
func (c *coverIndex) appendCovered(dst []int32, sx, sz []uint64) []int32 {
	n, w := c.n, c.w
	for q := range n {
		c.code[q] = uint8(letterCode(sx, sz, q))
	}
	// covers tests entry e word-wise.
	covers := func(e int) bool {
		o := 2 * w * e
		var m uint64
		for i := range w {
			x, z := c.words[o+i], c.words[o+w+i]
			m |= ((x ^ sx[i]) | (z ^ sz[i])) & (x | z)
		}
		return m == 0
	}
	code := c.code
	// scanPair reads a pair-mode bucket: the extra word settles terms of
	// weight ≤ 4; heavier ones that pass it are tested word-wise.
	scanPair := func(b int32) {
		lo, hi := c.start[b], c.start[b+1]
		k := len(dst)
		dst = slices.Grow(dst, int(hi-lo))[:k+int(hi-lo)]
		ids, extra := c.ids[lo:hi], c.extra[lo:hi]
		if w == 1 {
			// One word per bit vector is as cheap to read as the extra
			// word: test it directly, branch-free.
			x0, z0 := sx[0], sz[0]
			words := c.words[2*lo : 2*hi]
			for j, id := range ids {
				x, z := words[2*j], words[2*j+1]
				m := ((x ^ x0) | (z ^ z0)) & (x | z)
				dst[k] = id
				k += int(1 ^ (m|-m)>>63)
			}
			dst = dst[:k]
			return
		}
		for j, id := range ids {
			ex := extra[j]
			d3 := (uint32(code[ex&127]) ^ ex>>7&3) & -(ex >> 9 & 1)
			d4 := (uint32(code[ex>>10&127]) ^ ex>>17&3) & -(ex >> 19 & 1)
			bad := d3 | d4
			if bad == 0 && ex&extraMore != 0 && !covers(int(lo)+j) {
				bad = 1
			}
			dst[k] = id
			k += int(1 ^ (bad|-bad)>>31)
		}
		dst = dst[:k]
	}
	// scanWords reads a bucket testing every entry word-wise.
	scanWords := func(b int32) {
		lo, hi := c.start[b], c.start[b+1]
		k := len(dst)
		dst = slices.Grow(dst, int(hi-lo))[:k+int(hi-lo)]
		for j, id := range c.ids[lo:hi] {
			dst[k] = id
			if covers(int(lo) + j) {
				k++
			}
		}
		dst = dst[:k]
	}
	n32 := int32(n)
	if !c.pairs {
		for q := range n32 {
			scanWords(q*3 + int32(code[q]))
		}
		return dst
	}
	for q1 := range n32 {
		row := (q1*n32)*9 + int32(code[q1])*3
		for q2 := q1 + 1; q2 < n32; q2++ {
			b := row + q2*9 + int32(code[q2])
			if c.start[b] != c.start[b+1] {
				scanPair(b)
			}
		}
	}
	base := 9 * n32 * n32
	for q := range n32 {
		scanPair(base + q*3 + int32(code[q]))
	}
	return dst
}
