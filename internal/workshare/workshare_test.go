package workshare

import (
	"runtime"
	"sync/atomic"
	"testing"
)

// TestChunksCoverOnce checks, on 1, 2 and 3 goroutines, that every index
// of [0, n) is visited exactly once and that every chunk has the fixed
// boundaries [k·chunk, min((k+1)·chunk, n)) whatever the number of cores.
func TestChunksCoverOnce(t *testing.T) {
	for _, procs := range []int{1, 2, 3} {
		old := runtime.GOMAXPROCS(procs)
		for _, c := range []struct{ n, chunk int }{{0, 4}, {1, 4}, {10, 3}, {1000, 7}, {64, 64}, {65, 64}, {5, 0}} {
			seen := make([]atomic.Int32, c.n)
			Chunks(c.n, c.chunk, func(lo, hi int) {
				ch := max(c.chunk, 1)
				if lo%ch != 0 || hi != min(lo+ch, c.n) {
					t.Errorf("procs %d, n %d, chunk %d: chunk [%d, %d)", procs, c.n, c.chunk, lo, hi)
				}
				for i := lo; i < hi; i++ {
					seen[i].Add(1)
				}
			})
			for i := range seen {
				if v := seen[i].Load(); v != 1 {
					t.Errorf("procs %d, n %d, chunk %d: index %d visited %d times", procs, c.n, c.chunk, i, v)
				}
			}
		}
		runtime.GOMAXPROCS(old)
	}
}
