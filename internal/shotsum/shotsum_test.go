package shotsum

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// TestZCacheSameSums checks that taking a shot's Z from the cache changes
// no bit of the sums: an accumulator with the cache and one whose groups
// never ask it get the same sums, on a plan whose settings cover many
// terms (the cache's case) with outcomes that repeat (hits, and batches
// with few misses), outcomes that do not (a setting that stops asking)
// and a mix. The sums themselves are checked against Grouped and a
// shot-by-shot reference in package estimate.
func TestZCacheSameSums(t *testing.T) {
	const n = 16
	h, err := hamiltonian.RandomLocal(n, 300, 2, 5)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(5, 6))
	var settings []pauli.Setting
	letters := make([]byte, n)
	for range 4 {
		for q := range letters {
			letters[q] = "XYZ"[rng.IntN(3)]
		}
		settings = append(settings, pauli.MustParseSetting(string(letters)))
	}
	shots := []int{6000, 6000, 700, 1}
	few := make([]pauli.Bits, 5)
	for k := range few {
		few[k] = pauli.Bits{rng.Uint64() & (1<<n - 1)}
	}
	var order []int
	for k, c := range shots {
		for range c {
			order = append(order, k)
		}
	}
	rng.Shuffle(len(order), func(i, j int) { order[i], order[j] = order[j], order[i] })
	outs := make([]pauli.Bits, len(order))
	for j, k := range order {
		switch {
		case k == 0 || (k == 2 && rng.IntN(2) == 0):
			outs[j] = few[rng.IntN(len(few))]
		default:
			outs[j] = pauli.Bits{rng.Uint64() & (1<<n - 1)}
		}
	}
	run := func(cache bool) *Sums {
		s, err := New(h, settings, shots)
		if err != nil {
			t.Fatal(err)
		}
		a := make([]float64, h.Len())
		for i, c := range s.Cover {
			if c > 0 {
				a[i] = h.Coeff(i) / float64(c)
			}
		}
		s.SetWeights(a)
		for _, g := range s.Groups {
			g.noCache = !cache
		}
		for j, k := range order {
			if err := s.Add(settings[k], outs[j]); err != nil {
				t.Fatal(err)
			}
		}
		s.Flush()
		return s
	}
	with, without := run(true), run(false)
	same := func(a, b float64) bool { return math.Float64bits(a) == math.Float64bits(b) }
	for k, g := range with.Groups {
		o := without.Groups[k]
		if len(g.Kept) < zCacheMinTerms && k < 3 {
			t.Fatalf("setting %d covers %d weighted terms, too few for the cache", k, len(g.Kept))
		}
		if !same(g.Shift, o.Shift) || !same(g.Sum, o.Sum) || !same(g.SumSq, o.SumSq) || g.T != o.T ||
			g.FoldT != o.FoldT || g.FoldSum != o.FoldSum || g.FoldSq != o.FoldSq {
			t.Errorf("setting %d: sums with the cache %+v, without %+v", k, *g, *o)
		}
	}
	for i := range with.Ones {
		if with.Ones[i] != without.Ones[i] || with.FoldOnes[0][i] != without.FoldOnes[0][i] || with.FoldCnt[1][i] != without.FoldCnt[1][i] {
			t.Errorf("term %d: counts differ with the cache", i)
		}
	}
	if g := with.Groups[0]; g.zHit < g.zLook*9/10 {
		t.Errorf("repeated outcomes: %d cache hits of %d lookups", g.zHit, g.zLook)
	}
	if g := with.Groups[1]; !g.noCache {
		t.Errorf("outcomes that do not repeat: the setting still asks the cache (%d hits of %d)", g.zHit, g.zLook)
	}
}
