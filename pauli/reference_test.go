package pauli

// Letter-by-letter reference implementations. The word-wise code in this
// package is checked against these in table tests and fuzz tests.

// refMulTable[a][b] is the single-qubit product a·b = i^phase · letter,
// from XY = iZ, YZ = iX, ZX = iY and P² = I (Nielsen & Chuang, Quantum
// Computation and Quantum Information, §2.1.3, Pauli matrices; common
// practice).
var refMulTable = [4][4]struct {
	l  Letter
	ph Phase
}{
	I: {I: {I, 0}, X: {X, 0}, Y: {Y, 0}, Z: {Z, 0}},
	X: {I: {X, 0}, X: {I, 0}, Y: {Z, 1}, Z: {Y, 3}},
	Y: {I: {Y, 0}, X: {Z, 3}, Y: {I, 0}, Z: {X, 1}},
	Z: {I: {Z, 0}, X: {Y, 1}, Y: {X, 3}, Z: {I, 0}},
}

func refLetters(p String) []Letter {
	ls := make([]Letter, p.Qubits())
	for q := range ls {
		ls[q] = p.At(q)
	}
	return ls
}

func refMul(a, b String) (String, Phase) {
	la, lb := refLetters(a), refLetters(b)
	out := make([]Letter, len(la))
	var ph Phase
	for q := range la {
		e := refMulTable[la[q]][lb[q]]
		out[q] = e.l
		ph = (ph + e.ph) & 3
	}
	return FromLetters(out), ph
}

func refWeight(p String) int {
	w := 0
	for _, l := range refLetters(p) {
		if l != I {
			w++
		}
	}
	return w
}

// refCommutes counts qubits where both are non-identity and differ
// (MATH.md §1): an even count means the strings commute.
func refCommutes(a, b String) bool {
	la, lb := refLetters(a), refLetters(b)
	c := 0
	for q := range la {
		if la[q] != I && lb[q] != I && la[q] != lb[q] {
			c++
		}
	}
	return c%2 == 0
}

func refQubitwise(a, b String) bool {
	la, lb := refLetters(a), refLetters(b)
	for q := range la {
		if la[q] != I && lb[q] != I && la[q] != lb[q] {
			return false
		}
	}
	return true
}

func refCovers(s Setting, p String) bool {
	for q, l := range refLetters(p) {
		if l != I && l != s.At(q) {
			return false
		}
	}
	return true
}

func refSample(p String, b Bits) int {
	v := 1
	for q, l := range refLetters(p) {
		if l != I && b.Get(q) == 1 {
			v = -v
		}
	}
	return v
}
