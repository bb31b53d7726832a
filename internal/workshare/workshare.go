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
	if n <= 0 {
		return
	}
	chunk = max(chunk, 1)
	workers := min(runtime.GOMAXPROCS(0), (n+chunk-1)/chunk)
	if workers < 2 {
		for lo := 0; lo < n; lo += chunk {
			f(lo, min(lo+chunk, n))
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
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
