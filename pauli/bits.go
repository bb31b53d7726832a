package pauli

import (
	"math/bits"
	"strconv"
)

// Bits is a measured bit-string: bit q (qubit q) is bit q%64 of word q/64.
// A bit 0 means eigenvalue +1, a bit 1 means −1. Bits carries no width; the
// functions that use it take the qubit count from the setting or string they
// are paired with. Bits beyond the last qubit must be zero.
type Bits []uint64

// NewBits returns an all-zero bit-string for n qubits.
func NewBits(n int) Bits { return make(Bits, Words(n)) }

// Get returns bit q.
func (b Bits) Get(q int) uint64 { return b[q>>6] >> (q & 63) & 1 }

// Set sets bit q to v (0 or 1).
func (b Bits) Set(q int, v uint64) {
	m := uint64(1) << (q & 63)
	b[q>>6] = b[q>>6]&^m | (v&1)<<(q&63)
}

// Parity returns the parity (0 or 1) of the bits of b selected by mask.
func (b Bits) Parity(mask []uint64) int {
	c := 0
	for i, m := range mask {
		c += bits.OnesCount64(b[i] & m)
	}
	return c & 1
}

// AppendText appends the n bits as '0' and '1', qubit 0 first.
func (b Bits) AppendText(dst []byte, n int) []byte {
	for q := range n {
		dst = append(dst, byte('0'+b.Get(q)))
	}
	return dst
}

// Format returns the n bits as text, qubit 0 first.
func (b Bits) Format(n int) string { return string(b.AppendText(nil, n)) }

// ParseBits parses a bit-string of '0' and '1' characters, qubit 0 first. The
// qubit count is the length of s.
func ParseBits(s string) (Bits, error) {
	b := NewBits(len(s))
	for q := 0; q < len(s); q++ {
		switch s[q] {
		case '0':
		case '1':
			b[q>>6] |= 1 << (q & 63)
		default:
			return nil, &ParseError{Input: s, Offset: q, Reason: "bit " + strconv.QuoteRune(rune(s[q])) + " is not 0 or 1", Err: ErrSyntax}
		}
	}
	return b, nil
}
