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

// TestPerWorkerState checks that PerWorker calls start once per goroutine
// with the numbers 0 to workers−1, that each chunk goes to exactly one
// goroutine with the fixed boundaries, and that per-goroutine partial sums
// (written without synchronisation, each goroutine its own) add up to the
// plain sum n(n−1)/2, for 1, 2 and 3 goroutines and workers ≤ 1.
func TestPerWorkerState(t *testing.T) {
	for _, procs := range []int{1, 2, 3} {
		old := runtime.GOMAXPROCS(procs)
		for _, c := range []struct{ n, chunk, workers int }{{0, 4, 2}, {1, 4, 3}, {10, 3, 0}, {1000, 7, 3}, {1000, 7, 1}, {65, 64, 2}} {
			workers := c.workers
			if workers == 0 {
				workers = Workers(c.n, c.chunk)
			}
			slots := max(workers, 1)
			starts := make([]atomic.Int32, slots)
			sums := make([]int, slots)
			PerWorker(c.n, c.chunk, workers, func(w int) func(lo, hi int) {
				if w < 0 || w >= slots {
					t.Errorf("procs %d, %+v: goroutine number %d", procs, c, w)
					return func(int, int) {}
				}
				starts[w].Add(1)
				return func(lo, hi int) {
					if lo%c.chunk != 0 || hi != min(lo+c.chunk, c.n) {
						t.Errorf("procs %d, %+v: chunk [%d, %d)", procs, c, lo, hi)
					}
					for i := lo; i < hi; i++ {
						sums[w] += i
					}
				}
			})
			total := 0
			for w := range slots {
				total += sums[w]
				if s := starts[w].Load(); c.n > 0 && s != 1 {
					t.Errorf("procs %d, %+v: start(%d) called %d times", procs, c, w, s)
				}
			}
			if want := c.n * (c.n - 1) / 2; total != want {
				t.Errorf("procs %d, %+v: partial sums add up to %d, want %d", procs, c, total, want)
			}
		}
		runtime.GOMAXPROCS(old)
	}
}

// TestWorkers checks the goroutine count: GOMAXPROCS, at most the number of
// chunks, at least 1.
func TestWorkers(t *testing.T) {
	old := runtime.GOMAXPROCS(3)
	defer runtime.GOMAXPROCS(old)
	for _, c := range []struct{ n, chunk, want int }{{0, 4, 1}, {4, 4, 1}, {5, 4, 2}, {100, 4, 3}, {100, 0, 3}} {
		if got := Workers(c.n, c.chunk); got != c.want {
			t.Errorf("Workers(%d, %d) = %d, want %d", c.n, c.chunk, got, c.want)
		}
	}
}
