package coverindex

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// randomSettings returns k uniformly random local settings on n qubits and,
// so that many terms are covered, the settings that complete the first k
// terms of h with Z.
func randomSettings(rng *rand.Rand, h *hamiltonian.Hamiltonian, k int) []pauli.Setting {
	n := h.Qubits()
	var out []pauli.Setting
	letters := make([]pauli.Letter, n)
	for range k {
		for q := range letters {
			letters[q] = pauli.X + pauli.Letter(rng.IntN(3))
		}
		out = append(out, pauli.Complete(pauli.FromLetters(letters), pauli.Z))
	}
	for i := range min(k, h.Len()) {
		out = append(out, pauli.Complete(h.Pauli(i), pauli.Z))
	}
	return out
}

// check compares the index with pauli.Table.Covered, the reference scan of
// every row (itself checked letter by letter in package pauli).
func check(t *testing.T, n, terms, k int, seed uint64) {
	t.Helper()
	h, err := hamiltonian.RandomLocal(n, terms, min(6, n), seed)
	if err != nil {
		t.Fatal(err)
	}
	tab := h.Table()
	ix := New(tab.Qubits(), tab.Len(), tab.Words)
	var got []int32
	var want []int
	for _, s := range randomSettings(rand.New(rand.NewPCG(seed, 7)), h, k) {
		x, z := s.Words()
		got = ix.AppendCovered(got[:0], x, z)
		want = tab.Covered(want[:0], s)
		g := make([]int, len(got))
		for j, r := range got {
			g[j] = int(r)
		}
		slices.Sort(g)
		if !slices.Equal(g, want) {
			t.Fatalf("n=%d: index covers %v with %s, Table.Covered gives %v", n, g, s, want)
		}
	}
}

// Registers of one, two and three words, in pair mode and beyond it, with
// terms up to weight 6 (past the four support qubits the index pre-filters
// on).
func TestIndexMatchesTable(t *testing.T) {
	for _, n := range []int{1, 2, 5, 63, 64, 65, 100, PairMaxQubits, PairMaxQubits + 1, 150} {
		t.Run(fmt.Sprintf("qubits=%d", n), func(t *testing.T) {
			check(t, n, min(400, 3*n*n), 40, uint64(n))
		})
	}
}

func FuzzIndex(f *testing.F) {
	f.Add(uint64(1), uint8(3), uint8(20))
	f.Add(uint64(2), uint8(70), uint8(50))
	f.Add(uint64(3), uint8(139), uint8(200))
	f.Fuzz(func(t *testing.T, seed uint64, n, m uint8) {
		q := 1 + int(n%140)
		check(t, q, min(1+int(m), 3*q*q), 10, seed)
	})
}

// A query allocates nothing once the destination has room.
func TestAppendCoveredAllocs(t *testing.T) {
	h, err := hamiltonian.RandomLocal(40, 2000, 4, 4)
	if err != nil {
		t.Fatal(err)
	}
	tab := h.Table()
	ix := New(tab.Qubits(), tab.Len(), tab.Words)
	x, z := pauli.Complete(h.Pauli(0), pauli.Z).Words()
	dst := make([]int32, 0, h.Len())
	if n := testing.AllocsPerRun(20, func() { dst = ix.AppendCovered(dst[:0], x, z) }); n != 0 {
		t.Errorf("AppendCovered allocates %v times per call, want 0", n)
	}
}
