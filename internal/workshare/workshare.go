// Package workshare runs a loop over [0, n) in fixed chunks shared among
// GOMAXPROCS goroutines, for the scans that split by term or by setting.
package workshare

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// Chunks calls f(lo, hi) once for every chunk [lo, hi) of [0, n), the
// chunks being [0, chunk), [chunk, 2·chunk), …, the last one cut at n. The
// chunks are handed out in order to up to runtime.GOMAXPROCS(0) goroutines
// (the caller's alone when one is enough), so f must touch only what
// belongs to its chunk; the chunk boundaries never depend on the number of
// goroutines, so a result that is kept per chunk and combined in chunk
// order is the same on any number of cores. Chunks returns when every call
// has returned. A chunk below 1 counts as 1.
func Chunks(n, chunk int, f func(lo, hi int)) {
	PerWorker(n, chunk, Workers(n, chunk), func(int) func(lo, hi int) { return f })
}

// Workers returns the number of goroutines Chunks uses for n items in
// chunks of chunk: runtime.GOMAXPROCS(0), or the number of chunks if that
// is smaller, and at least 1.
func Workers(n, chunk int) int {
	chunk = max(chunk, 1)
	return max(1, min(runtime.GOMAXPROCS(0), (n+chunk-1)/chunk))
}

// PerWorker is Chunks for loops that keep state per goroutine (scratch
// space, partial counts added up afterwards): it runs workers goroutines
// (the caller's alone when workers ≤ 1), numbered 0 to workers−1; each
// first calls start with its number, once, and then calls the function
// start returned for each chunk it takes, the chunks handed out in order
// as Chunks does. So start(w) may set up what goroutine w alone writes.
// Which goroutine takes which chunk depends on timing: a result kept per
// goroutine must be combined so that it does not matter (integer sums, or
// per-chunk results). PerWorker returns when every call has returned.
func PerWorker(n, chunk, workers int, start func(w int) func(lo, hi int)) {
	if n <= 0 {
		return
	}
	chunk = max(chunk, 1)
	if workers < 2 {
		f := start(0)
		for lo := 0; lo < n; lo += chunk {
			f(lo, min(lo+chunk, n))
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := range workers {
		wg.Go(func() {
			f := start(w)
			for {
				lo := int(next.Add(int64(chunk))) - chunk
				if lo >= n {
					return
				}
				f(lo, min(lo+chunk, n))
			}
		})
	}
	wg.Wait()
}
