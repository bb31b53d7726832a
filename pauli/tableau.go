package pauli

import "math/bits"

// tableau is a Clifford map P ↦ U P U† stored as the images of the 2n
// single-qubit generators with their signs: U X_q U† and U Z_q U† for every
// qubit q (the stabilizer tableau of Aaronson & Gottesman, "Improved
// simulation of stabilizer circuits", quant-ph/0406196, §III, holding the
// destabilizer rows X_q and the stabilizer rows Z_q). Conjugating a string
// through a tableau costs a product of rows per letter, independent of the
// length of the circuit that built it.
//
// A tableau is used through a pointer; [tableau.Apply] modifies it and every
// other method leaves it unchanged.
type tableau struct {
	n, w int
	// Row k (k < n: the image of X_k; k ≥ n: the image of Z_{k−n}) holds
	// its x words then its z words at data[2w·k:].
	data []uint64
	neg  []uint64 // bit k set: row k carries the sign −1
}

// newTableau returns the identity map on n qubits. It panics if n < 0.
func newTableau(n int) *tableau {
	if n < 0 {
		panic("pauli: negative qubit count")
	}
	w := Words(n)
	t := &tableau{n: n, w: w, data: make([]uint64, 2*n*2*w), neg: make([]uint64, Words(2*n))}
	for q := range n {
		t.data[t.row(q)+q>>6] |= 1 << (q & 63)     // X_q: x bit q
		t.data[t.row(n+q)+w+q>>6] |= 1 << (q & 63) // Z_q: z bit q
	}
	return t
}

// toTableau returns the Clifford map of c as a tableau. It runs the gates on
// the transposed tableau, a few word operations per gate and 32 qubits, then
// transposes it back.
func (c *Circuit) toTableau() *tableau {
	n := c.n
	cols := newColumns(n, 2*n)
	for q := range n {
		cols.data[2*cols.rw*q+q>>6] |= 1 << (q & 63)                   // X_q: row q
		cols.data[2*cols.rw*q+cols.rw+(n+q)>>6] |= 1 << ((n + q) & 63) // Z_q: row n+q
	}
	for _, g := range c.gates {
		cols.apply(g)
	}
	t := newTableau(n)
	clear(t.data)
	for k := range 2 * n {
		o := t.row(k)
		if cols.get(k, t.data[o:o+t.w], t.data[o+t.w:o+2*t.w]) {
			t.neg[k>>6] |= 1 << (k & 63)
		}
	}
	return t
}

func (t *tableau) row(k int) int { return 2 * t.w * k }

// Qubits returns the number of qubits.
func (t *tableau) Qubits() int { return t.n }

// Apply composes g after the map: t becomes P ↦ g (U P U†) g†. It panics if
// a qubit of g is outside [0, n) or g is not a valid gate. It runs the
// one-string rules of [Circuit.Conjugate] on every row; [Circuit.toTableau]
// is the fast way to build the map of a whole circuit.
func (t *tableau) Apply(g Gate) {
	g = (&Circuit{n: t.n}).valid(g)
	for k := range 2 * t.n {
		o := t.row(k)
		t.neg[k>>6] ^= conjugateWords(t.data[o:o+t.w], t.data[o+t.w:o+2*t.w], g) << (k & 63)
	}
}

// ImageX returns U X_q U† as a string and a sign.
func (t *tableau) ImageX(q int) (String, int) { return t.image(q) }

// ImageZ returns U Z_q U† as a string and a sign.
func (t *tableau) ImageZ(q int) (String, int) { return t.image(t.n + q) }

func (t *tableau) image(k int) (String, int) {
	if k < 0 || k >= 2*t.n {
		panic("pauli: qubit index out of range")
	}
	o := t.row(k)
	p := FromWords(t.n, t.data[o:o+t.w], t.data[o+t.w:o+2*t.w])
	return p, 1 - 2*int(t.neg[k>>6]>>(k&63)&1)
}

// Clone returns a copy of t that shares no storage with it.
func (t *tableau) Clone() *tableau {
	c := *t
	c.data = append([]uint64(nil), t.data...)
	c.neg = append([]uint64(nil), t.neg...)
	return &c
}

// Equal reports whether t and o are the same Clifford map: every generator
// has the same image and sign. Two circuits whose unitaries differ only by a
// global phase have equal tableaux.
func (t *tableau) Equal(o *tableau) bool {
	if t.n != o.n {
		return false
	}
	for i := range t.data {
		if t.data[i] != o.data[i] {
			return false
		}
	}
	for i := range t.neg {
		if t.neg[i] != o.neg[i] {
			return false
		}
	}
	return true
}

// Conjugate returns the string P' and the sign s (+1 or −1) with
// U P U† = s·P'. Writing P = i^{|x·z|} Π_q X_q^{x_q} Z_q^{z_q} (Y = iXZ), the
// image is the same product of the generator images, multiplied out with
// the phase rules of [Mul]. It panics if p has a different width.
func (t *tableau) Conjugate(p String) (String, int) {
	mustSameWidth(t.n, p.n)
	out := Identity(t.n)
	e := t.conjugateInto(out.x, out.z, p.x, p.z)
	return out, 1 - e
}

// conjugateInto writes the image of the string (px, pz) into (ox, oz), which
// must be zero on entry, and returns the exponent e ∈ {0, 2} of its sign
// i^e. It does not allocate.
func (t *tableau) conjugateInto(ox, oz, px, pz []uint64) int {
	e := 0
	for i := range px {
		e += bits.OnesCount64(px[i] & pz[i])
	}
	for i := range px {
		m := px[i] | pz[i]
		for m != 0 {
			b := bits.TrailingZeros64(m)
			m &= m - 1
			q := i<<6 + b
			if px[i]>>b&1 == 1 {
				e += t.mulRow(ox, oz, q)
			}
			if pz[i]>>b&1 == 1 {
				e += t.mulRow(ox, oz, t.n+q)
			}
		}
	}
	e &= 3
	if e&1 != 0 {
		panic("pauli: internal error: conjugate has an imaginary phase")
	}
	return e
}

// mulRow replaces (ox, oz) by (ox, oz)·row k and returns the exponent of the
// power of i that the product and the row's sign contribute, as in [Mul].
func (t *tableau) mulRow(ox, oz []uint64, k int) int {
	o := t.row(k)
	rx, rz := t.data[o:o+t.w], t.data[o+t.w:o+2*t.w]
	return int(MulWords(ox, oz, ox, oz, rx, rz)) + 2*int(t.neg[k>>6]>>(k&63)&1)
}
