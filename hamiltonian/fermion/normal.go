package fermion

import (
	"cmp"
	"encoding/binary"
	"slices"
)

// before reports whether x comes before y in normal order: creation
// operators first, by increasing mode, then annihilation operators by
// decreasing mode. With this order the adjoint of a normal-ordered product
// is again normal-ordered.
func before(x, y Op) bool {
	switch {
	case x.Dagger && !y.Dagger:
		return true
	case x.Dagger && y.Dagger:
		return x.Mode < y.Mode
	case !x.Dagger && !y.Dagger:
		return x.Mode > y.Mode
	}
	return false
}

// NormalOrder returns the operator rewritten with the canonical
// anticommutation relations {a_i, a_j†} = δ_ij, {a_i, a_j} = 0 into a sum of
// normal-ordered products: creation operators left of annihilation
// operators, creators by increasing mode, annihilators by decreasing mode.
// Each swap of two distinct operators flips the sign; a_i a_i† becomes
// 1 − a_i† a_i; a product with a repeated creator or annihilator vanishes.
// Equal products are merged and products whose merged coefficient is exactly
// zero are dropped. Terms are sorted by length, then by their operators, so
// equal operators have equal normal forms term by term.
func (o *Operator) NormalOrder() *Operator {
	type item struct {
		c   complex128
		ops []Op
	}
	index := make(map[string]int)
	out := &Operator{modes: o.modes}
	var terms []item
	var key []byte
	var stack []item
	for _, t := range o.Terms() {
		stack = append(stack[:0], item{t.Coeff, slices.Clone(t.Ops)})
		for len(stack) > 0 {
			it := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			zero := false
		sort:
			for {
				for i := 0; i+1 < len(it.ops); i++ {
					a, b := it.ops[i], it.ops[i+1]
					if a == b {
						zero = true // a_i a_i = a_i† a_i† = 0
						break sort
					}
					if !before(b, a) {
						continue
					}
					if a.Mode == b.Mode {
						// a is a_i and b is a_i†: a_i a_i† = 1 − a_i† a_i.
						rest := make([]Op, 0, len(it.ops)-2)
						rest = append(append(rest, it.ops[:i]...), it.ops[i+2:]...)
						stack = append(stack, item{it.c, rest})
					}
					it.ops[i], it.ops[i+1] = b, a
					it.c = -it.c
					continue sort
				}
				break
			}
			if zero || it.c == 0 {
				continue
			}
			key = opsKey(key[:0], it.ops)
			if k, ok := index[string(key)]; ok {
				terms[k].c += it.c
				continue
			}
			index[string(key)] = len(terms)
			terms = append(terms, it)
		}
	}
	slices.SortFunc(terms, func(a, b item) int {
		if c := cmp.Compare(len(a.ops), len(b.ops)); c != 0 {
			return c
		}
		for i := range a.ops {
			if a.ops[i] != b.ops[i] {
				if before(a.ops[i], b.ops[i]) {
					return -1
				}
				return 1
			}
		}
		return 0
	})
	for _, it := range terms {
		if it.c != 0 {
			// Adding +0 turns a negative zero part into +0 for printing.
			out.Add(complex(real(it.c)+0, imag(it.c)+0), it.ops...)
		}
	}
	return out
}

// opsKey appends a byte key identifying the product ops.
func opsKey(b []byte, ops []Op) []byte {
	for _, op := range ops {
		v := uint64(op.Mode) << 1
		if op.Dagger {
			v |= 1
		}
		b = binary.AppendUvarint(b, v)
	}
	return b
}

// IsHermitian reports whether the operator equals its adjoint: after normal
// ordering both, every product's coefficients differ by at most tol in
// absolute value.
func (o *Operator) IsHermitian(tol float64) bool {
	n := o.NormalOrder()
	a := o.Adjoint().NormalOrder()
	coef := make(map[string]complex128, n.Len())
	var key []byte
	for _, t := range a.Terms() {
		key = opsKey(key[:0], t.Ops)
		coef[string(key)] = t.Coeff
	}
	for _, t := range n.Terms() {
		key = opsKey(key[:0], t.Ops)
		d := t.Coeff - coef[string(key)]
		delete(coef, string(key))
		if abs(d) > tol {
			return false
		}
	}
	for _, t := range a.Terms() {
		key = opsKey(key[:0], t.Ops)
		if c, ok := coef[string(key)]; ok && abs(c) > tol {
			return false
		}
	}
	return true
}
