package allocate

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// coverSplitMin is the least work, in settings times rows, that is split
// among cores: below it one core counts.
const coverSplitMin = 1 << 22

// splitCounts adds into cover the counts of n jobs (settings, for cover
// counting) over rows rows. newJob returns a worker's job function, which
// adds job j's counts into the array it is given; every worker gets its own
// function (for its own scratch) and its own array, and the jobs are handed
// out to up to GOMAXPROCS workers. The arrays are summed at the end: the
// counts are integers, so the result is the same whatever the split and the
// number of cores.
func splitCounts(cover []int, n, rows int, newJob func() func(j int, dst []int)) {
	workers := 1
	if n*rows >= coverSplitMin {
		workers = max(1, min(runtime.GOMAXPROCS(0), n))
	}
	if workers == 1 {
		job := newJob()
		for j := range n {
			job(j, cover)
		}
		return
	}
	var next atomic.Int64
	part := make([][]int, workers)
	var wg sync.WaitGroup
	for t := range workers {
		part[t] = make([]int, len(cover))
		job := newJob()
		wg.Add(1)
		go func(dst []int) {
			defer wg.Done()
			for {
				j := int(next.Add(1)) - 1
				if j >= n {
					return
				}
				job(j, dst)
			}
		}(part[t])
	}
	wg.Wait()
	for _, d := range part {
		for i, v := range d {
			cover[i] += v
		}
	}
}
