package pauli

import "math/bits"

// columns holds many n-qubit strings with signs transposed: for every qubit
// q, the x bits of all strings packed in words (string k at bit k%64 of word
// k/64), then the z bits likewise, and one sign vector. A gate then updates
// every string with a few word operations per 64 strings — the column form
// of the Aaronson & Gottesman rules (quant-ph/0406196, §III) — instead of a
// few bit operations per string.
type columns struct {
	n, rows int
	rw      int      // words per column: Words(rows)
	data    []uint64 // column q: x at data[2·rw·q:], z at data[2·rw·q+rw:]
	neg     []uint64
}

func newColumns(n, rows int) *columns {
	rw := Words(rows)
	return &columns{n: n, rows: rows, rw: rw, data: make([]uint64, 2*rw*n), neg: make([]uint64, rw)}
}

// set stores string p with sign −1 if neg as string k.
func (c *columns) set(k int, x, z []uint64, neg bool) {
	wk, bk := k>>6, uint(k&63)
	for i := range x {
		for m := x[i]; m != 0; m &= m - 1 {
			q := i<<6 + bits.TrailingZeros64(m)
			c.data[2*c.rw*q+wk] |= 1 << bk
		}
		for m := z[i]; m != 0; m &= m - 1 {
			q := i<<6 + bits.TrailingZeros64(m)
			c.data[2*c.rw*q+c.rw+wk] |= 1 << bk
		}
	}
	if neg {
		c.neg[wk] |= 1 << bk
	}
}

// get writes string k into x and z, which must be zero on entry, and reports
// whether its sign is −1.
func (c *columns) get(k int, x, z []uint64) bool {
	wk, bk := k>>6, uint(k&63)
	for q := range c.n {
		o := 2 * c.rw * q
		x[q>>6] |= (c.data[o+wk] >> bk & 1) << (q & 63)
		z[q>>6] |= (c.data[o+c.rw+wk] >> bk & 1) << (q & 63)
	}
	return c.neg[wk]>>bk&1 == 1
}

// apply replaces every string P by g P g†.
func (c *columns) apply(g Gate) {
	rw := c.rw
	oa := 2 * rw * g.Q0
	xa, za := c.data[oa:oa+rw:oa+rw], c.data[oa+rw:oa+2*rw:oa+2*rw]
	r := c.neg[:rw:rw]
	switch g.Kind {
	case GateH:
		for i := range r {
			r[i] ^= xa[i] & za[i]
			xa[i], za[i] = za[i], xa[i]
		}
	case GateS:
		for i := range r {
			r[i] ^= xa[i] & za[i]
			za[i] ^= xa[i]
		}
	case GateSdg:
		for i := range r {
			r[i] ^= xa[i] &^ za[i]
			za[i] ^= xa[i]
		}
	case GateCNOT:
		ob := 2 * rw * g.Q1
		xb, zb := c.data[ob:ob+rw:ob+rw], c.data[ob+rw:ob+2*rw:ob+2*rw]
		for i := range r {
			// Padding bits: xa is zero there, so the complement is harmless.
			r[i] ^= xa[i] & zb[i] &^ (xb[i] ^ za[i])
			xb[i] ^= xa[i]
			za[i] ^= zb[i]
		}
	case GateCZ:
		ob := 2 * rw * g.Q1
		xb, zb := c.data[ob:ob+rw:ob+rw], c.data[ob+rw:ob+2*rw:ob+2*rw]
		for i := range r {
			r[i] ^= xa[i] & xb[i] & (za[i] ^ zb[i])
			za[i] ^= xb[i]
			zb[i] ^= xa[i]
		}
	}
}

// conjugateColumns returns the strings U P U† for P in ps, U the unitary of
// c, as columns: string k of the result is the image of ps[k]. Read them
// with get.
func conjugateColumns(c *Circuit, ps []String) *columns {
	cols := newColumns(c.n, len(ps))
	for k, p := range ps {
		cols.set(k, p.x, p.z, false)
	}
	for _, g := range c.gates {
		cols.apply(g)
	}
	return cols
}
