package fermion

import (
	"fmt"
	"math/bits"
	"strings"

	"github.com/shotplan/shotplan/pauli"
)

// Encoding is a fermion-to-qubit mapping. The zero value is [JordanWigner].
type Encoding int

// The encodings of Seeley, Richard & Love, arXiv:1208.5986. All three map n
// modes to n qubits; they differ in what qubit j stores (see the package
// documentation).
const (
	JordanWigner Encoding = iota // qubit j holds the occupation of mode j
	BravyiKitaev                 // qubit j holds a partial sum of occupations (Fenwick tree)
	Parity                       // qubit j holds the parity of modes 0..j
)

// String returns the short name: "jw", "bk" or "parity".
func (e Encoding) String() string {
	switch e {
	case JordanWigner:
		return "jw"
	case BravyiKitaev:
		return "bk"
	case Parity:
		return "parity"
	}
	return fmt.Sprintf("Encoding(%d)", int(e))
}

// ParseEncoding parses an encoding name, ignoring case: "jw" or
// "jordan-wigner", "bk" or "bravyi-kitaev", "parity".
func ParseEncoding(s string) (Encoding, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "jw", "jordan-wigner", "jordanwigner":
		return JordanWigner, nil
	case "bk", "bravyi-kitaev", "bravyikitaev":
		return BravyiKitaev, nil
	case "parity":
		return Parity, nil
	}
	return 0, fmt.Errorf("fermion: unknown encoding %q (want jw, bk or parity)", s)
}

// MarshalText returns the short name of e.
func (e Encoding) MarshalText() ([]byte, error) {
	if !e.valid() {
		return nil, fmt.Errorf("fermion: invalid encoding %d", int(e))
	}
	return []byte(e.String()), nil
}

// UnmarshalText parses a name as [ParseEncoding] does, so an Encoding can be
// a command-line flag through flag.TextVar.
func (e *Encoding) UnmarshalText(b []byte) error {
	v, err := ParseEncoding(string(b))
	if err != nil {
		return err
	}
	*e = v
	return nil
}

func (e Encoding) valid() bool { return e >= JordanWigner && e <= Parity }

// PauliTerm is a Pauli string with a complex coefficient.
type PauliTerm struct {
	Pauli pauli.String
	Coeff complex128
}

// Ladder returns the image of one ladder operator on n modes under e: the
// sum of two Pauli terms
//
//	a_j† = ½ X_U(j) X_j Z_P(j) − (i/2) X_U(j) Y_j Z_R(j),
//
// and its adjoint (+i/2) for a_j, with the update set U, parity set P and
// remainder set R = P(j) Δ F(j) of the package documentation. Each call
// builds the sets of all n modes (O(n²) word operations); to map many
// products, build an [Operator] and map it once. It panics if e is not a
// defined encoding or op.Mode is outside [0, n).
func (e Encoding) Ladder(n int, op Op) [2]PauliTerm {
	if op.Mode < 0 || op.Mode >= n {
		panic("fermion: Ladder: mode out of range")
	}
	t := newLadderTable(e, n)
	xs, za, zb := t.at(op.Mode)
	im := complex(0, -0.5)
	if !op.Dagger {
		im = complex(0, 0.5)
	}
	return [2]PauliTerm{
		{Pauli: pauli.FromWords(n, xs, za), Coeff: 0.5},
		{Pauli: pauli.FromWords(n, xs, zb), Coeff: im},
	}
}

// ladderTable holds the two strings of every encoded creation operator, as
// symplectic words: mode j's strings are (x, za) with weight ½ and (x, zb)
// with weight −i/2.
type ladderTable struct {
	n, w int
	data []uint64 // mode j at data[3wj:]: x, za, zb
}

func (t *ladderTable) at(j int) (x, za, zb []uint64) {
	o := 3 * t.w * j
	w := t.w
	return t.data[o : o+w : o+w], t.data[o+w : o+2*w : o+2*w], t.data[o+2*w : o+3*w : o+3*w]
}

// newLadderTable builds the ladder images from the lower-triangular binary
// matrix β with unit diagonal that maps occupations f to qubit values
// b = β f (mod 2). For mode j:
//
//   - U(j), the update set: qubits k ≠ j with β[k][j] = 1 (they flip with f_j);
//   - F(j), the flip set: the qubits other than j in row j of β⁻¹, so that
//     f_j = b_j ⊕ Σ_{k∈F(j)} b_k;
//   - P(j), the parity set: the support of Σ_{k<j} (row k of β⁻¹), so that
//     f_0 ⊕ ⋯ ⊕ f_{j−1} = Σ_{k∈P(j)} b_k.
//
// Then a_j† = X_{U(j)∪{j}} Z_{P(j)} · ½(I + Z_j Z_{F(j)}): project on f_j = 0,
// take the sign (−1)^{f_0+⋯+f_{j−1}}, flip the qubits that hold f_j. Using
// X_j Z_j = −iY_j this is the two-term form in [Encoding.Ladder] with
// R(j) = P(j) Δ F(j), which is P(j) for Jordan–Wigner, ∅ for parity, and
// P(j) for even j, P(j)∖F(j) for odd j in Bravyi–Kitaev (Seeley, Richard &
// Love, arXiv:1208.5986, §IV).
func newLadderTable(e Encoding, n int) *ladderTable {
	if !e.valid() {
		panic("fermion: invalid encoding")
	}
	w := pauli.Words(n)
	set := func(v []uint64, k int) { v[k>>6] |= 1 << (k & 63) }
	get := func(v []uint64, k int) bool { return v[k>>6]>>(k&63)&1 == 1 }
	// beta[k] is row k of β.
	beta := make([]uint64, n*w)
	row := func(m []uint64, k int) []uint64 { return m[k*w : (k+1)*w] }
	for k := range n {
		lo := k // Jordan–Wigner: β = I
		switch e {
		case Parity:
			lo = 0 // qubit k holds f_0 ⊕ ⋯ ⊕ f_k
		case BravyiKitaev:
			// Fenwick tree: qubit k holds f_l for k+1−lowbit(k+1) ≤ l ≤ k.
			// For n not a power of two this is the leading n×n block of β
			// for the next power of two.
			lo = k + 1 - 1<<bits.TrailingZeros(uint(k+1))
		}
		for l := lo; l <= k; l++ {
			set(row(beta, k), l)
		}
	}
	// β⁻¹ by forward substitution over GF(2): row k of β⁻¹ is
	// e_k ⊕ Σ_{l<k, β[k][l]=1} (row l of β⁻¹).
	inv := make([]uint64, n*w)
	for k := range n {
		r := row(inv, k)
		set(r, k)
		for l := range k {
			if get(row(beta, k), l) {
				for i, v := range row(inv, l) {
					r[i] ^= v
				}
			}
		}
	}
	t := &ladderTable{n: n, w: w, data: make([]uint64, 3*w*n)}
	prefix := make([]uint64, w) // Σ_{k<j} row k of β⁻¹
	for j := range n {
		x, za, zb := t.at(j)
		for k := j; k < n; k++ {
			if get(row(beta, k), j) {
				set(x, k) // U(j) ∪ {j}
			}
		}
		copy(za, prefix) // P(j)
		r := row(inv, j)
		for i := range zb {
			zb[i] = prefix[i] ^ r[i] // P(j) Δ (F(j) ∪ {j}) = R(j) ∪ {j}, as j ∉ P(j)
		}
		for i, v := range r {
			prefix[i] ^= v
		}
	}
	return t
}

// Occupations returns the computational basis state that e maps the
// occupation-number basis state f of n modes to: bit j of f is the
// occupation of mode j, and the result is b = β f (mod 2) with β the
// encoding's binary matrix (what qubit j stores; Seeley, Richard & Love,
// arXiv:1208.5986): b = f for Jordan–Wigner, b_j = f_0 ⊕ ⋯ ⊕ f_j for
// parity, and for Bravyi–Kitaev b_j = f_l ⊕ ⋯ ⊕ f_j with
// l = j + 1 − lowbit(j+1) (the Fenwick tree). A Slater determinant is thus a
// basis state under every encoding here, whatever n; the cost is O(n) bit
// operations. Bits of f at or beyond n are ignored. It panics if e is not
// a defined encoding or f has fewer than ⌈n/64⌉ words.
func (e Encoding) Occupations(n int, f pauli.Bits) pauli.Bits {
	if !e.valid() {
		panic("fermion: invalid encoding")
	}
	w := pauli.Words(n)
	if len(f) < w {
		panic("fermion: Occupations: occupation bits shorter than the modes")
	}
	b := make(pauli.Bits, w)
	get := func(j int) uint64 { return f[j>>6] >> (j & 63) & 1 }
	// prefix[j] = f_0 ⊕ ⋯ ⊕ f_{j−1}: a range's parity is prefix[hi] ⊕ prefix[lo].
	prefix := make([]uint8, n+1)
	for j := range n {
		prefix[j+1] = prefix[j] ^ uint8(get(j))
	}
	for j := range n {
		var v uint64
		switch e {
		case JordanWigner:
			v = get(j)
		case Parity:
			v = uint64(prefix[j+1])
		case BravyiKitaev:
			lo := j + 1 - 1<<bits.TrailingZeros(uint(j+1))
			v = uint64(prefix[j+1] ^ prefix[lo])
		}
		b[j>>6] |= v << (j & 63)
	}
	return b
}
