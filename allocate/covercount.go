package allocate

import "github.com/shotplan/shotplan/internal/workshare"

// coverSplitMin is the least work, in settings times rows, that is split
// among cores: below it one core counts.
const coverSplitMin = 1 << 22

// splitCounts adds into cover the counts of n jobs (settings, for cover
// counting) over rows rows. newJob returns a worker's job function, which
// adds job j's counts into the array it is given; every worker gets its own
// function (for its own scratch, made in its goroutine) and its own array
// (the first worker's is cover itself), and the jobs are handed out to up
// to GOMAXPROCS workers (workshare.PerWorker). The other arrays are added
// to cover at the end: the counts are integers, so the result is the same
// whatever the split and the number of cores.
func splitCounts(cover []int, n, rows int, newJob func() func(j int, dst []int)) {
	workers := 1
	if n*rows >= coverSplitMin {
		workers = workshare.Workers(n, 1)
	}
	part := make([][]int, workers)
	workshare.PerWorker(n, 1, workers, func(w int) func(lo, hi int) {
		dst := cover
		if w > 0 {
			dst = make([]int, len(cover))
			part[w] = dst
		}
		job := newJob()
		return func(lo, hi int) {
			for j := lo; j < hi; j++ {
				job(j, dst)
			}
		}
	})
	for _, d := range part[1:] {
		for i, v := range d {
			cover[i] += v
		}
	}
}
