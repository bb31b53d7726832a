package pauli

import (
	"math"
	"math/rand/v2"

	"gonum.org/v1/gonum/mat"
)

// Explicit matrices for checking the Clifford code from outside it.
//
// gonum v0.17.0 has mat.CDense for complex storage but no complex product,
// so a complex matrix M = A + iB is multiplied in its real embedding
// [[A, −B], [B, A]] as a mat.Dense; the embedding preserves products, and
// its transpose is the embedding of M†. Kronecker products are formed on
// the complex entries first (cmat below), then embedded.
//
// The one- and two-qubit matrices are those of Nielsen & Chuang, Quantum
// Computation and Quantum Information, §2.1.3 (Pauli matrices) and §4.2–4.3
// (H, S, CNOT, controlled-Z); common practice. Following DEVELOPERS.md (Conventions), the
// basis index is Σ_q bit_q·2^q, so qubit 0 is the rightmost Kronecker factor.

type cmat struct {
	d int
	a []complex128 // row-major d×d
}

func (m cmat) at(i, j int) complex128 { return m.a[i*m.d+j] }

func cmatOf(d int, v ...complex128) cmat { return cmat{d: d, a: v} }

var (
	r2     = complex(1/math.Sqrt2, 0)
	mI     = cmatOf(2, 1, 0, 0, 1)
	mX     = cmatOf(2, 0, 1, 1, 0)
	mY     = cmatOf(2, 0, -1i, 1i, 0)
	mZ     = cmatOf(2, 1, 0, 0, -1)
	mH     = cmatOf(2, r2, r2, r2, -r2)
	mS     = cmatOf(2, 1, 0, 0, 1i)
	mSdg   = cmatOf(2, 1, 0, 0, -1i)
	mProj0 = cmatOf(2, 1, 0, 0, 0) // |0⟩⟨0|
	mProj1 = cmatOf(2, 0, 0, 0, 1) // |1⟩⟨1|
)

var letterMatrix = [4]cmat{I: mI, X: mX, Y: mY, Z: mZ}

func kron(a, b cmat) cmat {
	d := a.d * b.d
	out := cmat{d: d, a: make([]complex128, d*d)}
	for i := range a.d {
		for j := range a.d {
			x := a.at(i, j)
			if x == 0 {
				continue
			}
			for k := range b.d {
				for l := range b.d {
					out.a[(i*b.d+k)*d+j*b.d+l] = x * b.at(k, l)
				}
			}
		}
	}
	return out
}

// opOn returns the n-qubit operator with ops[q] on qubit q and I elsewhere.
func opOn(n int, ops map[int]cmat) cmat {
	m := cmatOf(1, 1)
	for q := n - 1; q >= 0; q-- {
		f, ok := ops[q]
		if !ok {
			f = mI
		}
		m = kron(m, f)
	}
	return m
}

func embed(m cmat) *mat.Dense {
	d := m.d
	e := mat.NewDense(2*d, 2*d, nil)
	for i := range d {
		for j := range d {
			v := m.at(i, j)
			e.Set(i, j, real(v))
			e.Set(i+d, j+d, real(v))
			e.Set(i, j+d, -imag(v))
			e.Set(i+d, j, imag(v))
		}
	}
	return e
}

func pauliMatrix(p String) *mat.Dense {
	ops := map[int]cmat{}
	for q, l := range p.Letters() {
		ops[q] = letterMatrix[l]
	}
	return embed(opOn(p.Qubits(), ops))
}

func gateMatrix(n int, g Gate) *mat.Dense {
	switch g.Kind {
	case GateH:
		return embed(opOn(n, map[int]cmat{g.Q0: mH}))
	case GateS:
		return embed(opOn(n, map[int]cmat{g.Q0: mS}))
	case GateSdg:
		return embed(opOn(n, map[int]cmat{g.Q0: mSdg}))
	case GateCNOT:
		// CNOT = |0⟩⟨0| ⊗ I + |1⟩⟨1| ⊗ X (control ⊗ target).
		var m mat.Dense
		m.Add(embed(opOn(n, map[int]cmat{g.Q0: mProj0})), embed(opOn(n, map[int]cmat{g.Q0: mProj1, g.Q1: mX})))
		return &m
	case GateCZ:
		var m mat.Dense
		m.Add(embed(opOn(n, map[int]cmat{g.Q0: mProj0})), embed(opOn(n, map[int]cmat{g.Q0: mProj1, g.Q1: mZ})))
		return &m
	}
	panic("bad gate")
}

// circuitMatrix returns the real embedding of U = g_k ⋯ g_1.
func circuitMatrix(c *Circuit) *mat.Dense {
	d := 2 << c.Qubits()
	u := mat.NewDense(d, d, nil)
	for i := range d {
		u.Set(i, i, 1)
	}
	for _, g := range c.Gates() {
		var t mat.Dense
		t.Mul(gateMatrix(c.Qubits(), g), u)
		u = &t
	}
	return u
}

// conjugateMatrix returns the embedding of U P U†.
func conjugateMatrix(u *mat.Dense, p String) *mat.Dense {
	var t, m mat.Dense
	t.Mul(u, pauliMatrix(p))
	m.Mul(&t, u.T())
	return &m
}

// matrixTol bounds the entrywise error of products of at most a few hundred
// matrices with entries of modulus ≤ 1 in float64 (computed error is about
// 1e-15 per product).
const matrixTol = 1e-9

// isSignedPauli reports whether m equals sign·P(p).
func isSignedPauli(m *mat.Dense, p String, sign int) bool {
	var want mat.Dense
	want.Scale(float64(sign), pauliMatrix(p))
	return mat.EqualApprox(m, &want, matrixTol)
}

// Reference conjugation, letter by letter through lookup tables.
//
// One-qubit tables: common practice (Nielsen & Chuang §10.5.2, Fig. 10.7 and
// the surrounding text): H: X→Z, Y→−Y, Z→X; S: X→Y, Y→−X, Z→Z; S† is the
// inverse of S: X→−Y, Y→X, Z→Z. Two-qubit tables are computed once from the
// explicit 4×4 matrices above (refTwoQubit) and checked against the
// textbook generator table in TestTwoQubitTableTextbook.

type signedLetter struct {
	l   Letter
	neg bool
}

var refOneQubit = map[GateKind][4]signedLetter{
	GateH:   {I: {I, false}, X: {Z, false}, Y: {Y, true}, Z: {X, false}},
	GateS:   {I: {I, false}, X: {Y, false}, Y: {X, true}, Z: {Z, false}},
	GateSdg: {I: {I, false}, X: {Y, true}, Y: {X, false}, Z: {Z, false}},
}

type signedPair struct {
	a, b Letter
	neg  bool
}

// refTwoQubit[kind][a][b] is the image of a⊗b (a on Q0, b on Q1), from
// matrices.
var refTwoQubit = func() map[GateKind][4][4]signedPair {
	out := map[GateKind][4][4]signedPair{}
	for _, k := range []GateKind{GateCNOT, GateCZ} {
		u := gateMatrix(2, Gate{Kind: k, Q0: 0, Q1: 1})
		var tab [4][4]signedPair
		for a := I; a <= Z; a++ {
			for b := I; b <= Z; b++ {
				m := conjugateMatrix(u, FromLetters([]Letter{a, b}))
				found := false
				for c := I; c <= Z && !found; c++ {
					for d := I; d <= Z && !found; d++ {
						cand := FromLetters([]Letter{c, d})
						for _, s := range []int{1, -1} {
							if isSignedPauli(m, cand, s) {
								tab[a][b] = signedPair{c, d, s < 0}
								found = true
								break
							}
						}
					}
				}
				if !found {
					panic("conjugate of a Pauli by " + k.String() + " is not a signed Pauli")
				}
			}
		}
		out[k] = tab
	}
	return out
}()

// refConjugate conjugates p through c one gate and one letter at a time.
func refConjugate(c *Circuit, p String) (String, int) {
	ls := refLetters(p)
	sign := 1
	for _, g := range c.Gates() {
		if g.Kind.TwoQubit() {
			e := refTwoQubit[g.Kind][ls[g.Q0]][ls[g.Q1]]
			ls[g.Q0], ls[g.Q1] = e.a, e.b
			if e.neg {
				sign = -sign
			}
			continue
		}
		e := refOneQubit[g.Kind][ls[g.Q0]]
		ls[g.Q0] = e.l
		if e.neg {
			sign = -sign
		}
	}
	return FromLetters(ls), sign
}

func isZString(p String) bool {
	for _, l := range refLetters(p) {
		if l != I && l != Z {
			return false
		}
	}
	return true
}

// Random fixtures.

func randomString(rng *rand.Rand, n int) String {
	ls := make([]Letter, n)
	for q := range ls {
		ls[q] = Letter(rng.IntN(4))
	}
	return FromLetters(ls)
}

func randomGate(rng *rand.Rand, n int) Gate {
	k := GateKind(1 + rng.IntN(5))
	if n < 2 && k.TwoQubit() {
		k = GateH
	}
	g := Gate{Kind: k, Q0: rng.IntN(n)}
	if k.TwoQubit() {
		g.Q1 = rng.IntN(n - 1)
		if g.Q1 >= g.Q0 {
			g.Q1++
		}
	}
	return g
}

func randomCircuit(rng *rand.Rand, n, gates int) *Circuit {
	c := NewCircuit(n)
	for range gates {
		c.Append(randomGate(rng, n))
	}
	return c
}

// scrambler returns a layered random Clifford circuit: n+2 layers, each a
// random choice of H, S or nothing on every qubit followed by CNOTs on a
// random pairing of the qubits, so that images of single-qubit strings
// spread over many qubits.
func scrambler(rng *rand.Rand, n int) *Circuit {
	c := NewCircuit(n)
	for range n + 2 {
		for q := range n {
			switch rng.IntN(3) {
			case 0:
				c.H(q)
			case 1:
				c.S(q)
			}
		}
		perm := rng.Perm(n)
		for i := 0; i+1 < n; i += 2 {
			c.CNOT(perm[i], perm[i+1])
		}
	}
	return c
}

// randomCommutingFamily returns m members: products of a random subset of k
// commuting generators, the images V Z_q V† of k distinct qubits under a
// random Clifford V (conjugation preserves commutation). The first k members
// are the generators themselves when withGens is set.
func randomCommutingFamily(rng *rand.Rand, n, k, m int, withGens bool) []String {
	v := scrambler(rng, n).toTableau()
	qs := rng.Perm(n)[:k]
	gens := make([]String, k)
	for i, q := range qs {
		gens[i], _ = v.Conjugate(Identity(n).With(q, Z))
	}
	fam := make([]String, 0, m)
	if withGens {
		fam = append(fam, gens...)
	}
	for len(fam) < m {
		p := Identity(n)
		for _, g := range gens {
			if rng.IntN(2) == 1 {
				p, _ = Mul(p, g)
			}
		}
		fam = append(fam, p)
	}
	return fam[:m]
}

// greedyCommutingFamily draws random strings and keeps those that commute
// (by the letter-level reference) with all kept so far.
func greedyCommutingFamily(rng *rand.Rand, n, m int) []String {
	var fam []String
	for tries := 0; len(fam) < m && tries < 50*m; tries++ {
		p := randomString(rng, n)
		ok := true
		for _, o := range fam {
			if !refCommutes(o, p) {
				ok = false
				break
			}
		}
		if ok {
			fam = append(fam, p)
		}
	}
	return fam
}
