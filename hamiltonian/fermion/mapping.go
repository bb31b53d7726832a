package fermion

import (
	"encoding/binary"
	"fmt"
	"math"
	"math/cmplx"
	"strings"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// ImagTolerance is the largest |imaginary part| of a mapped coefficient that
// [Operator.QubitHamiltonian] accepts and discards; a larger one means the
// operator is not Hermitian and is reported as an error. For coefficients
// built from contributions whose magnitudes sum to more than about 70 the
// bound grows to the rounding bound 1.4e-14 times that sum, so that
// rounding alone never fails a Hermitian operator.
const ImagTolerance = 1e-12

// roundoff is the relative size, against the sum of the magnitudes of its
// contributions, below which a merged coefficient is cancellation residue
// and counts as zero.
const roundoff = 64 * 0x1p-52

func abs(c complex128) float64 { return cmplx.Abs(c) }

// QubitOperator returns the image of o under e as Pauli strings with complex
// coefficients, repeated strings merged, in the order each string first
// appears while the terms are expanded. The identity, if present, is a term
// like any other. A merged coefficient is dropped when its magnitude is below
// 1.4e-14 times the sum of the magnitudes of its contributions, that is when
// it is rounding residue of an exact cancellation. It panics if e is not a
// defined encoding.
func (o *Operator) QubitOperator(e Encoding) []PauliTerm {
	m := o.mapAll(e)
	out := make([]PauliTerm, 0, len(m.coef))
	for i, c := range m.coef {
		if abs(c) <= roundoff*m.mag[i] {
			continue
		}
		x, z := m.words(i)
		out = append(out, PauliTerm{Pauli: pauli.FromWords(m.n, x, z), Coeff: c})
	}
	return out
}

// QubitHamiltonian maps o to a qubit Hamiltonian on Modes() qubits under e.
// It returns an error naming the Pauli term when a mapped coefficient has an
// imaginary part above [ImagTolerance] (o is then not Hermitian), or when a
// coefficient is not finite. Real parts that are rounding residue of an exact
// cancellation are dropped as in [Operator.QubitOperator]. An undefined
// encoding is an error.
func (o *Operator) QubitHamiltonian(e Encoding) (*hamiltonian.Hamiltonian, error) {
	if !e.valid() {
		return nil, fmt.Errorf("fermion: undefined encoding %d", int(e))
	}
	m := o.mapAll(e)
	var offset float64
	terms := make([]hamiltonian.Term, 0, len(m.coef))
	var bad []string
	nbad := 0
	for i, c := range m.coef {
		x, z := m.words(i)
		if !(math.Abs(imag(c)) <= max(ImagTolerance, roundoff*m.mag[i])) {
			if nbad++; nbad <= 3 {
				bad = append(bad, fmt.Sprintf("%s has coefficient %v", pauli.FromWords(m.n, x, z), c))
			}
			continue
		}
		re := real(c)
		if math.Abs(re) <= roundoff*m.mag[i] {
			continue
		}
		if isIdentity(x, z) {
			offset += re
			continue
		}
		terms = append(terms, hamiltonian.Term{Pauli: pauli.FromWords(m.n, x, z), Coeff: re})
	}
	if nbad > 0 {
		msg := strings.Join(bad, "; ")
		if nbad > len(bad) {
			msg += fmt.Sprintf("; and %d more", nbad-len(bad))
		}
		return nil, fmt.Errorf("fermion: %s image is not Hermitian: imaginary part above %g: %s", e, ImagTolerance, msg)
	}
	h, err := hamiltonian.New(m.n, offset, terms)
	if err != nil {
		return nil, fmt.Errorf("fermion: %s image: %w", e, err)
	}
	return h, nil
}

func isIdentity(x, z []uint64) bool {
	for i := range x {
		if x[i]|z[i] != 0 {
			return false
		}
	}
	return true
}

// accumulator sums complex coefficients of Pauli strings keyed by their
// words, without allocating per lookup.
type accumulator struct {
	n, w  int
	index map[string]int32
	small map[[2]uint64]int32 // used instead of index when w == 1
	data  []uint64            // string i's x then z words at data[2wi:]
	coef  []complex128
	mag   []float64 // Σ |contribution| per string, for the zero test
	key   []byte
}

func newAccumulator(n int) *accumulator {
	a := &accumulator{n: n, w: pauli.Words(n)}
	if a.w == 1 {
		a.small = make(map[[2]uint64]int32)
	} else {
		a.index = make(map[string]int32)
		a.key = make([]byte, 16*a.w)
	}
	return a
}

func (a *accumulator) words(i int) (x, z []uint64) {
	o := 2 * a.w * i
	return a.data[o : o+a.w : o+a.w], a.data[o+a.w : o+2*a.w : o+2*a.w]
}

func (a *accumulator) add(x, z []uint64, c complex128, mag float64) {
	var k int32
	var ok bool
	switch a.w {
	case 0:
		k, ok = 0, len(a.coef) > 0
	case 1:
		key := [2]uint64{x[0], z[0]}
		if k, ok = a.small[key]; !ok {
			a.small[key] = int32(len(a.coef))
		}
	default:
		b := a.key
		for i := range x {
			binary.LittleEndian.PutUint64(b[16*i:], x[i])
			binary.LittleEndian.PutUint64(b[16*i+8:], z[i])
		}
		if k, ok = a.index[string(b)]; !ok {
			a.index[string(b)] = int32(len(a.coef))
		}
	}
	if ok {
		a.coef[k] += c
		a.mag[k] += mag
		return
	}
	a.data = append(a.data, x...)
	a.data = append(a.data, z...)
	a.coef = append(a.coef, c)
	a.mag = append(a.mag, mag)
}

// mapper expands products of encoded ladder operators into an accumulator.
type mapper struct {
	*accumulator
	tab *ladderTable
	lx  [][]uint64 // running product's x words after each level
	lz  [][]uint64
	// The weights of the product being expanded: its image is
	// Σ_k (u α_k + w conj(α_k)) P_k where Σ_k α_k P_k is the image of the
	// product itself. sp = u + w and sm = i(u − w).
	sp, sm complex128
	weight float64 // (|u| + |w|)·2^−k
}

// mapAll maps o. Products are first grouped (see [groups]) so that each
// distinct product is expanded once, together with its adjoint: the image of
// R† has the same strings as that of R with conjugate coefficients.
func (o *Operator) mapAll(e Encoding) *mapper {
	m := &mapper{accumulator: newAccumulator(o.modes), tab: newLadderTable(e, o.modes)}
	g := newGroups(o.Len())
	for _, t := range o.Terms() {
		g.add(t.Coeff, t.Ops)
	}
	for i := range g.u {
		m.addGroup(g.u[i], g.w[i], g.product(i))
	}
	return m
}

// addGroup adds the image of u·R + w·R† for the product R = ops: the
// 2^len(ops) products of one string per ladder image.
func (m *mapper) addGroup(u, w complex128, ops []Op) {
	if u == 0 && w == 0 {
		return
	}
	k := len(ops)
	for len(m.lx) <= k {
		m.lx = append(m.lx, make([]uint64, m.w))
		m.lz = append(m.lz, make([]uint64, m.w))
	}
	clear(m.lx[0])
	clear(m.lz[0])
	scale := complex(math.Ldexp(1, -k), 0)
	m.sp = (u + w) * scale
	d := (u - w) * scale
	m.sm = complex(-imag(d), real(d))
	m.weight = (abs(u) + abs(w)) * real(scale)
	m.expand(ops, 0, 0)
}

// expand multiplies the running product at this level by each of the two
// strings of ops[level]'s image; at the leaves the product is i^ph·P and
// contributes (u i^ph + w (−i)^ph)·2^−k to P.
func (m *mapper) expand(ops []Op, level int, ph int) {
	if level == len(ops) {
		var c complex128
		switch ph & 3 {
		case 0:
			c = m.sp
		case 1:
			c = m.sm
		case 2:
			c = -m.sp
		case 3:
			c = -m.sm
		}
		if c != 0 {
			m.add(m.lx[level], m.lz[level], c, m.weight)
		}
		return
	}
	op := ops[level]
	x, za, zb := m.tab.at(op.Mode)
	// Second string: weight −i (creation) or +i (annihilation).
	im := 3
	if !op.Dagger {
		im = 1
	}
	px, pz := m.lx[level], m.lz[level]
	nx, nz := m.lx[level+1], m.lz[level+1]
	m.expand(ops, level+1, ph+int(pauli.MulWords(nx, nz, px, pz, x, za)))
	m.expand(ops, level+1, ph+im+int(pauli.MulWords(nx, nz, px, pz, x, zb)))
}
