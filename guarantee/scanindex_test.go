package guarantee

import (
	"math/rand/v2"
	"slices"
	"testing"
)

// checkIndex compares the anchor-pair index with pauli.Table.Covered, the
// reference scan of every term (itself checked letter by letter in package
// pauli).
func checkIndex(t *testing.T, seed uint64, n, m, k int) {
	rng := rand.New(rand.NewPCG(seed, 9))
	h := randomH(t, rng, n, m, min(n, 5))
	ix := newScanIndex(h.Table())
	settings, _ := randomPlan(rng, n, k, 1)
	var got []int32
	var want []int
	for _, s := range settings {
		got = ix.covered(got[:0], s)
		want = h.Table().Covered(want[:0], s)
		g := make([]int, len(got))
		for j, i := range got {
			g[j] = int(i)
		}
		slices.Sort(g)
		if !slices.Equal(g, want) {
			t.Fatalf("n=%d: index covers %v with %s, Table.Covered gives %v", n, g, s, want)
		}
	}
}

func TestScanIndex(t *testing.T) {
	for _, n := range []int{1, 2, 5, 63, 64, 65, 130} {
		checkIndex(t, uint64(n), n, 300, 40)
	}
}

func FuzzScanIndex(f *testing.F) {
	f.Add(uint64(1), uint8(3), uint8(20))
	f.Add(uint64(2), uint8(70), uint8(50))
	f.Fuzz(func(t *testing.T, seed uint64, n, m uint8) {
		checkIndex(t, seed, 1+int(n%140), 1+int(m), 10)
	})
}

// The scan allocates nothing once the destination has room.
func TestScanIndexAllocs(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 5))
	h := randomH(t, rng, 40, 2000, 4)
	ix := newScanIndex(h.Table())
	settings, _ := randomPlan(rng, 40, 5, 1)
	dst := make([]int32, 0, h.Len())
	if n := testing.AllocsPerRun(20, func() { dst = ix.covered(dst[:0], settings[0]) }); n != 0 {
		t.Errorf("scanIndex.covered allocates %v times per call, want 0", n)
	}
}
