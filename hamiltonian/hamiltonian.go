package hamiltonian

import (
	"fmt"
	"iter"
	"math"

	"github.com/shotplan/shotplan/pauli"
)

// Term is one weighted Pauli string of a Hamiltonian.
type Term struct {
	Pauli pauli.String
	Coeff float64
}

// Hamiltonian is H = offset·I + Σ_i h_i P_i on n qubits, with real
// coefficients h_i on distinct non-identity Pauli strings P_i. A Hamiltonian
// is immutable once built: methods that change it return a new value, and the
// slices and table it hands out must not be modified.
type Hamiltonian struct {
	n      int
	offset float64
	table  *pauli.Table
	coef   []float64
}

// New builds a Hamiltonian on n qubits from an identity offset and terms.
// Terms on the same string are merged by adding their coefficients, identity
// terms are added to the offset, and terms whose merged coefficient is exactly
// zero are dropped. Terms keep the order in which their string first appears.
//
// New returns an error naming the term for a string of another width or a
// coefficient (or offset) that is NaN or infinite.
func New(n int, offset float64, terms []Term) (*Hamiltonian, error) {
	if n < 0 {
		return nil, fmt.Errorf("hamiltonian: negative qubit count %d", n)
	}
	if !finite(offset) {
		return nil, fmt.Errorf("hamiltonian: offset %v is not finite", offset)
	}
	index := make(map[string]int, len(terms))
	var order []pauli.String
	var coef []float64
	for k, t := range terms {
		if t.Pauli.Qubits() != n {
			return nil, fmt.Errorf("hamiltonian: term %d (%s): %d qubits, want %d", k, t.Pauli, t.Pauli.Qubits(), n)
		}
		if !finite(t.Coeff) {
			return nil, fmt.Errorf("hamiltonian: term %d (%s): coefficient %v is not finite", k, t.Pauli, t.Coeff)
		}
		if t.Pauli.IsIdentity() {
			offset += t.Coeff
			continue
		}
		key := t.Pauli.Key()
		if i, ok := index[key]; ok {
			coef[i] += t.Coeff
			continue
		}
		index[key] = len(order)
		order = append(order, t.Pauli)
		coef = append(coef, t.Coeff)
	}
	h := &Hamiltonian{n: n, offset: offset, table: pauli.NewTable(n, len(order))}
	for i, p := range order {
		if coef[i] == 0 {
			continue
		}
		h.table.Append(p)
		h.coef = append(h.coef, coef[i])
	}
	if !finite(h.offset) {
		return nil, fmt.Errorf("hamiltonian: offset overflows to %v", h.offset)
	}
	for i, c := range h.coef {
		if !finite(c) {
			return nil, fmt.Errorf("hamiltonian: term %s: merged coefficient overflows to %v", h.table.At(i), c)
		}
	}
	return h, nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// Qubits returns the number of qubits n.
func (h *Hamiltonian) Qubits() int { return h.n }

// Len returns the number of non-identity terms M.
func (h *Hamiltonian) Len() int { return len(h.coef) }

// Offset returns the coefficient h_0 of the identity.
func (h *Hamiltonian) Offset() float64 { return h.offset }

// Pauli returns the string of term i.
func (h *Hamiltonian) Pauli(i int) pauli.String { return h.table.At(i) }

// Coeff returns the coefficient of term i.
func (h *Hamiltonian) Coeff(i int) float64 { return h.coef[i] }

// Term returns term i.
func (h *Hamiltonian) Term(i int) Term { return Term{Pauli: h.table.At(i), Coeff: h.coef[i]} }

// Coeffs returns the coefficients in term order. The slice aliases h and must
// not be modified.
func (h *Hamiltonian) Coeffs() []float64 { return h.coef[:len(h.coef):len(h.coef)] }

// Table returns the column store of the term strings, row i being term i. It
// aliases h and must not be modified; hot loops read it directly.
func (h *Hamiltonian) Table() *pauli.Table { return h.table }

// Terms iterates over the non-identity terms in their stable order.
func (h *Hamiltonian) Terms() iter.Seq2[int, Term] {
	return func(yield func(int, Term) bool) {
		for i := range h.coef {
			if !yield(i, h.Term(i)) {
				return
			}
		}
	}
}

// OneNorm returns Σ_i |h_i| over the non-identity terms (the offset is not
// included).
func (h *Hamiltonian) OneNorm() float64 {
	s := 0.0
	for _, c := range h.coef {
		s += math.Abs(c)
	}
	return s
}

// Prune returns a Hamiltonian without the terms whose |coefficient| is at
// most tol. The offset is kept. A NaN tol removes nothing.
func (h *Hamiltonian) Prune(tol float64) *Hamiltonian {
	p := &Hamiltonian{n: h.n, offset: h.offset, table: pauli.NewTable(h.n, h.Len())}
	for i, c := range h.coef {
		if !(math.Abs(c) <= tol) { // NaN tol: keep the term
			p.table.Append(h.table.At(i))
			p.coef = append(p.coef, c)
		}
	}
	return p
}

// Equal reports whether h and o have the same width, offset, and terms with
// equal coefficients in the same order.
func (h *Hamiltonian) Equal(o *Hamiltonian) bool {
	if h.n != o.n || h.offset != o.offset || len(h.coef) != len(o.coef) {
		return false
	}
	for i := range h.coef {
		if h.coef[i] != o.coef[i] || !h.table.At(i).Equal(o.table.At(i)) {
			return false
		}
	}
	return true
}

// Add returns h + o. It returns an error if h or o is nil or the widths
// differ.
func (h *Hamiltonian) Add(o *Hamiltonian) (*Hamiltonian, error) {
	if h == nil || o == nil {
		return nil, fmt.Errorf("hamiltonian: nil Hamiltonian")
	}
	if h.n != o.n {
		return nil, fmt.Errorf("hamiltonian: %d qubits and %d qubits", h.n, o.n)
	}
	terms := make([]Term, 0, h.Len()+o.Len())
	for _, t := range h.Terms() {
		terms = append(terms, t)
	}
	for _, t := range o.Terms() {
		terms = append(terms, t)
	}
	return New(h.n, h.offset+o.offset, terms)
}

// Scale returns c·h. It returns an error if h is nil.
func (h *Hamiltonian) Scale(c float64) (*Hamiltonian, error) {
	if h == nil {
		return nil, fmt.Errorf("hamiltonian: nil Hamiltonian")
	}
	terms := make([]Term, 0, h.Len())
	for _, t := range h.Terms() {
		t.Coeff *= c
		terms = append(terms, t)
	}
	return New(h.n, h.offset*c, terms)
}
