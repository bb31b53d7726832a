package allocate

import (
	"math/rand/v2"
	"runtime"
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
		ix := newXParts(n, m, tab.Words)
		q := ix.query()
		// Scans split in parts of 4 bucket words or buckets (on up to
		// GOMAXPROCS goroutines, at least 2 here) must give the same rows.
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(max(2, runtime.GOMAXPROCS(0))))
		q.split, q.splitMin = n == 70, 4
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
			got, ok := q.appendCovered(nil, s, func(r int32) bool { return tab.CoversRow(int(r), s) })
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

// TestXPartsCommutingMatchesDefinition checks xQuery.commuting against the
// definition: a row belongs to the set when it commutes with every
// generator, tested pair by pair with [pauli.String.Commutes]. The rows
// are drawn as in TestXPartsCoveredMatchesDefinition, a third of them
// Z-strings, and the generators are independent commuting rows; the test
// also fails if the buckets are never used.
func TestXPartsCommutingMatchesDefinition(t *testing.T) {
	for _, n := range []int{9, 70} {
		rng := rand.New(rand.NewPCG(uint64(n), 29))
		letters := []pauli.Letter{pauli.I, pauli.I, pauli.I, pauli.I, pauli.Z, pauli.Z, pauli.Z, pauli.X, pauli.Y}
		m := 3000
		w := pauli.Words(n)
		tab := pauli.NewTable(n, m)
		ps := make([]pauli.String, m)
		words := make([]uint64, 0, 2*w*m)
		l := make([]pauli.Letter, n)
		for i := range m {
			for q := range l {
				l[q] = letters[rng.IntN(len(letters))]
				if i%3 == 0 && l[q] != pauli.I {
					l[q] = pauli.Z // a third of the rows are Z-strings
				}
			}
			ps[i] = pauli.FromLetters(l)
			tab.Append(ps[i])
			x, z := ps[i].Words()
			words = append(append(words, x...), z...)
		}
		q := newXParts(n, m, tab.Words).query()
		defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(max(2, runtime.GOMAXPROCS(0))))
		q.split, q.splitMin = n == 9, 4 // split scans as in the test above
		mask := make([]uint64, (m+63)/64)
		used := 0
		for range 60 {
			var gens []pauli.String
			var gw []uint64
			for _, k := range rng.Perm(m)[:400] {
				ok := len(gens) < min(n, 64)
				for _, f := range gens {
					ok = ok && f.Commutes(ps[k])
				}
				if !ok {
					continue
				}
				// Keep independent generators only: the span must grow.
				if !independentOf(gens, ps[k]) {
					continue
				}
				gens = append(gens, ps[k])
				x, z := ps[k].Words()
				gw = append(append(gw, x...), z...)
			}
			if !q.commuting(mask, gw, len(gens), words) {
				continue
			}
			used++
			for i, p := range ps {
				want := true
				for _, f := range gens {
					want = want && f.Commutes(p)
				}
				if got := mask[i>>6]>>(i&63)&1 == 1; got != want {
					t.Fatalf("n=%d, %d generators: row %d (%s) in set %v, commutes with all %v", n, len(gens), i, p, got, want)
				}
			}
		}
		if used == 0 {
			t.Fatalf("n=%d: no generator set went through the buckets", n)
		}
	}
}

// independentOf reports whether p is not a product of gens (up to phase),
// by Gaussian elimination on the symplectic vectors.
func independentOf(gens []pauli.String, p pauli.String) bool {
	n := p.Qubits()
	w := pauli.Words(n)
	rows := make([][]uint64, 0, len(gens)+1)
	for _, g := range append(slices.Clone(gens), p) {
		x, z := g.Words()
		rows = append(rows, append(slices.Clone(x), z...))
	}
	rank := 0
	for c := 0; c < 2*n && rank < len(rows); c++ {
		cw, cb := c/64, uint64(1)<<(c%64)
		if c >= n {
			cw, cb = w+(c-n)/64, uint64(1)<<((c-n)%64)
		}
		piv := -1
		for r := rank; r < len(rows); r++ {
			if rows[r][cw]&cb != 0 {
				piv = r
				break
			}
		}
		if piv < 0 {
			continue
		}
		rows[piv], rows[rank] = rows[rank], rows[piv]
		for r := range rows {
			if r != rank && rows[r][cw]&cb != 0 {
				for j := range rows[r] {
					rows[r][j] ^= rows[rank][j]
				}
			}
		}
		rank++
	}
	return rank == len(rows)
}
