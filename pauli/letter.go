package pauli

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

// letterOf returns the letter of the symplectic pair (x, z), each 0 or 1.
func letterOf(x, z uint64) Letter {
	return [4]Letter{I, X, Z, Y}[x|z<<1]
}

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
