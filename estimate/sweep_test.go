package estimate

import (
	"math/bits"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

func randomSetting(rng *rand.Rand, n int) pauli.Setting {
	ls := make([]pauli.Letter, n)
	for q := range ls {
		ls[q] = pauli.Letter(1 + rng.IntN(3))
	}
	s, err := pauli.NewSetting(pauli.FromLetters(ls))
	if err != nil {
		panic(err)
	}
	return s
}

// TestGroupSetsCovering compares the bit-set search for the settings that
// cover a term with pauli.Setting.Covers applied to every group, on random
// Hamiltonians of one and several words and group counts around multiples
// of 64.
func TestGroupSetsCovering(t *testing.T) {
	tests := []struct {
		name        string
		n, terms, k int
		groups      int
	}{
		{"4 qubits, 1 group", 4, 30, 3, 1},
		{"6 qubits, 64 groups", 6, 200, 3, 64},
		{"12 qubits, 200 groups", 12, 1000, 3, 200},
		{"70 qubits, 129 groups", 70, 1000, 3, 129},
		{"130 qubits, 300 groups", 130, 500, 2, 300},
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range tests {
		h, err := hamiltonian.RandomLocal(tc.n, tc.terms, tc.k, 7)
		if err != nil {
			t.Fatal(err)
		}
		rec := NewRecords(tc.n)
		for g := range tc.groups {
			s := randomSetting(rng, tc.n)
			if g%5 == 0 {
				s = pauli.Complete(h.Pauli(rng.IntN(h.Len())), pauli.Letter(1+rng.IntN(3)))
			}
			rec.Add(s, pauli.NewBits(tc.n))
		}
		sw := newSweep(rec, h.Table())
		pairs := 0
		for i := range h.Len() {
			var got []int32
			for k := range sw.words {
				for v := sw.covering(sw.rows(i), k); v != 0; v &= v - 1 {
					got = append(got, int32(k<<6+bits.TrailingZeros64(v)))
				}
			}
			var want []int32
			shots := 0
			for g := range rec.Groups() {
				if rec.Setting(g).Covers(h.Pauli(i)) {
					want = append(want, int32(g))
					shots += rec.GroupLen(g)
				}
			}
			if n := coverOf(sw, got); n != shots {
				t.Errorf("%s: %s: %d shots in the covering groups, want %d", tc.name, h.Pauli(i), n, shots)
			}
			if !slices.Equal(got, want) {
				t.Fatalf("%s: covering(%s) = %v, want %v", tc.name, h.Pauli(i), got, want)
			}
			pairs += len(got)
		}
		if pairs == 0 {
			t.Errorf("%s: no group covers any term; the case checks nothing", tc.name)
		}
	}
}

// coverOf returns the number of shots of the groups gs.
func coverOf(sw *sweep, gs []int32) int {
	n := 0
	for _, g := range gs {
		n += sw.off[g+1] - sw.off[g]
	}
	return n
}
