package pauli

import (
	"errors"
	"math/bits"
	"strconv"
)

// ErrNotCommuting is wrapped by the error [Diagonalize] returns for a family
// with two members that do not commute.
var ErrNotCommuting = errors.New("strings do not commute")

// NonCommutingError names two members of a family that do not commute: I < J,
// J is the first member that fails to commute with an earlier one, and I is
// the first such earlier member.
type NonCommutingError struct {
	I, J int
	P, Q String // members I and J
}

func (e *NonCommutingError) Error() string {
	return "pauli: family members " + strconv.Itoa(e.I) + " (" + e.P.String() + ") and " +
		strconv.Itoa(e.J) + " (" + e.Q.String() + ") do not commute"
}

// Unwrap returns [ErrNotCommuting].
func (e *NonCommutingError) Unwrap() error { return ErrNotCommuting }

// Diagonalization is a Clifford circuit U that maps every member P of a
// commuting family to ±(a Z-string): U P U† = s·Z', with s = ±1 and Z' a
// string of Z and I letters. After U, reading every qubit in the Z basis
// gives the outcome bits b, and the member's ±1 sample is
// s·(−1)^(parity of b on the support of Z') (MATH.md §8). A Diagonalization
// is immutable once made by [Diagonalize].
type Diagonalization struct {
	n       int
	circuit *Circuit
	tab     *tableau
	members *Table
	images  *Table // Z-strings: x words zero
	neg     []bool
	gens    []int
	pre     []uint64 // U† Z_q U for every q: x words then z words, q after q
}

// Diagonalize returns a Clifford circuit of H, S†, CNOT and CZ gates that maps
// every member of family to ±(a Z-string), with each member's image and sign.
//
// The method: independent generators are picked by Gaussian elimination over
// GF(2) on the 2n-bit symplectic vectors (MATH.md §8); a qubit on which all
// generators carry one letter or the identity is rotated locally (H for X,
// S† then H for Y); on the other qubits the generators' X block is made of
// full rank with H gates, reduced to the identity on pivot qubits with
// CNOTs, the symmetric Z block on the pivots is cleared with CZ and S†,
// and H on the pivots maps X to Z (the stabilizer tableau reduction of
// Aaronson & Gottesman, quant-ph/0406196, used for measurement circuits by
// Gokhale et al., arXiv:1907.13623). A family that commutes qubit-wise gets
// one-qubit gates only. For r independent generators on n qubits the circuit
// has at most 2n H, n S†, r(n−r) CNOT and r(r−1)/2 CZ gates.
//
// It returns an error if family is empty, if a member has a width different
// from the first, or, wrapping [ErrNotCommuting] as a [*NonCommutingError],
// if two members do not commute. Identity and repeated members are allowed.
func Diagonalize(family []String) (*Diagonalization, error) {
	gens, err := generators(family)
	if err != nil {
		return nil, err
	}
	n := family[0].n
	s := newSynth(n, family, gens)
	s.reduce()

	w := Words(n)
	d := &Diagonalization{
		n:       n,
		circuit: s.c,
		tab:     s.c.toTableau(),
		members: TableOf(n, family...),
		images:  NewTable(n, len(family)),
		gens:    gens,
	}
	zs := make([]String, n)
	for q := range zs {
		zs[q] = Identity(n)
		zs[q].z[q>>6] |= 1 << (q & 63)
	}
	pre := conjugateColumns(s.c.inverse(), zs)
	d.pre = make([]uint64, 2*w*n)
	for q := range n {
		o := 2 * w * q
		pre.get(q, d.pre[o:o+w], d.pre[o+w:o+2*w])
	}
	cols := conjugateColumns(s.c, family)
	img := Identity(n)
	d.neg = make([]bool, len(family))
	for k := range family {
		clear(img.x)
		clear(img.z)
		d.neg[k] = cols.get(k, img.x, img.z)
		for _, v := range img.x {
			if v != 0 {
				panic("pauli: internal error: Diagonalize left an X or Y letter")
			}
		}
		d.images.Append(img)
	}
	return d, nil
}

// generators checks that family is non-empty, of one width and commuting,
// and returns the indices of its independent generators (see independent).
func generators(family []String) ([]int, error) {
	if len(family) == 0 {
		return nil, errors.New("pauli: empty family")
	}
	n := family[0].n
	for i, p := range family {
		if p.n != n {
			return nil, errors.New("pauli: family member " + strconv.Itoa(i) + " (" + p.String() + ") has " +
				strconv.Itoa(p.n) + " qubits, want " + strconv.Itoa(n))
		}
	}
	return independent(family)
}

// independent returns the indices of a maximal independent subset of family,
// taking each member that is not a product of earlier ones, and checks that
// the family commutes. By bilinearity of the symplectic form it is enough to
// test each new independent member against the earlier independent ones: a
// dependent member commutes with everything its factors commute with.
func independent(family []String) ([]int, error) {
	w := Words(family[0].n)
	var (
		basis  [][]uint64 // reduced vectors, x words then z words
		pivots []int      // bit index of each basis vector's pivot
		gens   []int
	)
	v := make([]uint64, 2*w)
	for j, p := range family {
		copy(v[:w], p.x)
		copy(v[w:], p.z)
		for k, b := range basis {
			if v[pivots[k]>>6]>>(pivots[k]&63)&1 == 1 {
				for i := range v {
					v[i] ^= b[i]
				}
			}
		}
		pv := -1
		for i, x := range v {
			if x != 0 {
				pv = i<<6 + bits.TrailingZeros64(x)
				break
			}
		}
		if pv < 0 {
			continue
		}
		for _, g := range gens {
			if family[g].Commutes(p) {
				continue
			}
			// Name the first earlier member that fails, not the generator.
			for i := range j {
				if !family[i].Commutes(p) {
					return nil, &NonCommutingError{I: i, J: j, P: family[i], Q: p}
				}
			}
		}
		basis = append(basis, append([]uint64(nil), v...))
		pivots = append(pivots, pv)
		gens = append(gens, j)
	}
	return gens, nil
}

// synth reduces generator rows (x words then z words, signs ignored) to
// Z-strings, recording every gate it applies to them in c.
type synth struct {
	n, w int
	rows [][]uint64
	c    *Circuit
}

func newSynth(n int, family []String, gens []int) *synth {
	w := Words(n)
	s := &synth{n: n, w: w, rows: make([][]uint64, len(gens)), c: NewCircuit(n)}
	for k, i := range gens {
		r := make([]uint64, 2*w)
		copy(r, family[i].x)
		copy(r[w:], family[i].z)
		s.rows[k] = r
	}
	return s
}

func (s *synth) apply(g Gate) {
	s.c.gates = append(s.c.gates, g)
	for _, r := range s.rows {
		conjugateWords(r[:s.w], r[s.w:], g)
	}
}

func bit(ws []uint64, q int) uint64 { return ws[q>>6] >> (q & 63) & 1 }

// reduce runs the steps described at [Diagonalize].
func (s *synth) reduce() {
	active := s.local()
	for _, r := range s.rows {
		for i := range active {
			r[i] &= active[i]
			r[s.w+i] &= active[i]
		}
	}
	s.fullRankX(active)
	piv := s.rrefX()
	if len(piv) != len(s.rows) {
		panic("pauli: internal error: X block not of full rank")
	}
	// CNOTs clear every non-pivot X bit; in reduced row echelon form only
	// row i has an X on pivot qubit piv[i], so CNOT(piv[i], c) clears bit c
	// of row i and touches no other row's X. Controls are pivots and targets
	// are not, so these CNOTs commute and may be applied in any order.
	var block []Gate
	for i, r := range s.rows {
		for k := range s.w {
			m := r[k]
			for m != 0 {
				c := k<<6 + bits.TrailingZeros64(m)
				m &= m - 1
				if c != piv[i] {
					block = append(block, Gate{Kind: GateCNOT, Q0: piv[i], Q1: c})
				}
			}
		}
	}
	for _, g := range s.layers(block) {
		s.apply(g)
	}
	// Commutation makes z_i[piv[j]] = z_j[piv[i]]: CZ clears a symmetric
	// pair, S† a diagonal entry. CZ gates commute with each other.
	block = block[:0]
	for i := range s.rows {
		for j := i + 1; j < len(s.rows); j++ {
			if bit(s.rows[i][s.w:], piv[j]) == 1 {
				block = append(block, Gate{Kind: GateCZ, Q0: piv[i], Q1: piv[j]})
			}
		}
	}
	for _, g := range s.layers(block) {
		s.apply(g)
	}
	for i, r := range s.rows {
		if bit(r[s.w:], piv[i]) == 1 {
			s.apply(Gate{Kind: GateSdg, Q0: piv[i]})
		}
	}
	for _, p := range piv {
		s.apply(Gate{Kind: GateH, Q0: p})
	}
}

// layers reorders two-qubit gates that commute with each other so that the
// greedy schedule of [Circuit.Depth] packs them densely: it fills one layer
// at a time with the first remaining gates whose qubits are still free in
// that layer (a greedy edge colouring). It returns a new slice.
func (s *synth) layers(gs []Gate) []Gate {
	out := make([]Gate, 0, len(gs))
	rest := append([]Gate(nil), gs...)
	stamp := make([]int, s.n)
	for layer := 1; len(rest) > 0; layer++ {
		keep := rest[:0]
		for _, g := range rest {
			if stamp[g.Q0] == layer || stamp[g.Q1] == layer {
				keep = append(keep, g)
				continue
			}
			stamp[g.Q0], stamp[g.Q1] = layer, layer
			out = append(out, g)
		}
		rest = keep
	}
	return out
}

// local rotates every qubit on which the generators carry at most one
// non-identity letter to Z, and returns the mask of the other (active)
// qubits.
func (s *synth) local() []uint64 {
	hasX, hasY, hasZ := make([]uint64, s.w), make([]uint64, s.w), make([]uint64, s.w)
	for _, r := range s.rows {
		for i := range s.w {
			x, z := r[i], r[s.w+i]
			hasX[i] |= x &^ z
			hasY[i] |= x & z
			hasZ[i] |= z &^ x
		}
	}
	active := make([]uint64, s.w)
	for i := range s.w {
		active[i] = hasX[i]&hasY[i] | hasX[i]&hasZ[i] | hasY[i]&hasZ[i]
		onlyX := hasX[i] &^ active[i]
		onlyY := hasY[i] &^ active[i]
		for m := onlyX | onlyY; m != 0; m &= m - 1 {
			b := bits.TrailingZeros64(m)
			q := i<<6 + b
			if onlyY>>b&1 == 1 {
				s.apply(Gate{Kind: GateSdg, Q0: q})
			}
			s.apply(Gate{Kind: GateH, Q0: q})
		}
	}
	return active
}

// rrefX brings the X block of the rows to reduced row echelon form by row
// operations (which change the generators but not the group they span),
// moves the rows with an X pivot to the front, and returns their pivot
// qubits.
func (s *synth) rrefX() []int {
	var piv []int
	k := 0
	for q := 0; q < s.n && k < len(s.rows); q++ {
		p := -1
		for i := k; i < len(s.rows); i++ {
			if bit(s.rows[i], q) == 1 {
				p = i
				break
			}
		}
		if p < 0 {
			continue
		}
		s.rows[k], s.rows[p] = s.rows[p], s.rows[k]
		for i, r := range s.rows {
			if i != k && bit(r, q) == 1 {
				xorRow(r, s.rows[k])
			}
		}
		piv = append(piv, q)
		k++
	}
	return piv
}

func xorRow(dst, src []uint64) {
	for i := range dst {
		dst[i] ^= src[i]
	}
}

// fullRankX applies H to active qubits so that the X block of the rows has
// full row rank, and drops rows that are products of others. After rrefX,
// let R₂ be the rows without X. Reduce their Z parts on the active qubits
// outside the X pivots P: a combination of R₂ rows whose Z part lies inside
// P commutes with every row of the echelon form only if that Z part is zero,
// so R₂ rows without a pivot there are zero (dependent) and are dropped, and
// H on the pivots Q found moves the rest into the X block, where P and Q
// are disjoint.
func (s *synth) fullRankX(active []uint64) {
	piv := s.rrefX()
	k := len(piv)
	inP := make([]uint64, s.w)
	for _, q := range piv {
		inP[q>>6] |= 1 << (q & 63)
	}
	rest := s.rows[k:]
	var hq []int
	m := 0
	for q := 0; q < s.n && m < len(rest); q++ {
		if bit(active, q) == 0 || bit(inP, q) == 1 {
			continue
		}
		p := -1
		for i := m; i < len(rest); i++ {
			if bit(rest[i][s.w:], q) == 1 {
				p = i
				break
			}
		}
		if p < 0 {
			continue
		}
		rest[m], rest[p] = rest[p], rest[m]
		for i, r := range rest {
			if i != m && bit(r[s.w:], q) == 1 {
				xorRow(r, rest[m])
			}
		}
		hq = append(hq, q)
		m++
	}
	for _, r := range rest[m:] {
		for _, v := range r {
			if v != 0 {
				panic("pauli: internal error: generators do not commute")
			}
		}
	}
	s.rows = s.rows[:k+m]
	for _, q := range hq {
		s.apply(Gate{Kind: GateH, Q0: q})
	}
}

// Qubits returns the number of qubits.
func (d *Diagonalization) Qubits() int { return d.n }

// Len returns the number of members of the family.
func (d *Diagonalization) Len() int { return d.members.Len() }

// Circuit returns the circuit U. It is shared with d and must not be
// modified.
func (d *Diagonalization) Circuit() *Circuit { return d.circuit }

// rank returns the number of independent generators of the family.
func (d *Diagonalization) rank() int { return len(d.gens) }

// generators returns the indices of the members chosen as independent
// generators: each is the first member that is not a product of earlier
// ones.
func (d *Diagonalization) generators() []int { return append([]int(nil), d.gens...) }

// Member returns member i of the family.
func (d *Diagonalization) Member(i int) String { return d.members.At(i) }

// Image returns the Z-string Z' and the sign s (+1 or −1) with
// U P_i U† = s·Z' for member i.
func (d *Diagonalization) Image(i int) (String, int) {
	return d.images.At(i), d.sign(i)
}

func (d *Diagonalization) sign(i int) int {
	if d.neg[i] {
		return -1
	}
	return 1
}

// Sample returns the ±1 value that outcome b, read in the Z basis after U,
// gives member i: its sign times (−1) to the parity of b on the support of
// its image (MATH.md §8). It does not allocate. It panics if i is out of
// range or b is shorter than Words(n).
func (d *Diagonalization) Sample(i int, b Bits) int {
	_, z := d.images.Words(i)
	return d.sign(i) * (1 - 2*b.Parity(z))
}

// Conjugate returns P' and s with U P U† = s·P' for any n-qubit string p,
// through the tableau of U. It panics if p has a different width.
func (d *Diagonalization) Conjugate(p String) (String, int) { return d.tab.Conjugate(p) }

// Diagonal reports whether U maps p to ±(a Z-string), and if so returns the
// Z-string and the sign, so that p's sample after U is the sign times
// (−1) to the parity of the outcome on the Z-string's support. Every product
// of members is diagonalised; other strings commuting with the family may be
// too, depending on the circuit. It panics if p has a different width.
func (d *Diagonalization) Diagonal(p String) (z String, sign int, ok bool) {
	img, s := d.tab.Conjugate(p)
	for _, v := range img.x {
		if v != 0 {
			return String{}, 0, false
		}
	}
	return img, s, true
}

// Diagonalizes reports whether U maps p to ±(a Z-string). It skips the sign
// and does not allocate. It panics if p has a different width.
func (d *Diagonalization) Diagonalizes(p String) bool {
	mustSameWidth(d.n, p.n)
	return d.diagonalWords(p.x, p.z)
}

// diagonalWords reports whether the string (x, z) commutes with every
// preimage U† Z_q U: bit q of the X part of U P U† is the symplectic form of
// U P U† with Z_q, which conjugation by U† preserves.
func (d *Diagonalization) diagonalWords(x, z []uint64) bool {
	w := len(x)
	if w == 1 {
		x0, z0, pre := x[0], z[0], d.pre
		for o := 0; o+1 < len(pre); o += 2 {
			if bits.OnesCount64(x0&pre[o+1]^z0&pre[o])&1 != 0 {
				return false
			}
		}
		return true
	}
	for o := 0; o < len(d.pre); o += 2 * w {
		sx, sz := d.pre[o:o+w:o+w], d.pre[o+w:o+2*w:o+2*w]
		c := 0
		for i := range x {
			c += bits.OnesCount64(x[i]&sz[i] ^ z[i]&sx[i])
		}
		if c&1 != 0 {
			return false
		}
	}
	return true
}

// Covered appends to dst the indices of the rows of t that U maps to
// ±(a Z-string), in increasing order, and returns the extended slice: the
// rows one shot of this circuit measures, as [Table.Covered] gives them for
// a local setting. It allocates only when dst lacks capacity. It panics if t
// has a different width.
func (d *Diagonalization) Covered(dst []int, t *Table) []int {
	mustSameWidth(d.n, t.Qubits())
	if t.w == 1 && len(d.pre) >= 8 {
		return d.covered1(dst, t)
	}
	for r := range t.Len() {
		if x, z := t.Words(r); d.diagonalWords(x, z) {
			dst = append(dst, r)
		}
	}
	return dst
}

// covered1 is Covered for one-word rows of at least four qubits. A row is
// covered when it commutes with every U† Z_q U; most rows that are not
// anticommute with one of the first few, so the first four products are
// taken together, without a branch per product, and only rows that pass
// them are tested against the rest.
func (d *Diagonalization) covered1(dst []int, t *Table) []int {
	pre := d.pre
	ax, az, bx, bz := pre[0], pre[1], pre[2], pre[3]
	cx, cz, ex, ez := pre[4], pre[5], pre[6], pre[7]
	rest := pre[8:]
	data := t.data[:2*t.rows]
rows:
	for r := range t.rows {
		x, z := data[2*r], data[2*r+1]
		odd := bits.OnesCount64(x&az^z&ax) | bits.OnesCount64(x&bz^z&bx) |
			bits.OnesCount64(x&cz^z&cx) | bits.OnesCount64(x&ez^z&ex)
		if odd&1 != 0 {
			continue
		}
		for o := 0; o+1 < len(rest); o += 2 {
			if bits.OnesCount64(x&rest[o+1]^z&rest[o])&1 != 0 {
				continue rows
			}
		}
		dst = append(dst, r)
	}
	return dst
}

// coverMask sets dst[r] to whether U maps row r of t to ±(a Z-string). It
// panics if len(dst) is not t.Len() or t has a different width. It never
// allocates.
func (d *Diagonalization) coverMask(dst []bool, t *Table) {
	mustSameWidth(d.n, t.Qubits())
	if len(dst) != t.Len() {
		panic("pauli: Covered mask: destination length differs from table length")
	}
	for r := range dst {
		x, z := t.Words(r)
		dst[r] = d.diagonalWords(x, z)
	}
}
