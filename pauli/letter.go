package pauli

import "github.com/shotplan/shotplan/internal/symplectic"

// Letter is a single-qubit Pauli operator.
type Letter uint8

// The four single-qubit Pauli operators.
const (
	I Letter = iota
	X
	Y
	Z
)

// String returns "I", "X", "Y" or "Z", or "?" for an invalid letter.
func (l Letter) String() string {
	if l > Z {
		return "?"
	}
	return string("IXYZ"[l])
}

// bits returns the symplectic (x, z) pair of l.
func (l Letter) bits() (x, z uint64) {
	switch l {
	case X:
		return 1, 0
	case Y:
		return 1, 1
	case Z:
		return 0, 1
	}
	return 0, 0
}

// codeLetter maps the symplectic code x | z<<1 of a qubit to its letter.
var codeLetter = [4]Letter{I, X, Z, Y}

// LetterAt returns the letter of qubit q of the string with symplectic words
// x, z: bit q%64 of word q/64 of each, the layout of [String.Words] and of
// [Table] rows. It reads the words directly, without building a String, for
// word-wise loops over many terms. It panics if q is beyond the words.
func LetterAt(x, z []uint64, q int) Letter { return codeLetter[symplectic.Code(x, z, q)] }

// letterFromByte parses one letter, accepting upper and lower case.
func letterFromByte(c byte) (Letter, bool) {
	switch c {
	case 'I', 'i':
		return I, true
	case 'X', 'x':
		return X, true
	case 'Y', 'y':
		return Y, true
	case 'Z', 'z':
		return Z, true
	}
	return 0, false
}
