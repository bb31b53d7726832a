package pauli

import "testing"

func TestMulTable(t *testing.T) {
	for a := I; a <= Z; a++ {
		for b := I; b <= Z; b++ {
			got, ph := Mul(FromLetters([]Letter{a}), FromLetters([]Letter{b}))
			want := refMulTable[a][b]
			if got.At(0) != want.l || ph != want.ph {
				t.Errorf("Mul(%v, %v) = %s·%v, want %s·%v", a, b, ph, got, want.ph, want.l)
			}
		}
	}
}
