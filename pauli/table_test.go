package pauli

import (
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"
)

// genTable returns a table of m strings of which about half are covered by s.
func genTable(rng *rand.Rand, s Setting, m int) (*Table, []String) {
	ps := make([]String, m)
	for i := range ps {
		ps[i] = genCovered(rng, s, 3/float64(s.Qubits()+1))
	}
	return TableOf(s.Qubits(), ps...), ps
}

func TestTableQueriesMatchReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for _, n := range testWidths {
		t.Run(fmt.Sprintf("n=%d", n), func(t *testing.T) {
			s := genSetting(rng, n)
			tab, ps := genTable(rng, s, 300)
			var want []int
			for r, p := range ps {
				if refCovers(s, p) {
					want = append(want, r)
				}
			}
			if got := tab.Covered(nil, s); !slices.Equal(got, want) {
				t.Fatalf("Covered(%s) = %v, want %v", s, got, want)
			}
			// Both strategies: with room for every row (branch-free writes)
			// and with exactly the room needed (bit-mask appends).
			for _, c := range []int{tab.Len() + 64, len(want)} {
				got := tab.Covered(make([]int, 0, c), s)
				if !slices.Equal(got, want) {
					t.Fatalf("Covered(%s) with cap %d = %v, want %v", s, c, got, want)
				}
			}
			// Covered appends to what dst already holds.
			if got := tab.Covered([]int{-1}, s); len(got) != len(want)+1 || got[0] != -1 {
				t.Fatalf("Covered did not append to dst")
			}
			mask := make([]bool, tab.Len())
			tab.coverMask(mask, s)
			for r, p := range ps {
				if mask[r] != refCovers(s, p) || tab.CoversRow(r, s) != mask[r] {
					t.Fatalf("CoverMask(%s)[%d] = %v, want %v for %s", s, r, mask[r], refCovers(s, p), p)
				}
			}
			b := genBits(rng, n)
			samples := make([]int8, len(want))
			tab.Samples(samples, want, b)
			for k, r := range want {
				if int(samples[k]) != refSample(ps[r], b) {
					t.Fatalf("Samples row %d (%s) bits %s = %d, want %d", r, ps[r], b.Format(n), samples[k], refSample(ps[r], b))
				}
				if got := 1 - 2*tab.Parity(r, b); got != refSample(ps[r], b) {
					t.Fatalf("Parity row %d = %d, want sample %d", r, got, refSample(ps[r], b))
				}
			}
			for r, p := range ps {
				if !tab.At(r).Equal(p) || tab.Weight(r) != refWeight(p) {
					t.Fatalf("row %d = %s (weight %d), want %s (weight %d)", r, tab.At(r), tab.Weight(r), p, refWeight(p))
				}
			}
		})
	}
}

func TestTableClone(t *testing.T) {
	a := TableOf(2, MustParse("XZ"))
	b := a.Clone()
	b.Append(MustParse("YY"))
	if a.Len() != 1 || b.Len() != 2 || a.Qubits() != 2 {
		t.Errorf("Clone shares rows: len %d and %d", a.Len(), b.Len())
	}
}

func TestTableQueriesDoNotAllocate(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	for _, n := range []int{20, 64, 200} {
		s := genSetting(rng, n)
		tab, _ := genTable(rng, s, 1000)
		dst := make([]int, 0, tab.Len())
		rows := tab.Covered(nil, s)
		mask := make([]bool, tab.Len())
		samples := make([]int8, len(rows))
		b := genBits(rng, n)
		for _, tc := range []struct {
			name string
			f    func()
		}{
			{"Covered", func() { dst = tab.Covered(dst[:0], s) }},
			{"CoverMask", func() { tab.coverMask(mask, s) }},
			{"Samples", func() { tab.Samples(samples, rows, b) }},
		} {
			if a := testing.AllocsPerRun(20, tc.f); a != 0 {
				t.Errorf("%s at n=%d: %v allocations per run, want 0", tc.name, n, a)
			}
		}
	}
}
