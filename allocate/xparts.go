package allocate

import (
	"cmp"
	"math/bits"
	"runtime"
	"slices"
	"sync"

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
	n, w   int
	keys   []uint64 // distinct X parts, bucket b's at keys[b·w:(b+1)·w]
	start  []int32  // bucket b holds rows[start[b]:start[b+1]]
	rows   []int32  // row indices by bucket, increasing within one
	planes []uint64 // bit b%64 of planes[(b/64)·n+q]: bucket b's X part has qubit q
	zs     []uint64 // one word (n ≤ 64): z word of rows[k] at zs[k]
}

// xChecksMin is the least number of independent Z-strings of a setting's
// group for which the buckets are used; with fewer, about 2^−k of the
// buckets fail for k of them, too few to beat a plain scan.
const xChecksMin = 4

// newXParts builds the buckets of m rows on n qubits; row(i) returns the x
// and z words of row i (for a [pauli.Table], its Words method).
func newXParts(n, m int, row func(i int) (x, z []uint64)) *xParts {
	w := pauli.Words(n)
	ix := &xParts{n: n, w: w, rows: make([]int32, m)}
	for i := range ix.rows {
		ix.rows[i] = int32(i)
	}
	if w == 1 {
		// One word: sort (X part, row) pairs, with no call per comparison.
		type keyRow struct {
			x uint64
			r int32
		}
		kr := make([]keyRow, m)
		for i := range kr {
			x, _ := row(i)
			kr[i] = keyRow{x[0], int32(i)}
		}
		slices.SortFunc(kr, func(a, b keyRow) int {
			if c := cmp.Compare(a.x, b.x); c != 0 {
				return c
			}
			return cmp.Compare(a.r, b.r)
		})
		for i, e := range kr {
			ix.rows[i] = e.r
		}
	} else {
		slices.SortFunc(ix.rows, func(a, b int32) int {
			xa, _ := row(int(a))
			xb, _ := row(int(b))
			if c := slices.Compare(xa, xb); c != 0 {
				return c
			}
			return cmp.Compare(a, b)
		})
	}
	ix.start = make([]int32, 0, 1024)
	var last []uint64
	for k, r := range ix.rows {
		x, _ := row(int(r))
		if k == 0 || !slices.Equal(x, last) {
			ix.start = append(ix.start, int32(k))
			ix.keys = append(ix.keys, x...)
			last = x
		}
	}
	ix.start = append(ix.start, int32(m))
	if w == 1 {
		ix.zs = make([]uint64, m)
		for k, r := range ix.rows {
			_, z := row(int(r))
			ix.zs[k] = z[0]
		}
	}
	nb := len(ix.start) - 1
	ix.planes = make([]uint64, (nb+63)/64*n)
	for b := range nb {
		for i, v := range ix.keys[b*w : b*w+w] {
			for ; v != 0; v &= v - 1 {
				q := i<<6 | bits.TrailingZeros64(v)
				ix.planes[(b>>6)*n+q] |= 1 << (b & 63)
			}
		}
	}
	return ix
}

// xQuery is one worker's scratch for queries of an xParts.
type xQuery struct {
	ix   *xParts
	red  []uint64 // elimination rows: 2w words each
	hs   []uint64 // the checks (Z-strings' z words), w words each
	zq   []uint64 // scratch: the z words of Z_q
	img  []uint64 // one word: x word of U X_q U† at img[q], of U Z_q U† at img[n+q]
	zero []uint64
	tab  []uint64 // byte tables (see byteTables), two sets
	offs []int32  // the checks' qubits, check after check
	ends []int    // end of each check's qubits in offs
	pass []int32  // buckets passing every check

	// split, if true, splits a query's scans among up to GOMAXPROCS
	// goroutines (for a caller that makes one query at a time), each
	// with its own list, joined in order: the result does not depend on
	// the split.
	split    bool
	splitMin int // if > 0, replaces xSplitMin (tests)
	lists    [][]int32
}

// xSplitMin is the least number of bucket words, or of buckets, that a
// goroutine of a split scan takes.
const xSplitMin = 256

// runParts calls fn(p, lo, hi) for the parts p of [0, n), each at least
// xSplitMin long, on up to GOMAXPROCS goroutines if q.split (one part
// otherwise), and returns the number of parts, each with its list in
// q.lists[p] (emptied first).
func (q *xQuery) runParts(n int, fn func(p, lo, hi int)) int {
	parts := 1
	if q.split {
		least := xSplitMin
		if q.splitMin > 0 {
			least = q.splitMin
		}
		parts = max(1, min(runtime.GOMAXPROCS(0), n/least))
	}
	for len(q.lists) < parts {
		q.lists = append(q.lists, nil)
	}
	for p := range parts {
		q.lists[p] = q.lists[p][:0]
	}
	if parts == 1 {
		fn(0, 0, n)
		return 1
	}
	var wg sync.WaitGroup
	for p := range parts {
		wg.Go(func() { fn(p, n*p/parts, n*(p+1)/parts) })
	}
	wg.Wait()
	return parts
}

// query returns a scratch space for queries of ix.
func (ix *xParts) query() *xQuery {
	return &xQuery{
		ix:   ix,
		red:  make([]uint64, 2*ix.w*ix.n),
		hs:   make([]uint64, ix.w*ix.n),
		zq:   make([]uint64, ix.w),
		img:  make([]uint64, 2*ix.n),
		zero: make([]uint64, ix.w),
		tab:  make([]uint64, 2*256*((ix.n+7)/8)),
	}
}

// passing sets q.pass to the buckets whose X part is orthogonal to each of
// the count independent checks at hs[i·stride:] (w words each). The checks
// are first brought to reduced row echelon form, which spans the same
// space with fewer qubits per check, and are then applied 64 buckets at a
// time through the planes, each check's parity being the XOR of the planes
// of its qubits, until no bucket of the 64 is left.
func (q *xQuery) passing(hs []uint64, stride, count int) {
	ix := q.ix
	n, w := ix.n, ix.w
	h := q.hs[:count*w]
	for i := range count {
		copy(h[i*w:i*w+w], hs[i*stride:i*stride+w])
	}
	rank := 0
	for c := 0; c < n && rank < count; c++ {
		cw, cb := c>>6, uint64(1)<<(c&63)
		p := -1
		for r := rank; r < count; r++ {
			if h[r*w+cw]&cb != 0 {
				p = r
				break
			}
		}
		if p < 0 {
			continue
		}
		for j := range w {
			h[p*w+j], h[rank*w+j] = h[rank*w+j], h[p*w+j]
		}
		for r := range count {
			if r != rank && h[r*w+cw]&cb != 0 {
				for j := range w {
					h[r*w+j] ^= h[rank*w+j]
				}
			}
		}
		rank++
	}
	q.offs, q.ends = q.offs[:0], q.ends[:0]
	for i := range count {
		for j, v := range h[i*w : i*w+w] {
			for ; v != 0; v &= v - 1 {
				q.offs = append(q.offs, int32(j<<6|bits.TrailingZeros64(v)))
			}
		}
		q.ends = append(q.ends, len(q.offs))
	}
	nb := len(ix.start) - 1
	offs, ends := q.offs, q.ends
	parts := q.runParts((nb+63)/64, func(p, lo, hi int) {
		pass := q.lists[p]
		for k := lo; k < hi; k++ {
			alive := ^uint64(0)
			if r := nb - k<<6; r < 64 {
				alive = 1<<r - 1
			}
			row := ix.planes[k*n : k*n+n]
			a := 0
			for _, e := range ends {
				var v uint64
				for _, o := range offs[a:e] {
					v ^= row[o]
				}
				a = e
				if alive &^= v; alive == 0 {
					break
				}
			}
			for ; alive != 0; alive &= alive - 1 {
				pass = append(pass, int32(k<<6|bits.TrailingZeros64(alive)))
			}
		}
		q.lists[p] = pass
	})
	q.pass = q.pass[:0]
	for _, l := range q.lists[:parts] {
		q.pass = append(q.pass, l...)
	}
}

// appendCovered appends to dst the rows that the entangled setting s
// covers, bucket by bucket, and reports true. The rows of the buckets that
// pass are tested in full: for n ≤ 64 through the images of X_q and Z_q
// under the setting's circuit (see below), otherwise by covers(r). It
// reports false, appending nothing, when s's group has
// fewer than xChecksMin independent Z-strings and a plain scan is the
// better way.
func (q *xQuery) appendCovered(dst []int32, s pauli.Setting, covers func(r int32) bool) ([]int32, bool) {
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
		if w == 1 {
			q.img[n+k] = x[0]
			img, _ = d.Conjugate(pauli.FromWords(n, q.zq, q.zero))
			x, _ = img.Words()
			q.img[k] = x[0]
		}
	}
	rank := eliminateX(red, n, w, n)
	if n-rank < xChecksMin {
		return dst, false
	}
	q.passing(red[2*w*rank+w:], 2*w, n-rank)
	if w > 1 {
		for _, b := range q.pass {
			for _, r := range ix.rows[ix.start[b]:ix.start[b+1]] {
				if covers(r) {
					dst = append(dst, r)
				}
			}
		}
		return dst, true
	}
	// One word: the X part of U P U† for P = (x, z) is the XOR of those
	// of U X_q U† over x's qubits and of U Z_q U† over z's, zero exactly
	// when P is covered; the first half is taken once per bucket, the
	// second once per row, both from byte tables.
	nc := (n + 7) / 8
	size := 256 * nc
	tx, tz := q.tab[:size], q.tab[size:2*size]
	mapTables(tx, n, q.img[:n])
	mapTables(tz, n, q.img[n:])
	keys, start, rows, zs := ix.keys, ix.start, ix.rows, ix.zs
	for _, b := range q.pass {
		a := lookup1(tx, keys[b], nc)
		for k := start[b]; k < start[b+1]; k++ {
			if lookup1(tz, zs[k], nc) == a {
				dst = append(dst, rows[k])
			}
		}
	}
	return dst, true
}

// mapTables fills tab (256 entries per byte of an n-bit word, n ≤ 64) so
// that lookup1(tab, v) is the XOR of img[q] over the bits q set in v.
func mapTables(tab []uint64, n int, img []uint64) {
	for c := range (n + 7) / 8 {
		var col [8]uint64
		for j := range min(8, n-8*c) {
			col[j] = img[8*c+j]
		}
		tc := tab[256*c : 256*c+256]
		tc[0] = 0
		for v := 1; v < 256; v++ {
			tc[v] = tc[v&(v-1)] ^ col[bits.TrailingZeros(uint(v))]
		}
	}
}

// lookup1 is byteLookup for one-word vectors.
func lookup1(tab []uint64, v uint64, nc int) uint64 {
	var out uint64
	for c := range nc {
		out ^= tab[c<<8|int(v>>(8*c)&255)]
	}
	return out
}

// byteTables fills tab (256 entries per byte of an n-bit vector) so that
// byteLookup(tab, v) has bit i set to the parity of v·u_i, for the count
// (at most 64) vectors u_i, u_i at vecs[i·stride:]: entry v of byte c is
// the XOR of the columns of the bits set in v, built from the entry with
// one bit fewer.
func byteTables(tab []uint64, n int, vecs []uint64, stride, count int) {
	for c := range (n + 7) / 8 {
		var col [8]uint64
		for j := range 8 {
			b := 8*c + j
			if b >= n {
				break
			}
			for i := range count {
				col[j] |= (vecs[i*stride+(b>>6)] >> (b & 63) & 1) << i
			}
		}
		tc := tab[256*c : 256*c+256]
		tc[0] = 0
		for v := 1; v < 256; v++ {
			tc[v] = tc[v&(v-1)] ^ col[bits.TrailingZeros(uint(v))]
		}
	}
}

// byteLookup returns the XOR over the nc bytes of v of their entries in tab
// (see byteTables).
func byteLookup(tab []uint64, v []uint64, nc int) uint64 {
	var syn uint64
	for c := range nc {
		syn ^= tab[c<<8|int(v[c>>3]>>(8*(c&7))&255)]
	}
	return syn
}

// eliminateX reduces rows rows of red (2w words each: x words, then z
// words) by Gaussian elimination over GF(2) on the n x columns and returns
// the rank: rows rank.. are left with zero x words, and, the row operations
// being invertible, their z words are independent if the rows were.
func eliminateX(red []uint64, n, w, rows int) int {
	rank := 0
	for c := 0; c < n && rank < rows; c++ {
		cw, cb := c>>6, uint64(1)<<(c&63)
		p := -1
		for r := rank; r < rows; r++ {
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
		for r := range rows {
			if o := 2 * w * r; r != rank && red[o+cw]&cb != 0 {
				for j := range 2 * w {
					red[o+j] ^= red[ro+j]
				}
			}
		}
		rank++
	}
	return rank
}

// commuting sets mask (bit r for row r, cleared first) to the rows that
// commute with each of the k ≤ min(n, 64) strings of gens (string i: x
// words, then z words, at gens[2w·i:]) and reports true. words holds the
// rows the buckets were built from in the same layout. It reports false,
// leaving mask alone, if the span of gens holds fewer than xChecksMin
// independent Z-strings, too few for the buckets to pay.
//
// A row commutes with every string of the span if it commutes with gens.
// For the Z-strings Z^h of the span this depends on the X part x alone
// (x·h = 0), so a bucket failing one is skipped whole; in a bucket that
// passes, a row (x, z) commutes with string g when x·z_g = z·x_g, and
// both sides are taken for all g at once, as k-bit words, from byte tables:
// the left once per bucket, the right once per row.
func (q *xQuery) commuting(mask []uint64, gens []uint64, k int, words []uint64) bool {
	ix := q.ix
	n, w := ix.n, ix.w
	if k > 64 || k > n {
		return false
	}
	red := q.red[:2*w*k]
	copy(red, gens[:2*w*k])
	rank := eliminateX(red, n, w, k)
	checks := k - rank
	if checks < xChecksMin {
		return false
	}
	q.passing(red[2*w*rank+w:], 2*w, checks)
	nc := (n + 7) / 8
	size := 256 * nc
	tz, tx := q.tab[:size], q.tab[size:2*size]
	byteTables(tz, n, gens[w:], 2*w, k) // bit i: x·z_i
	byteTables(tx, n, gens, 2*w, k)     // bit i: z·x_i
	clear(mask)
	keys, start, rows, pass := ix.keys, ix.start, ix.rows, q.pass
	parts := q.runParts(len(pass), func(p, lo, hi int) {
		found := q.lists[p]
		for _, b := range pass[lo:hi] {
			a := byteLookup(tz, keys[int(b)*w:int(b)*w+w], nc)
			if w == 1 {
				for k := start[b]; k < start[b+1]; k++ {
					if lookup1(tx, ix.zs[k], nc) == a {
						found = append(found, rows[k])
					}
				}
				continue
			}
			for _, r := range rows[start[b]:start[b+1]] {
				o := 2*w*int(r) + w
				if byteLookup(tx, words[o:o+w], nc) == a {
					found = append(found, r)
				}
			}
		}
		q.lists[p] = found
	})
	for _, l := range q.lists[:parts] {
		for _, r := range l {
			mask[r>>6] |= 1 << (r & 63)
		}
	}
	return true
}
