package pauli

import "math/bits"

// Table is a column store of many n-qubit strings, laid out like a row-major
// matrix: row r holds its x words, then its z words, at data[r*stride:]. The
// batch queries read the words directly, with no allocation or interface
// call per row, and write into buffers the caller owns.
//
// A Table is used through a pointer; the zero value is not usable, call
// [NewTable].
type Table struct {
	n      int
	w      int // words per bit vector
	stride int // 2*w
	rows   int
	data   []uint64
}

// NewTable returns an empty table for n-qubit strings, with room for capRows
// rows before it grows. It panics if n < 0.
func NewTable(n, capRows int) *Table {
	if n < 0 {
		panic("pauli: negative qubit count")
	}
	w := Words(n)
	return &Table{n: n, w: w, stride: 2 * w, data: make([]uint64, 0, 2*w*max(capRows, 0))}
}

// TableOf returns a table holding ps in order. It panics if the strings have
// different widths or ps is empty and n is unknown; use [NewTable] for an
// empty table.
func TableOf(n int, ps ...String) *Table {
	t := NewTable(n, len(ps))
	for _, p := range ps {
		t.Append(p)
	}
	return t
}

// Qubits returns the width of the strings.
func (t *Table) Qubits() int { return t.n }

// Len returns the number of rows.
func (t *Table) Len() int { return t.rows }

// Append adds p as the last row. It panics if p has a different width.
func (t *Table) Append(p String) {
	mustSameWidth(t.n, p.n)
	t.data = append(t.data, p.x...)
	t.data = append(t.data, p.z...)
	t.rows++
}

// At returns a copy of row r as a String.
func (t *Table) At(r int) String {
	x, z := t.Words(r)
	return FromWords(t.n, x, z)
}

// Words returns the x and z words of row r, aliasing the table; they must not
// be modified.
func (t *Table) Words(r int) (x, z []uint64) {
	if r < 0 || r >= t.rows {
		panic("pauli: table row out of range")
	}
	o := r * t.stride
	return t.data[o : o+t.w : o+t.w], t.data[o+t.w : o+t.stride : o+t.stride]
}

// Weight returns the weight of row r.
func (t *Table) Weight(r int) int {
	x, z := t.Words(r)
	c := 0
	for i := range x {
		c += bits.OnesCount64(x[i] | z[i])
	}
	return c
}

// Clone returns a deep copy of t.
func (t *Table) Clone() *Table {
	c := *t
	c.data = append([]uint64(nil), t.data...)
	return &c
}

// Covered appends to dst the indices of the rows that s covers, in
// increasing order, and returns the extended slice. It allocates only when
// dst lacks capacity. It panics if s has a different width. An entangled
// setting goes through [Diagonalization.Covered], a slower scan of the rows
// against the circuit's n preimages of Z.
func (t *Table) Covered(dst []int, s Setting) []int {
	mustSameWidth(t.n, s.p.n)
	if s.fam != nil {
		return s.fam.d.Covered(dst, t)
	}
	// Rows go 64 at a time. When dst has room for 64 more indices, every
	// row index is written and the length advanced by the coverage bit, with
	// no branch per row. Otherwise the block's coverage is collected into a
	// bit mask and its set bits appended. Either way a random mix of covered
	// and uncovered rows costs no branch mispredictions.
	d := t.data
	sx, sz := s.p.x, s.p.z
	for base := 0; base < t.rows; base += 64 {
		end := min(base+64, t.rows)
		if cap(dst)-len(dst) >= 64 {
			k := len(dst)
			out := dst[k : k+64]
			c := 0
			if t.w == 1 {
				sx, sz := sx[0], sz[0]
				rows := d[2*base : 2*end]
				for r := base; len(rows) >= 2; r++ {
					x, z := rows[0], rows[1]
					rows = rows[2:]
					out[c&63] = r
					c += int(isZero(((x ^ sx) | (z ^ sz)) & (x | z)))
				}
			} else {
				for r := base; r < end; r++ {
					out[c&63] = r
					c += int(isZero(t.badRow(r, sx, sz)))
				}
			}
			dst = dst[:k+c]
			continue
		}
		var m uint64
		if t.w == 1 {
			sx, sz := sx[0], sz[0]
			rows := d[2*base : 2*end]
			for j := uint(0); len(rows) >= 2; j++ {
				x, z := rows[0], rows[1]
				rows = rows[2:]
				m |= isZero(((x^sx)|(z^sz))&(x|z)) << j
			}
		} else {
			for r := base; r < end; r++ {
				m |= isZero(t.badRow(r, sx, sz)) << (r - base)
			}
		}
		for m != 0 {
			dst = append(dst, base+bits.TrailingZeros64(m))
			m &= m - 1
		}
	}
	return dst
}

// badRow returns the qubits (as set bits, OR-ed over words) where row r has
// a letter that is neither I nor the setting's; zero means covered.
func (t *Table) badRow(r int, sx, sz []uint64) uint64 {
	o := r * t.stride
	x, z := t.data[o:o+t.w], t.data[o+t.w:o+t.stride]
	sx, sz = sx[:len(x)], sz[:len(x)]
	var bad uint64
	for i := range x {
		bad |= ((x[i] ^ sx[i]) | (z[i] ^ sz[i])) & (x[i] | z[i])
	}
	return bad
}

// isZero returns 1 if v is zero and 0 otherwise, without a branch.
func isZero(v uint64) uint64 { return 1 ^ (v|-v)>>63 }

// coverMask sets dst[r] to whether s covers row r. It panics if len(dst) is
// not t.Len() or s has a different width. It never allocates.
func (t *Table) coverMask(dst []bool, s Setting) {
	mustSameWidth(t.n, s.p.n)
	if s.fam != nil {
		s.fam.d.coverMask(dst, t)
		return
	}
	if len(dst) != t.rows {
		panic("pauli: Covered mask: destination length differs from table length")
	}
	d := t.data
	if t.w == 1 {
		sx, sz := s.p.x[0], s.p.z[0]
		d = d[:2*len(dst)]
		for r := range dst {
			x, z := d[0], d[1]
			d = d[2:]
			dst[r] = ((x^sx)|(z^sz))&(x|z) == 0
		}
		return
	}
	for r := range dst {
		dst[r] = t.badRow(r, s.p.x, s.p.z) == 0
	}
}

// CoversRow reports whether s covers row r.
func (t *Table) CoversRow(r int, s Setting) bool {
	if r < 0 || r >= t.rows {
		panic("pauli: table row out of range")
	}
	mustSameWidth(t.n, s.p.n)
	o := r * t.stride
	if s.fam != nil {
		return s.fam.d.diagonalWords(t.data[o:o+t.w], t.data[o+t.w:o+t.stride])
	}
	return t.badRow(r, s.p.x, s.p.z) == 0
}

// Parity returns the parity (0 or 1) of outcome b over the support of row r;
// the row's ±1 sample is 1 − 2·Parity.
func (t *Table) Parity(r int, b Bits) int {
	o := r * t.stride
	c := 0
	for i := 0; i < t.w; i++ {
		c += bits.OnesCount64(b[i] & (t.data[o+i] | t.data[o+t.w+i]))
	}
	return c & 1
}

// Samples sets dst[k] to the ±1 sample that outcome b gives row rows[k]. The
// rows are assumed covered by the local setting that produced b; for an
// outcome of an entangled setting use [Table.SettingSamples]. It panics if
// len(dst) < len(rows). It never allocates.
func (t *Table) Samples(dst []int8, rows []int, b Bits) {
	dst = dst[:len(rows)]
	if t.w == 1 {
		b0 := b[0]
		for k, r := range rows {
			dst[k] = int8(1 - 2*(bits.OnesCount64(b0&(t.data[2*r]|t.data[2*r+1]))&1))
		}
		return
	}
	for k, r := range rows {
		dst[k] = int8(1 - 2*t.Parity(r, b))
	}
}

// SettingSamples sets dst[k] to the ±1 sample that outcome b of setting s
// gives row rows[k], which s must cover (see [Setting.Sample]). For a local
// setting it is [Table.Samples] and never allocates; for an entangled one
// each row is conjugated through the circuit's tableau into one scratch
// string (at most one small allocation per call, none per row). It panics if len(dst) < len(rows) or s
// has a different width.
func (t *Table) SettingSamples(dst []int8, rows []int, s Setting, b Bits) {
	mustSameWidth(t.n, s.p.n)
	if s.fam == nil {
		t.Samples(dst, rows, b)
		return
	}
	dst = dst[:len(rows)]
	img := make([]uint64, 2*t.w)
	ix, iz := img[:t.w], img[t.w:]
	for k, r := range rows {
		clear(img)
		x, z := t.Words(r)
		e := s.fam.d.tab.conjugateInto(ix, iz, x, z) // sign i^e, e ∈ {0, 2}
		var xs uint64
		for _, v := range ix {
			xs |= v
		}
		if xs != 0 {
			dst[k] = 1 // not covered: the value Setting.Sample gives
			continue
		}
		dst[k] = int8((1 - e) * (1 - 2*b.Parity(iz)))
	}
}
