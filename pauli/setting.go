package pauli

import (
	"math/bits"
	"strconv"
)

// Setting is a local measurement setting: one of X, Y, Z on every qubit. Each
// qubit is rotated into its basis and read out. A Setting is an immutable
// value; its zero value has zero qubits.
type Setting struct {
	p String
}

// NewSetting returns the setting whose letters are those of p. It returns an
// error naming the first qubit that carries the identity.
func NewSetting(p String) (Setting, error) {
	for i := range p.x {
		free := ^(p.x[i] | p.z[i])
		if r := p.n - i<<6; r < 64 {
			free &= uint64(1)<<r - 1
		}
		if free != 0 {
			q := i<<6 + bits.TrailingZeros64(free)
			return Setting{}, &ParseError{Input: p.String(), Offset: q, Reason: "qubit " + strconv.Itoa(q) + " has no basis (identity letter)", Err: ErrSyntax}
		}
	}
	return Setting{p: p}, nil
}

// Complete returns the setting that agrees with p where p is not the identity
// and puts letter fill on every other qubit. It panics if fill is I or
// invalid.
func Complete(p String, fill Letter) Setting {
	if fill == I || fill > Z {
		panic("pauli: Complete: fill letter must be X, Y or Z")
	}
	c := p.Clone()
	fx, fz := fill.bits()
	for i := range c.x {
		free := ^(c.x[i] | c.z[i])
		if r := c.n - i<<6; r < 64 {
			free &= uint64(1)<<r - 1
		}
		c.x[i] |= free & -fx
		c.z[i] |= free & -fz
	}
	return Setting{p: c}
}

// ParseSetting parses a dense setting such as "XZZY"; the identity letter is
// an error.
func ParseSetting(s string) (Setting, error) {
	p, err := Parse(s)
	if err != nil {
		return Setting{}, err
	}
	st, err := NewSetting(p)
	if err != nil {
		return Setting{}, &ParseError{Input: s, Offset: err.(*ParseError).Offset, Reason: err.(*ParseError).Reason, Err: ErrSyntax}
	}
	return st, nil
}

// MustParseSetting is like [ParseSetting] but panics on error.
func MustParseSetting(s string) Setting {
	st, err := ParseSetting(s)
	if err != nil {
		panic(err)
	}
	return st
}

// Qubits returns the number of qubits.
func (s Setting) Qubits() int { return s.p.n }

// At returns the basis of qubit q.
func (s Setting) At(q int) Letter { return s.p.At(q) }

// Pauli returns the setting as a Pauli string with no identity letters.
func (s Setting) Pauli() String { return s.p }

// Words returns the symplectic words of the setting; they must not be
// modified.
func (s Setting) Words() (x, z []uint64) { return s.p.x, s.p.z }

// Equal reports whether s and o measure the same bases.
func (s Setting) Equal(o Setting) bool { return s.p.Equal(o.p) }

// Key returns a compact map key, as [String.Key].
func (s Setting) Key() string { return s.p.Key() }

// String returns the dense form, such as "XZZY".
func (s Setting) String() string { return s.p.String() }

// MarshalText returns the dense form.
func (s Setting) MarshalText() ([]byte, error) { return s.p.AppendText(nil), nil }

// UnmarshalText parses the dense form into s.
func (s *Setting) UnmarshalText(b []byte) error {
	t, err := ParseSetting(string(b))
	if err != nil {
		return err
	}
	*s = t
	return nil
}

// Covers reports whether s measures p: on every qubit p is the identity or
// equal to the setting's letter. It panics if the widths differ.
func (s Setting) Covers(p String) bool {
	mustSameWidth(s.p.n, p.n)
	for i := range p.x {
		if ((p.x[i]^s.p.x[i])|(p.z[i]^s.p.z[i]))&(p.x[i]|p.z[i]) != 0 {
			return false
		}
	}
	return true
}

// Sample returns the ±1 value that outcome b gives the covered string p: the
// product of (−1)^bit over p's support. It does not check coverage; a
// caller that has not checked [Setting.Covers] gets a meaningless value. It
// panics if the widths differ.
func (s Setting) Sample(p String, b Bits) int {
	mustSameWidth(s.p.n, p.n)
	c := 0
	for i := range p.x {
		c ^= bits.OnesCount64(b[i] & (p.x[i] | p.z[i]))
	}
	return 1 - 2*(c&1)
}
