package symplectic

import "testing"

// TestCode checks the code of every qubit of the string "IXZY" repeated
// over two words, written out by hand: X sets x, Z sets z, Y sets both
// (the symplectic form, common practice since Gottesman's thesis).
func TestCode(t *testing.T) {
	var x, z [2]uint64
	want := make([]uint, 128)
	for q := range 128 {
		switch q % 4 {
		case 1: // X
			x[q/64] |= 1 << (q % 64)
		case 2: // Z
			z[q/64] |= 1 << (q % 64)
		case 3: // Y
			x[q/64] |= 1 << (q % 64)
			z[q/64] |= 1 << (q % 64)
		}
		want[q] = uint(q % 4)
	}
	for q := range 128 {
		if got := Code(x[:], z[:], q); got != want[q] {
			t.Errorf("Code(q=%d) = %d, want %d", q, got, want[q])
		}
	}
}
