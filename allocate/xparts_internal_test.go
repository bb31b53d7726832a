package allocate

import (
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// TestXPartsCoveredMatchesDefinition checks the X-part buckets against the
// definition of an entangled setting's coverage (MATH §8): P is covered when
// the setting's circuit U maps it to ±(a Z-string), which [pauli.Setting.Diagonal]
// computes by conjugating P through U's tableau, one row at a time. The
// rows are Z-heavy random strings on 9 and 70 qubits (one and two words,
// many rows sharing an X part) and the settings are those of random
// commuting families drawn from the rows, so their groups hold enough
// Z-strings for the buckets to be used; the test also fails if they never
// are.
func TestXPartsCoveredMatchesDefinition(t *testing.T) {
	for _, n := range []int{9, 70} {
		rng := rand.New(rand.NewPCG(uint64(n), 17))
		letters := []pauli.Letter{pauli.I, pauli.I, pauli.I, pauli.I, pauli.Z, pauli.Z, pauli.Z, pauli.X, pauli.Y}
		m := 3000
		tab := pauli.NewTable(n, m)
		ps := make([]pauli.String, m)
		l := make([]pauli.Letter, n)
		for i := range m {
			for q := range l {
				l[q] = letters[rng.IntN(len(letters))]
			}
			ps[i] = pauli.FromLetters(l)
			tab.Append(ps[i])
		}
		ix := newXParts(tab)
		q := ix.query()
		used := 0
		for range 60 {
			var fam []pauli.String
			for _, k := range rng.Perm(m)[:400] {
				ok := true
				for _, f := range fam {
					if !f.Commutes(ps[k]) {
						ok = false
						break
					}
				}
				if ok {
					fam = append(fam, ps[k])
				}
			}
			s, err := pauli.NewFamilySetting(fam)
			if err != nil {
				t.Fatal(err)
			}
			if s.IsLocal() {
				continue
			}
			var want []int32
			for i, p := range ps {
				if _, _, ok := s.Diagonal(p); ok {
					want = append(want, int32(i))
				}
			}
			got, ok := q.appendCovered(nil, tab, s)
			if !ok {
				continue
			}
			used++
			slices.Sort(got)
			if !slices.Equal(got, want) {
				t.Fatalf("n=%d, setting %s: buckets give %d rows %v, definition %d rows %v", n, s, len(got), got, len(want), want)
			}
		}
		if used == 0 {
			t.Fatalf("n=%d: no setting went through the buckets", n)
		}
	}
}
