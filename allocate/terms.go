package allocate

import (
	"cmp"
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
	for i := range rk.order {
		rk.order[i] = int32(i)
	}
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

// pairIndexMaxQubits is the widest register for which coverIndex buckets
// terms by their two lowest support qubits (n²·9 buckets); wider registers
// use the lowest qubit alone (3n buckets).
const pairIndexMaxQubits = 128

// coverIndex finds the terms a setting covers without testing every term.
// A setting covers a term only if it agrees with the term's letters on the
// term's two lowest support qubits, so the terms are bucketed by those
// qubits and letters; a query reads only the buckets whose letters agree
// with the setting, about a ninth of the terms of weight ≥ 2 (a third for
// registers wider than pairIndexMaxQubits), and tests those word-wise.
type coverIndex struct {
	n, w  int
	pairs bool
	start []int32  // bucket b holds entries start[b]..start[b+1]-1
	ids   []int32  // caller's row number of each entry
	words []uint64 // entry e: x at words[2we:], z at words[2we+w:]
	code  []int32  // scratch: letter code 0, 1, 2 of each qubit of the query
}

func newCoverIndex(n, rows int, row func(i int) (x, z []uint64)) *coverIndex {
	w := pauli.Words(n)
	c := &coverIndex{n: n, w: w, pairs: n <= pairIndexMaxQubits, code: make([]int32, n)}
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
	for i := range rows {
		e := count[bucket[i]]
		count[bucket[i]]++
		c.ids[e] = int32(i)
		x, z := row(i)
		copy(c.words[2*w*int(e):], x[:w])
		copy(c.words[2*w*int(e)+w:], z[:w])
	}
	return c
}

// bucketOf returns the bucket of the term with words x, z.
func (c *coverIndex) bucketOf(x, z []uint64) int32 {
	q1, q2 := -1, -1
	for k := range c.w {
		s := x[k] | z[k]
		for s != 0 && q2 < 0 {
			q := k<<6 + bits.TrailingZeros64(s)
			s &= s - 1
			if q1 < 0 {
				q1 = q
			} else {
				q2 = q
			}
		}
		if q2 >= 0 {
			break
		}
	}
	code := func(q int) int32 {
		return int32(x[q>>6]>>(q&63)&1|(z[q>>6]>>(q&63)&1)<<1) - 1
	}
	n := int32(c.n)
	if c.pairs && q2 >= 0 {
		return ((int32(q1)*n+int32(q2))*3+code(q1))*3 + code(q2)
	}
	base := int32(0)
	if c.pairs {
		base = 9 * n * n
	}
	return base + int32(q1)*3 + code(q1)
}

// appendCovered appends to dst the row numbers of the terms covered by the
// setting with words sx, sz, in bucket order.
func (c *coverIndex) appendCovered(dst []int32, sx, sz []uint64) []int32 {
	n, w := c.n, c.w
	for q := range n {
		c.code[q] = int32(sx[q>>6]>>(q&63)&1|(sz[q>>6]>>(q&63)&1)<<1) - 1
	}
	scan := func(b int32) {
		lo, hi := c.start[b], c.start[b+1]
		if w == 1 {
			// Branch-free: write every candidate, advance past the covered.
			x0, z0 := sx[0], sz[0]
			k := len(dst)
			dst = slices.Grow(dst, int(hi-lo))[:k+int(hi-lo)]
			words, ids := c.words[2*lo:2*hi], c.ids[lo:hi]
			for j, id := range ids {
				x, z := words[2*j], words[2*j+1]
				dst[k] = id
				m := ((x ^ x0) | (z ^ z0)) & (x | z)
				k += int(1 ^ (m|-m)>>63)
			}
			dst = dst[:k]
			return
		}
		k := len(dst)
		dst = slices.Grow(dst, int(hi-lo))[:k+int(hi-lo)]
		ids := c.ids[lo:hi]
		if w == 2 {
			x0, x1, z0, z1 := sx[0], sx[1], sz[0], sz[1]
			words := c.words[4*lo : 4*hi]
			for j, id := range ids {
				e := words[4*j : 4*j+4 : 4*j+4]
				m := ((e[0]^x0)|(e[2]^z0))&(e[0]|e[2]) | ((e[1]^x1)|(e[3]^z1))&(e[1]|e[3])
				dst[k] = id
				k += int(1 ^ (m|-m)>>63)
			}
			dst = dst[:k]
			return
		}
		for j, id := range ids {
			o := 2 * w * (int(lo) + j)
			var m uint64
			for i := range w {
				x, z := c.words[o+i], c.words[o+w+i]
				m |= ((x ^ sx[i]) | (z ^ sz[i])) & (x | z)
			}
			dst[k] = id
			k += int(1 ^ (m|-m)>>63)
		}
		dst = dst[:k]
	}
	n32 := int32(n)
	base := int32(0)
	if c.pairs {
		base = 9 * n32 * n32
		for q1 := range n32 {
			row := (q1*n32)*9 + c.code[q1]*3
			for q2 := q1 + 1; q2 < n32; q2++ {
				b := row + q2*9 + c.code[q2]
				if c.start[b] != c.start[b+1] {
					scan(b)
				}
			}
		}
	}
	for q := range n32 {
		scan(base + q*3 + c.code[q])
	}
	return dst
}

func bitsTrailing(s uint64) int { return bits.TrailingZeros64(s) }
