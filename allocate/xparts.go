package allocate

import (
	"math/bits"
	"slices"

	"github.com/shotplan/shotplan/pauli"
)

// xParts groups the rows of a table by their X part (the x words: which
// qubits carry X or Y), so that the rows an entangled setting covers are
// found without testing every row.
//
// An entangled setting with circuit U covers a string P when U P U† is
// ±(a Z-string), that is when P lies (up to sign) in the group S generated
// by the n strings U† Z_q U (MATH §8): n independent commuting strings,
// which span a maximal commuting subspace, so S is exactly the set of
// strings commuting with all of S. In particular P commutes with every
// Z-string Z^h of S, and the symplectic product of P = (x, z) with (0, h)
// is x·h: a covered string's X part is orthogonal to every such h. That
// test depends on the X part alone, so it is made once per distinct X part
// (a bucket), and only the rows of the buckets that pass are tested fully.
// Molecular terms share X parts widely (a bucket per set of excited
// orbitals, the Z strings differing), and S holds many Z-strings, so most
// buckets fail.
//
// The Z-strings of S: U Z^h U† = Σ_q h_q·(U Z_q U†) is a Z-string when
// Σ_q h_q a_q = 0 for a_q the X part of U Z_q U†, so the h form the left
// null space of the n×n matrix with rows a_q, found by Gaussian
// elimination.
type xParts struct {
	n, w  int
	keys  []uint64 // distinct X parts, bucket b's at keys[b·w:(b+1)·w]
	start []int32  // bucket b holds rows[start[b]:start[b+1]]
	rows  []int32  // row indices by bucket, increasing within one
}

// xChecksMin is the least number of independent Z-strings of a setting's
// group for which xQuery filters by X part; with fewer, about 2^−k of the
// buckets fail for k of them, too few to beat a plain scan.
const xChecksMin = 4

// newXParts builds the buckets of t's rows.
func newXParts(t *pauli.Table) *xParts {
	n, m := t.Qubits(), t.Len()
	w := pauli.Words(n)
	ix := &xParts{n: n, w: w, rows: make([]int32, m)}
	for i := range ix.rows {
		ix.rows[i] = int32(i)
	}
	slices.SortFunc(ix.rows, func(a, b int32) int {
		xa, _ := t.Words(int(a))
		xb, _ := t.Words(int(b))
		if c := slices.Compare(xa, xb); c != 0 {
			return c
		}
		return int(a - b)
	})
	ix.start = make([]int32, 0, 1024)
	var last []uint64
	for k, r := range ix.rows {
		x, _ := t.Words(int(r))
		if k == 0 || !slices.Equal(x, last) {
			ix.start = append(ix.start, int32(k))
			ix.keys = append(ix.keys, x...)
			last = x
		}
	}
	ix.start = append(ix.start, int32(m))
	return ix
}

// xQuery is one worker's scratch for queries of an xParts.
type xQuery struct {
	ix   *xParts
	red  []uint64 // elimination rows: a_q then h_q, 2w words each
	zq   []uint64 // scratch: the z words of Z_q
	zero []uint64
	tab  []uint64 // syndrome tables, 256 entries per byte of X part
}

// query returns a scratch space for queries of ix.
func (ix *xParts) query() *xQuery {
	return &xQuery{
		ix:   ix,
		red:  make([]uint64, 2*ix.w*ix.n),
		zq:   make([]uint64, ix.w),
		zero: make([]uint64, ix.w),
		tab:  make([]uint64, 256*((ix.n+7)/8)),
	}
}

// appendCovered appends to dst the rows of t (the table ix was built from)
// that the entangled setting s covers, bucket by bucket, and reports true;
// it reports false, appending nothing, when s's group has fewer than
// xChecksMin independent Z-strings and a plain scan is the better way.
func (q *xQuery) appendCovered(dst []int32, t *pauli.Table, s pauli.Setting) ([]int32, bool) {
	ix := q.ix
	n, w := ix.n, ix.w
	d := s.Diagonalization()
	// Rows a_q | e_q, reduced on the a columns.
	red := q.red
	clear(red)
	for k := range n {
		o := 2 * w * k
		clear(q.zq)
		q.zq[k>>6] = 1 << (k & 63)
		img, _ := d.Conjugate(pauli.FromWords(n, q.zero, q.zq))
		x, _ := img.Words()
		copy(red[o:o+w], x)
		red[o+w+(k>>6)] |= 1 << (k & 63)
	}
	rank := 0
	for c := 0; c < n && rank < n; c++ {
		cw, cb := c>>6, uint64(1)<<(c&63)
		p := -1
		for r := rank; r < n; r++ {
			if red[2*w*r+cw]&cb != 0 {
				p = r
				break
			}
		}
		if p < 0 {
			continue
		}
		po, ro := 2*w*p, 2*w*rank
		for j := range 2 * w {
			red[po+j], red[ro+j] = red[ro+j], red[po+j]
		}
		for r := range n {
			if o := 2 * w * r; r != rank && red[o+cw]&cb != 0 {
				for j := range 2 * w {
					red[o+j] ^= red[ro+j]
				}
			}
		}
		rank++
	}
	checks := min(n-rank, 64)
	if checks < xChecksMin {
		return dst, false
	}
	// Syndrome tables: bit i of tab[c·256+v] is the parity of byte c of
	// an X part equal to v against check i (h of row rank+i).
	tab := q.tab
	for c := range (n + 7) / 8 {
		var col [8]uint64
		for j := range 8 {
			b := 8*c + j
			if b >= n {
				break
			}
			for i := range checks {
				h := red[2*w*(rank+i)+w:]
				col[j] |= (h[b>>6] >> (b & 63) & 1) << i
			}
		}
		tc := tab[256*c : 256*c+256]
		tc[0] = 0
		for v := 1; v < 256; v++ {
			tc[v] = tc[v&(v-1)] ^ col[bits.TrailingZeros(uint(v))]
		}
	}
	nc := (n + 7) / 8
	keys, start := ix.keys, ix.start
	for b := range len(start) - 1 {
		key := keys[b*w : b*w+w]
		var syn uint64
		for c := range nc {
			syn ^= tab[c<<8|int(key[c>>3]>>(8*(c&7))&255)]
		}
		if syn != 0 {
			continue
		}
		for _, r := range ix.rows[start[b]:start[b+1]] {
			if t.CoversRow(int(r), s) {
				dst = append(dst, r)
			}
		}
	}
	return dst, true
}
