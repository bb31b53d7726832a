package pauli

import (
	"iter"
	"math/bits"
	"strconv"
	"strings"
	"unsafe"

	"github.com/shotplan/shotplan/internal/inputcap"
)

// Words returns the number of 64-bit words that hold n qubits.
func Words(n int) int { return (n + 63) >> 6 }

// String is an n-qubit Pauli string without a phase, stored as symplectic bit
// words. The zero value is the identity on zero qubits. A String is an
// immutable value.
type String struct {
	n    int
	x, z []uint64
}

// Identity returns the identity string on n qubits. It panics if n < 0.
func Identity(n int) String {
	if n < 0 {
		panic("pauli: negative qubit count")
	}
	w := Words(n)
	buf := make([]uint64, 2*w)
	return String{n: n, x: buf[:w:w], z: buf[w:]}
}

// FromLetters returns the string whose qubit q carries letters[q]. It panics
// if a letter is not one of I, X, Y, Z.
func FromLetters(letters []Letter) String {
	p := Identity(len(letters))
	for q, l := range letters {
		if l > Z {
			panic("pauli: invalid letter")
		}
		x, z := l.bits()
		p.x[q>>6] |= x << (q & 63)
		p.z[q>>6] |= z << (q & 63)
	}
	return p
}

// FromWords returns the n-qubit string with the given symplectic words, which
// are copied. It panics if either slice is shorter than Words(n); bits beyond
// qubit n−1 are cleared.
func FromWords(n int, x, z []uint64) String {
	p := Identity(n)
	w := len(p.x)
	if len(x) < w || len(z) < w {
		panic("pauli: FromWords: too few words for the qubit count")
	}
	copy(p.x, x[:w])
	copy(p.z, z[:w])
	if r := n & 63; r != 0 {
		m := uint64(1)<<r - 1
		p.x[w-1] &= m
		p.z[w-1] &= m
	}
	return p
}

// Qubits returns the number of qubits n.
func (p String) Qubits() int { return p.n }

// Words returns the x and z words of p. They alias p's storage and must not
// be modified.
func (p String) Words() (x, z []uint64) { return p.x, p.z }

// At returns the letter on qubit q. It panics if q is out of range.
func (p String) At(q int) Letter {
	if q < 0 || q >= p.n {
		panic("pauli: qubit index out of range")
	}
	return LetterAt(p.x, p.z, q)
}

// With returns a copy of p with letter l on qubit q. It panics if q is out of
// range or l is invalid.
func (p String) With(q int, l Letter) String {
	if q < 0 || q >= p.n {
		panic("pauli: qubit index out of range")
	}
	if l > Z {
		panic("pauli: invalid letter")
	}
	c := p.Clone()
	x, z := l.bits()
	m := uint64(1) << (q & 63)
	c.x[q>>6] = c.x[q>>6]&^m | x<<(q&63)
	c.z[q>>6] = c.z[q>>6]&^m | z<<(q&63)
	return c
}

// Clone returns a copy of p that shares no storage with it.
func (p String) Clone() String {
	c := Identity(p.n)
	copy(c.x, p.x)
	copy(c.z, p.z)
	return c
}

// Weight returns the number of qubits on which p is not the identity.
func (p String) Weight() int {
	w := 0
	for i := range p.x {
		w += bits.OnesCount64(p.x[i] | p.z[i])
	}
	return w
}

// IsIdentity reports whether p is the identity on every qubit.
func (p String) IsIdentity() bool {
	for i := range p.x {
		if p.x[i]|p.z[i] != 0 {
			return false
		}
	}
	return true
}

// Equal reports whether p and o have the same width and letters.
func (p String) Equal(o String) bool {
	if p.n != o.n {
		return false
	}
	for i := range p.x {
		if p.x[i] != o.x[i] || p.z[i] != o.z[i] {
			return false
		}
	}
	return true
}

// Compare orders strings by width, then by their words; it returns −1, 0 or
// +1. The order is stable across runs and suits sorting and deduplication.
func Compare(a, b String) int {
	if a.n != b.n {
		if a.n < b.n {
			return -1
		}
		return 1
	}
	for i := range a.x {
		if a.x[i] != b.x[i] {
			if a.x[i] < b.x[i] {
				return -1
			}
			return 1
		}
		if a.z[i] != b.z[i] {
			if a.z[i] < b.z[i] {
				return -1
			}
			return 1
		}
	}
	return 0
}

// Key returns a compact string that identifies p among strings of the same
// width, for use as a map key.
func (p String) Key() string {
	if len(p.x) == 0 {
		return ""
	}
	b := make([]byte, 0, 16*len(p.x))
	for i := range p.x {
		b = appendWord(b, p.x[i])
		b = appendWord(b, p.z[i])
	}
	return unsafe.String(unsafe.SliceData(b), len(b))
}

func appendWord(b []byte, w uint64) []byte {
	for k := 0; k < 64; k += 8 {
		b = append(b, byte(w>>k))
	}
	return b
}

// Support returns the qubits on which p is not the identity, in increasing
// order.
func (p String) Support() iter.Seq[int] {
	return func(yield func(int) bool) {
		for i := range p.x {
			m := p.x[i] | p.z[i]
			for m != 0 {
				t := bits.TrailingZeros64(m)
				if !yield(i<<6 + t) {
					return
				}
				m &= m - 1
			}
		}
	}
}

// Letters returns the non-identity letters of p with their qubits, in
// increasing qubit order.
func (p String) Letters() iter.Seq2[int, Letter] {
	return func(yield func(int, Letter) bool) {
		for q := range p.Support() {
			if !yield(q, p.At(q)) {
				return
			}
		}
	}
}

// Commutes reports whether p and o commute as operators: the symplectic form
// |x_p·z_o| + |z_p·x_o| is even. It panics if the widths differ.
func (p String) Commutes(o String) bool {
	mustSameWidth(p.n, o.n)
	c := 0
	for i := range p.x {
		c += bits.OnesCount64(p.x[i]&o.z[i] ^ p.z[i]&o.x[i])
	}
	return c&1 == 0
}

// QubitwiseCommutes reports whether on every qubit p and o are equal or one
// of them is the identity. It panics if the widths differ.
func (p String) QubitwiseCommutes(o String) bool {
	mustSameWidth(p.n, o.n)
	for i := range p.x {
		if ((p.x[i]^o.x[i])|(p.z[i]^o.z[i]))&(p.x[i]|p.z[i])&(o.x[i]|o.z[i]) != 0 {
			return false
		}
	}
	return true
}

// Phase is a power of i: the product of two strings is i^Phase times a
// string. Its values are 0, 1, 2, 3 for 1, i, −1, −i.
type Phase uint8

// Complex returns i^ph.
func (ph Phase) Complex() complex128 {
	return [4]complex128{1, 1i, -1, -1i}[ph&3]
}

// String returns "+1", "+i", "-1" or "-i".
func (ph Phase) String() string { return [4]string{"+1", "+i", "-1", "-i"}[ph&3] }

// Mul returns the product a·b as i^ph · c. It follows the single-qubit table
// XY = iZ, YZ = iX, ZX = iY (Nielsen & Chuang §2.1.3) qubit by qubit, counted
// word-wise. It panics if the widths differ.
func Mul(a, b String) (c String, ph Phase) {
	mustSameWidth(a.n, b.n)
	c = Identity(a.n)
	return c, MulWords(c.x, c.z, a.x, a.z, b.x, b.z)
}

// MulWords is [Mul] on raw symplectic words, for callers that keep strings
// in their own buffers: it writes the words of (x1s,z1s)·(x2s,z2s) into
// (dx,dz) and returns the phase. All six slices have the same length (a
// shorter operand panics); dx, dz may alias x1s, z1s (each word is read
// before it is written). It does not allocate.
func MulWords(dx, dz, x1s, z1s, x2s, z2s []uint64) Phase {
	var pos, neg int
	for i := range dx {
		x1, z1, x2, z2 := x1s[i], z1s[i], x2s[i], z2s[i]
		xa, za, ya := x1&^z1, z1&^x1, x1&z1 // where the first is X, Z, Y
		xb, zb, yb := x2&^z2, z2&^x2, x2&z2 // where the second is X, Z, Y
		// XY=iZ, ZX=iY, YZ=iX count +1; the reversed orders count −1.
		pos += bits.OnesCount64(xa&yb | za&xb | ya&zb)
		neg += bits.OnesCount64(xa&zb | za&yb | ya&xb)
		dx[i] = x1 ^ x2
		dz[i] = z1 ^ z2
	}
	return Phase((pos - neg) & 3)
}

func mustSameWidth(a, b int) {
	if a != b {
		panic("pauli: strings of different widths")
	}
}

// String returns the dense form of p, one letter per qubit, qubit 0 first.
func (p String) String() string {
	return string(p.AppendText(nil))
}

// AppendText appends the dense form of p to b.
func (p String) AppendText(b []byte) []byte {
	for q := range p.n {
		b = append(b, "IXZY"[p.x[q>>6]>>(q&63)&1|(p.z[q>>6]>>(q&63)&1)<<1])
	}
	return b
}

// MarshalText returns the dense form of p.
func (p String) MarshalText() ([]byte, error) { return p.AppendText(nil), nil }

// UnmarshalText parses the dense form into p.
func (p *String) UnmarshalText(b []byte) error {
	q, err := Parse(string(b))
	if err != nil {
		return err
	}
	*p = q
	return nil
}

// Sparse returns the sparse form of p, such as "X_0 Z_2 Y_3", or "I" for
// the identity.
func (p String) Sparse() string {
	return string(p.AppendSparse(nil))
}

// AppendSparse appends the sparse form of p to b.
func (p String) AppendSparse(b []byte) []byte {
	first := true
	for q, l := range p.Letters() {
		if !first {
			b = append(b, ' ')
		}
		first = false
		b = append(b, "IXYZ"[l], '_')
		b = strconv.AppendInt(b, int64(q), 10)
	}
	if first {
		b = append(b, 'I')
	}
	return b
}

// Parse parses the dense form: one of I, X, Y, Z (either case) per qubit,
// qubit 0 first. The qubit count is the length of s.
func Parse(s string) (String, error) {
	p := Identity(len(s))
	for q := 0; q < len(s); q++ {
		l, ok := letterFromByte(s[q])
		if !ok {
			return String{}, &ParseError{Input: s, Offset: q, Reason: "unknown letter " + strconv.QuoteRune(rune(s[q])), Err: ErrSyntax}
		}
		x, z := l.bits()
		p.x[q>>6] |= x << (q & 63)
		p.z[q>>6] |= z << (q & 63)
	}
	return p, nil
}

// MustParse is like [Parse] but panics on error. It is meant for constants in
// tests and examples.
func MustParse(s string) String {
	p, err := Parse(s)
	if err != nil {
		panic(err)
	}
	return p
}

// ParseSparse parses the sparse form on n qubits: factors separated by
// spaces, each a letter, an underscore (the subscript mark) and a qubit
// index, such as "X_0 Z_2 Y_3". "I" alone (or an empty string) is the
// identity. A qubit may appear only once, and an index must be below n. A
// factor without the underscore ("X0") is an error that names the form to
// write instead.
func ParseSparse(s string, n int) (String, error) {
	if n < 0 {
		return String{}, &ParseError{Input: s, Offset: 0, Reason: "negative qubit count", Err: ErrRange}
	}
	p := Identity(n)
	if t := strings.TrimSpace(s); t == "" || t == "I" || t == "i" {
		return p, nil
	}
	i := 0
	for i < len(s) {
		if s[i] == ' ' || s[i] == '\t' {
			i++
			continue
		}
		start := i
		l, ok := letterFromByte(s[i])
		if !ok {
			return String{}, &ParseError{Input: s, Offset: i, Reason: "unknown letter " + strconv.QuoteRune(rune(s[i])), Err: ErrSyntax}
		}
		i++
		if i >= len(s) || s[i] != '_' {
			return String{}, &ParseError{Input: s, Offset: i, Reason: sparseHint(s, start, l), Err: ErrSyntax}
		}
		i++
		j := i
		for j < len(s) && s[j] >= '0' && s[j] <= '9' {
			j++
		}
		if j == i {
			return String{}, &ParseError{Input: s, Offset: i, Reason: "missing qubit index after " + l.String() + "_", Err: ErrSyntax}
		}
		if j < len(s) && s[j] != ' ' && s[j] != '\t' {
			return String{}, &ParseError{Input: s, Offset: j, Reason: "unexpected " + strconv.QuoteRune(rune(s[j])) + " after qubit index (separate factors with a space)", Err: ErrSyntax}
		}
		q, err := strconv.Atoi(s[i:j])
		if err != nil || q >= n {
			return String{}, &ParseError{Input: s, Offset: i, Reason: "qubit " + inputcap.Clip(s[i:j]) + " beyond the qubit count " + strconv.Itoa(n), Err: ErrRange}
		}
		if l == I {
			i = j
			continue
		}
		m := uint64(1) << (q & 63)
		if (p.x[q>>6]|p.z[q>>6])&m != 0 {
			return String{}, &ParseError{Input: s, Offset: start, Reason: "qubit " + s[i:j] + " named twice", Err: ErrSyntax}
		}
		x, z := l.bits()
		p.x[q>>6] |= x << (q & 63)
		p.z[q>>6] |= z << (q & 63)
		i = j
	}
	return p, nil
}

// sparseHint explains a sparse factor that lacks the subscript mark: a
// letter followed by digits ("X0") is the unmarked form, answered with the
// form to write instead.
func sparseHint(s string, start int, l Letter) string {
	j := start + 1
	for j < len(s) && s[j] >= '0' && s[j] <= '9' {
		j++
	}
	if j > start+1 {
		return strconv.Quote(inputcap.Clip(s[start:j])) + ": write " + l.String() + "_" + inputcap.Clip(s[start+1:j]) + " (letter, underscore, qubit)"
	}
	return "missing \"_\" and qubit index after " + l.String() + " (write " + l.String() + "_0 for qubit 0)"
}
