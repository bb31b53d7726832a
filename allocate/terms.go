package allocate

import (
	"cmp"
	"fmt"
	"math"
	"math/bits"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// ranked holds the terms of a Hamiltonian in rank order — by |h_i|
// descending, ties by term index — with their symplectic words laid out row
// by row (x words, then z words), so that hot loops read one contiguous
// slice.
type ranked struct {
	n, w  int
	order []int32   // order[r] is the term index of rank r
	abs   []float64 // abs[r] = |h_order[r]|
	words []uint64  // row r: x at words[2wr:], z at words[2wr+w:]
	used  []uint64  // qubits in the support of some term
	all   []uint64  // every qubit
}

func newRanked(h *hamiltonian.Hamiltonian) *ranked {
	m, n := h.Len(), h.Qubits()
	w := pauli.Words(n)
	rk := &ranked{n: n, w: w, order: make([]int32, m), abs: make([]float64, m), words: make([]uint64, 2*w*m), used: make([]uint64, w), all: make([]uint64, w)}
	coef := h.Coeffs()
	fillIota(rk.order)
	slices.SortFunc(rk.order, func(a, b int32) int {
		if c := cmp.Compare(math.Abs(coef[b]), math.Abs(coef[a])); c != 0 {
			return c
		}
		return cmp.Compare(a, b)
	})
	t := h.Table()
	for r, i := range rk.order {
		rk.abs[r] = math.Abs(coef[i])
		x, z := t.Words(int(i))
		copy(rk.words[2*w*r:], x)
		copy(rk.words[2*w*r+w:], z)
		for k := range w {
			rk.used[k] |= x[k] | z[k]
		}
	}
	for q := range n {
		rk.all[q>>6] |= 1 << (q & 63)
	}
	return rk
}

// fillIota sets v[i] = i.
func fillIota(v []int32) {
	for i := range v {
		v[i] = int32(i)
	}
}

// row returns the x and z words of rank r.
func (rk *ranked) row(r int) (x, z []uint64) {
	o := 2 * rk.w * r
	return rk.words[o : o+rk.w], rk.words[o+rk.w : o+2*rk.w]
}

// supportOf iterates over the support of the string with words x, z: the
// word-level form of [pauli.String.Support], for rows read from a table or
// [ranked] without copying them into a String.
func supportOf(x, z []uint64) func(func(int) bool) {
	return func(yield func(int) bool) {
		for i := range x {
			s := x[i] | z[i]
			for s != 0 {
				if !yield(i<<6 + bits.TrailingZeros64(s)) {
					return
				}
				s &= s - 1
			}
		}
	}
}

// letterBits returns the symplectic bits of a letter as all-zero or
// all-one words.
func letterBits(l pauli.Letter) (x, z uint64) {
	switch l {
	case pauli.X:
		return ^uint64(0), 0
	case pauli.Y:
		return ^uint64(0), ^uint64(0)
	case pauli.Z:
		return 0, ^uint64(0)
	}
	return 0, 0
}

// writeLetters writes the letters of the n-qubit words x, z into dst.
func writeLetters(dst []pauli.Letter, x, z []uint64) {
	for q := range dst {
		dst[q] = pauli.LetterAt(x, z, q)
	}
}

// fillLetter returns the letter a strategy puts on the qubits it leaves
// free: l, or Z for the zero value pauli.I. The error, prefixed by the
// strategy's name, rejects a value that is not a letter.
func fillLetter(name string, l pauli.Letter) (pauli.Letter, error) {
	switch {
	case l > pauli.Z:
		return 0, fmt.Errorf("%s: fill letter %d is not I, X, Y or Z", name, l)
	case l == pauli.I:
		return pauli.Z, nil
	}
	return l, nil
}
