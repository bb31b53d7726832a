package allocate

import (
	"cmp"
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"
)

// TestSortTermsParallel checks the concurrent sort of Derandomized.Init
// against the standard library's sort (slices.SortFunc), for lengths that
// split into one, two and an odd number of runs and on 1, 2, 3 and 5 cores.
// Keys repeat, so the order relies on the tie-break by index.
func TestSortTermsParallel(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, m := range []int{10, 1 << 14, 1<<15 + 7, 3<<14 + 1, 5<<14 + 3} {
		key := make([]int32, m)
		for i := range key {
			key[i] = rng.Int32N(int32(m / 4))
		}
		less := func(i, j int32) int {
			if c := cmp.Compare(key[i], key[j]); c != 0 {
				return c
			}
			return cmp.Compare(i, j)
		}
		want := make([]int32, m)
		for i := range want {
			want[i] = int32(rng.IntN(m))
		}
		in := slices.Clone(want)
		slices.SortFunc(want, less)
		for _, procs := range []int{1, 2, 3, 5} {
			old := runtime.GOMAXPROCS(procs)
			got := slices.Clone(in)
			sortTerms(got, less)
			runtime.GOMAXPROCS(old)
			if !slices.Equal(got, want) {
				t.Fatalf("%d keys on %d cores: order differs from slices.SortFunc", m, procs)
			}
		}
	}
}
