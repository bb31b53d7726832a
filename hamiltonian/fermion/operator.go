package fermion

import (
	"iter"
	"slices"
	"strconv"
	"strings"
)

// Op is one ladder operator: the creation operator a†_Mode when Dagger is
// true, the annihilation operator a_Mode otherwise.
type Op struct {
	Mode   int
	Dagger bool
}

// Create returns the creation operator a†_mode.
func Create(mode int) Op { return Op{Mode: mode, Dagger: true} }

// Annihilate returns the annihilation operator a_mode.
func Annihilate(mode int) Op { return Op{Mode: mode} }

// Adjoint returns the Hermitian conjugate of op.
func (op Op) Adjoint() Op { return Op{Mode: op.Mode, Dagger: !op.Dagger} }

// String returns "a3†" for a†_3 and "a3" for a_3.
func (op Op) String() string {
	s := "a" + strconv.Itoa(op.Mode)
	if op.Dagger {
		s += "†"
	}
	return s
}

// Term is a complex coefficient times an ordered product of ladder
// operators, leftmost first. An empty product is the identity.
type Term struct {
	Coeff complex128
	Ops   []Op
}

// String returns the term as "(0.5+0i) a1† a0", or the coefficient alone for
// the identity.
func (t Term) String() string {
	var b strings.Builder
	b.WriteString(strconv.FormatComplex(t.Coeff, 'g', -1, 128))
	for _, op := range t.Ops {
		b.WriteByte(' ')
		b.WriteString(op.String())
	}
	return b.String()
}

// Operator is a sum of [Term]s on a fixed number of fermionic modes. It is
// built with [NewOperator] and [Operator.Add] and used through a pointer; the
// transformations ([Operator.Adjoint], [Operator.NormalOrder]) return new
// operators and leave the receiver unchanged.
//
// Terms are kept as added: repeated products are not merged until
// [Operator.NormalOrder] (mapping to qubits merges them too).
type Operator struct {
	modes int
	coef  []complex128
	ops   []Op
	end   []int // ops of term i are ops[end[i-1]:end[i]]
}

// NewOperator returns the zero operator on the given number of modes. It
// panics if modes is negative.
func NewOperator(modes int) *Operator {
	if modes < 0 {
		panic("fermion: negative mode count")
	}
	return &Operator{modes: modes}
}

// Add appends the term c·ops[0]·ops[1]⋯. With no ops it adds c times the
// identity. The ops are copied. Add panics if a mode is outside
// [0, Modes()): building an operator is programmer-controlled, and a mode
// out of range is a bug in the caller.
func (o *Operator) Add(c complex128, ops ...Op) {
	for _, op := range ops {
		if op.Mode < 0 || op.Mode >= o.modes {
			panic("fermion: Add: mode out of range")
		}
	}
	o.coef = append(o.coef, c)
	o.ops = append(o.ops, ops...)
	o.end = append(o.end, len(o.ops))
}

// Grow makes room for terms more terms holding ops more ladder operators in
// all, so that that many calls of [Operator.Add] do not reallocate.
func (o *Operator) Grow(terms, ops int) {
	o.coef = slices.Grow(o.coef, terms)
	o.end = slices.Grow(o.end, terms)
	o.ops = slices.Grow(o.ops, ops)
}

// Modes returns the number of fermionic modes.
func (o *Operator) Modes() int { return o.modes }

// Len returns the number of terms as stored (repeats not merged).
func (o *Operator) Len() int { return len(o.coef) }

// Term returns term i. Its Ops alias the operator and must not be modified.
func (o *Operator) Term(i int) Term {
	start := 0
	if i > 0 {
		start = o.end[i-1]
	}
	return Term{Coeff: o.coef[i], Ops: o.ops[start:o.end[i]:o.end[i]]}
}

// Terms iterates over the terms in the order they were added.
func (o *Operator) Terms() iter.Seq2[int, Term] {
	return func(yield func(int, Term) bool) {
		for i := range o.coef {
			if !yield(i, o.Term(i)) {
				return
			}
		}
	}
}

// Adjoint returns the Hermitian conjugate: every product reversed with each
// ladder operator conjugated, and every coefficient complex-conjugated.
func (o *Operator) Adjoint() *Operator {
	a := &Operator{modes: o.modes, coef: make([]complex128, 0, len(o.coef)), ops: make([]Op, 0, len(o.ops)), end: make([]int, 0, len(o.end))}
	for _, t := range o.Terms() {
		a.coef = append(a.coef, complex(real(t.Coeff), -imag(t.Coeff)))
		for k := len(t.Ops) - 1; k >= 0; k-- {
			a.ops = append(a.ops, t.Ops[k].Adjoint())
		}
		a.end = append(a.end, len(a.ops))
	}
	return a
}

// String returns the terms joined by " + ", or "0" for an empty operator.
func (o *Operator) String() string {
	if o.Len() == 0 {
		return "0"
	}
	var b strings.Builder
	for i, t := range o.Terms() {
		if i > 0 {
			b.WriteString(" + ")
		}
		b.WriteString(t.String())
	}
	return b.String()
}
