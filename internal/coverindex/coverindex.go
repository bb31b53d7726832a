// Package coverindex finds the strings of a table that a local measurement
// setting covers (MATH.md §1: on every qubit the string is I or the
// setting's letter) without testing every string. Allocation strategies and
// certificates both ask this question once per setting over all terms of a
// Hamiltonian, so they share this index.
package coverindex

import (
	"math/bits"
	"slices"

	"github.com/shotplan/shotplan/internal/symplectic"
	"github.com/shotplan/shotplan/pauli"
)

// MaxStored is the number of cover entries (4-byte term indices, 512 MiB
// in all) that a user of an Index keeps in memory from its answers: the
// allocate package's covered pairs and the guarantee package's covered
// terms per setting. Past it they recompute or refuse instead.
const MaxStored = 1 << 27

// PairMaxQubits is the widest register for which an Index buckets
// terms by their two lowest support qubits (n²·9 buckets) and pre-filters by
// the next two; wider registers use the lowest qubit alone (3n buckets).
const PairMaxQubits = 128

// Index finds the terms a setting covers without testing every term.
// A setting covers a term only if it agrees with the term's letters on the
// term's two lowest support qubits, so the terms are bucketed by those
// qubits and letters, and a query reads only the buckets whose letters agree
// with the setting: about a ninth of the terms of weight ≥ 2. For registers
// of more than 64 qubits each entry also carries its third and fourth
// support qubits and letters in one word, which settles terms of weight ≤ 4
// without reading their bit words; only heavier terms that pass are tested
// word-wise. Registers wider than
// PairMaxQubits are bucketed by the lowest support qubit alone (a
// third of the terms read) and tested word-wise.
type Index struct {
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

// New builds the index of rows strings on n qubits; row(i) returns the x and
// z words of row i (for a [pauli.Table], its Words method). The words are
// copied, so the caller may reuse its storage.
func New(n, rows int, row func(i int) (x, z []uint64)) *Index {
	w := pauli.Words(n)
	c := &Index{n: n, w: w, pairs: n <= PairMaxQubits, code: make([]uint8, n)}
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
func letterCode(x, z []uint64, q int) int32 { return int32(symplectic.Code(x, z, q)) - 1 }

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
func (c *Index) bucketOf(x, z []uint64) int32 {
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

// Clone returns an Index that shares c's buckets and words, which queries
// never change, with its own query scratch, so that several goroutines can
// query the same strings at once, one Index each.
func (c *Index) Clone() *Index {
	d := *c
	d.code = make([]uint8, c.n)
	return &d
}

// AppendCovered appends to dst the row numbers of the strings covered by
// the local setting with words sx, sz, in bucket order (not increasing), and
// returns the extended slice. It allocates only when dst lacks room. An
// Index holds query scratch, so one Index serves one goroutine at a time.
func (c *Index) AppendCovered(dst []int32, sx, sz []uint64) []int32 {
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
