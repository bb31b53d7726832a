package estimate

import (
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

// TestCoverIndex compares the anchored index with pauli.Table.Covered, the
// plain scan, on random Hamiltonians of one and several words, in both the
// anchored and the scanning mode.
func TestCoverIndex(t *testing.T) {
	tests := []struct {
		name         string
		n, terms, k  int
		settings     int
		wantScanMode bool
	}{
		{"4 qubits, few terms", 4, 20, 3, 200, true},
		{"12 qubits, many terms", 12, 3000, 3, 300, false},
		{"70 qubits", 70, 2000, 4, 200, true},
		{"70 qubits, dense", 70, 20000, 2, 100, false},
		{"130 qubits", 130, 5000, 5, 100, true},
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range tests {
		h, err := hamiltonian.RandomLocal(tc.n, tc.terms, tc.k, 7)
		if err != nil {
			t.Fatal(err)
		}
		ix := newCoverIndex(h.Table())
		if ix.scan != tc.wantScanMode {
			t.Errorf("%s: scan mode = %v, want %v", tc.name, ix.scan, tc.wantScanMode)
		}
		// Force the other mode as well.
		for _, scan := range []bool{false, true} {
			ix.scan = scan
			total := 0
			for range tc.settings {
				s := randomSetting(rng, tc.n)
				if rng.IntN(4) == 0 {
					s = pauli.Complete(h.Pauli(rng.IntN(h.Len())), pauli.Letter(1+rng.IntN(3)))
				}
				got := ix.covered(nil, s)
				slices.Sort(got)
				want := h.Table().Covered(nil, s)
				if !slices.Equal(got, want) {
					t.Fatalf("%s (scan %v): covered(%s) = %v, want %v", tc.name, scan, s, got, want)
				}
				total += len(got)
				for _, i := range got {
					b := pauli.NewBits(tc.n)
					for q := range tc.n {
						b.Set(q, rng.Uint64())
					}
					if p, want := ix.parity(i, b), h.Table().Parity(i, b); p != want {
						t.Fatalf("%s: parity(%d, %s) = %d, want %d", tc.name, i, b.Format(tc.n), p, want)
					}
				}
			}
			if total == 0 {
				t.Errorf("%s: no setting covered any term; the test checks nothing", tc.name)
			}
		}
	}
}
