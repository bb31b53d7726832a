package pauli

import (
	"errors"
	"math/bits"
	"strconv"
	"strings"
)

// Setting is a measurement setting of one of two kinds.
//
// A local setting puts one of X, Y, Z on every qubit: each qubit is rotated
// into its basis and read out. It covers a string that, on every qubit, is
// the identity or the setting's letter.
//
// An entangled setting (made by [NewFamilySetting]) measures a generally
// commuting family: the family's diagonalising Clifford circuit U (see
// [Diagonalize]) runs before every qubit is read in the Z basis. It covers a
// string that U maps to ±(a Z-string) — every product of the family's
// members, and possibly more.
//
// [Setting.Covers], [Setting.Sample], [Setting.Diagonal], [Setting.Circuit],
// [Setting.Equal], [Setting.Key], the text form and the coverage queries of
// [Table] are defined for both kinds. [Setting.At], [Setting.Pauli] and
// [Setting.Words] describe a setting by one letter per qubit, which an
// entangled setting does not have: they panic on one (a programmer error;
// check [Setting.IsLocal] first).
//
// A Setting is an immutable value; its zero value is the local setting on
// zero qubits.
type Setting struct {
	p   String     // local: the letters; entangled: only the width n
	fam *entangled // nil for a local setting
}

// entangled is the shared, immutable part of an entangled setting.
type entangled struct {
	gens []String // independent generators, in the order Diagonalize chose them
	d    *Diagonalization
	key  string
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

// ParseSetting parses the text form of [Setting.String]: a dense local
// setting such as "XZZY", where the identity letter is an error, or the
// generators of an entangled setting joined by '|', such as "XXII|ZZII",
// which [NewFamilySetting] turns into a setting (so a family that commutes
// qubit-wise reads back as a local setting).
func ParseSetting(s string) (Setting, error) {
	if strings.IndexByte(s, '|') >= 0 {
		return parseFamily(s)
	}
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

// IsLocal reports whether s is a local setting (one letter per qubit, no
// entangling gates).
func (s Setting) IsLocal() bool { return s.fam == nil }

// mustLocal panics for an entangled setting: the caller asked for letters it
// does not have.
func (s Setting) mustLocal(method string) {
	if s.fam != nil {
		panic("pauli: Setting." + method + " called on entangled setting " + s.String() + "; check IsLocal first")
	}
}

// At returns the basis of qubit q. It panics if s is entangled or q is out
// of range.
func (s Setting) At(q int) Letter {
	s.mustLocal("At")
	return s.p.At(q)
}

// Pauli returns a local setting as a Pauli string with no identity letters.
// It panics if s is entangled.
func (s Setting) Pauli() String {
	s.mustLocal("Pauli")
	return s.p
}

// Words returns the symplectic words of a local setting; they must not be
// modified. It panics if s is entangled.
func (s Setting) Words() (x, z []uint64) {
	s.mustLocal("Words")
	return s.p.x, s.p.z
}

// Equal reports whether s and o are the same setting: both local with the
// same letters, or both entangled with the same generators in the same order
// (and so the same circuit).
func (s Setting) Equal(o Setting) bool {
	switch {
	case s.fam == nil && o.fam == nil:
		return s.p.Equal(o.p)
	case s.fam == nil || o.fam == nil:
		return false
	}
	return s.p.n == o.p.n && s.fam.key == o.fam.key
}

// Key returns a compact map key that identifies s among settings of the
// same width: [String.Key] of the letters for a local setting. The key of an
// entangled setting has a different length from every local key of its
// width, so the two kinds never collide.
func (s Setting) Key() string {
	if s.fam != nil {
		return s.fam.key
	}
	return s.p.Key()
}

// String returns the text form: the dense letters, such as "XZZY", for a
// local setting; the dense generators joined by '|', such as "XXII|ZZII|IIZZ",
// for an entangled one. [ParseSetting] reads both back.
func (s Setting) String() string { return string(s.AppendText(nil)) }

// AppendText appends the text form of s to b.
func (s Setting) AppendText(b []byte) []byte {
	if s.fam == nil {
		return s.p.AppendText(b)
	}
	for i, g := range s.fam.gens {
		if i > 0 {
			b = append(b, '|')
		}
		b = g.AppendText(b)
	}
	return b
}

// MarshalText returns the text form.
func (s Setting) MarshalText() ([]byte, error) { return s.AppendText(nil), nil }

// UnmarshalText parses the text form into s.
func (s *Setting) UnmarshalText(b []byte) error {
	t, err := ParseSetting(string(b))
	if err != nil {
		return err
	}
	*s = t
	return nil
}

// Covers reports whether s measures p. For a local setting, on every qubit
// p is the identity or equal to the setting's letter; for an entangled one,
// the circuit maps p to ±(a Z-string). It panics if the widths differ.
func (s Setting) Covers(p String) bool {
	mustSameWidth(s.p.n, p.n)
	if s.fam != nil {
		return s.fam.d.Diagonalizes(p)
	}
	for i := range p.x {
		if ((p.x[i]^s.p.x[i])|(p.z[i]^s.p.z[i]))&(p.x[i]|p.z[i]) != 0 {
			return false
		}
	}
	return true
}

// Sample returns the ±1 value that outcome b gives the covered string p. For
// a local setting it is the product of (−1)^bit over p's support; for an
// entangled one, the sign times (−1) to the parity of b on the support of
// p's Z-image (see [Setting.Diagonal]). It does not check coverage; a
// caller that has not checked [Setting.Covers] gets a meaningless value. It
// panics if the widths differ. On an entangled setting it conjugates p
// through the circuit's tableau, and allocates; callers sampling many
// outcomes should take the image from [Setting.Diagonal] once.
func (s Setting) Sample(p String, b Bits) int {
	mustSameWidth(s.p.n, p.n)
	if s.fam != nil {
		z, sign, ok := s.fam.d.Diagonal(p)
		if !ok {
			return 1
		}
		return sign * (1 - 2*b.Parity(z.z))
	}
	c := 0
	for i := range p.x {
		c ^= bits.OnesCount64(b[i] & (p.x[i] | p.z[i]))
	}
	return 1 - 2*(c&1)
}

// NewFamilySetting returns the setting that measures a commuting family in
// one shot: the family's diagonalising circuit from [Diagonalize], then a Z
// readout of every qubit. The setting keeps the family's independent
// generators ([Diagonalization.generators]), in order; the circuit depends
// only on them, so [ParseSetting] of the text form rebuilds the same circuit.
//
// A family that commutes qubit-wise gives a local setting instead: its
// letters, and Z on qubits no member touches. It measures exactly what the
// one-qubit circuit of [Diagonalize] would, through the local fast paths.
//
// It returns the error of [Diagonalize] (wrapping [ErrNotCommuting] for two
// members that do not commute), or an error if no member differs from the
// identity.
func NewFamilySetting(family []String) (Setting, error) {
	gi, err := generators(family)
	if err != nil {
		return Setting{}, err
	}
	if len(gi) == 0 {
		return Setting{}, errors.New("pauli: every member is the identity")
	}
	n := family[0].n
	gens := make([]String, len(gi))
	union := Identity(n)
	qwc := true
	for k, i := range gi {
		gens[k] = family[i].Clone()
		if !union.QubitwiseCommutes(gens[k]) {
			qwc = false
		}
		for j := range union.x {
			union.x[j] |= gens[k].x[j]
			union.z[j] |= gens[k].z[j]
		}
	}
	if qwc {
		return Complete(union, Z), nil
	}
	// The circuit depends only on the generators; diagonalising them alone
	// gives the circuit the text form reads back to.
	d, err := Diagonalize(gens)
	if err != nil {
		return Setting{}, err
	}
	// The key: every generator's words, then one byte, so its length
	// (16·words·r + 1) differs from a local key's (16·words).
	var b []byte
	for _, g := range gens {
		b = append(b, g.Key()...)
	}
	b = append(b, '|')
	return Setting{p: String{n: n}, fam: &entangled{gens: gens, d: d, key: string(b)}}, nil
}

// parseFamily parses generators joined by '|'.
func parseFamily(s string) (Setting, error) {
	var gens []String
	off := 0
	for part := range strings.SplitSeq(s, "|") {
		p, err := Parse(part)
		if err != nil {
			pe := err.(*ParseError)
			return Setting{}, &ParseError{Input: s, Offset: off + pe.Offset, Reason: pe.Reason, Err: pe.Err}
		}
		if len(gens) > 0 && p.n != gens[0].n {
			return Setting{}, &ParseError{Input: s, Offset: off, Reason: "generator " + strconv.Itoa(len(gens)) + " has " + strconv.Itoa(p.n) + " qubits, want " + strconv.Itoa(gens[0].n), Err: ErrSyntax}
		}
		gens = append(gens, p)
		off += len(part) + 1
	}
	st, err := NewFamilySetting(gens)
	if err != nil {
		return Setting{}, &ParseError{Input: s, Offset: 0, Reason: strings.TrimPrefix(err.Error(), "pauli: "), Err: ErrSyntax}
	}
	return st, nil
}

// Diagonalization returns the diagonalisation behind an entangled setting,
// or nil for a local one. It is shared and immutable.
func (s Setting) Diagonalization() *Diagonalization {
	if s.fam == nil {
		return nil
	}
	return s.fam.d
}

// Circuit returns the basis-change circuit that runs before every qubit is
// read in the Z basis. For an entangled setting it is the family's circuit
// (shared; must not be modified); for a local one it is H on qubits read in
// X and S† then H on qubits read in Y (a new circuit), which maps X and Y to
// +Z.
func (s Setting) Circuit() *Circuit {
	if s.fam != nil {
		return s.fam.d.Circuit()
	}
	c := NewCircuit(s.p.n)
	for q := range s.p.n {
		switch s.p.At(q) {
		case Y:
			c.Sdg(q).H(q)
		case X:
			c.H(q)
		}
	}
	return c
}

// Diagonal reports whether s covers p and, if so, returns the Z-string z and
// the sign with which p is read: the sample of p from outcome b is
// sign·(−1)^(parity of b on z's support). For a local setting z is Z on p's
// support and the sign is +1. It panics if the widths differ.
func (s Setting) Diagonal(p String) (z String, sign int, ok bool) {
	mustSameWidth(s.p.n, p.n)
	if s.fam != nil {
		return s.fam.d.Diagonal(p)
	}
	if !s.Covers(p) {
		return String{}, 0, false
	}
	z = Identity(p.n)
	for i := range z.z {
		z.z[i] = p.x[i] | p.z[i]
	}
	return z, 1, true
}
