// Package cputime measures the CPU time of the process for the benchmarks
// of the module. On a shared machine the CPU time per operation, reported
// beside the wall-clock ns/op, is the figure that does not depend on how
// busy the other cores are (run with GOMAXPROCS=1 for a single-core figure).
// It includes the garbage collector's work.
package cputime

import (
	"runtime"
	"testing"
	"time"
)

// Report reports the process CPU time per operation since start (a value
// returned by [Now]) as the benchmark metric "cpu-ns/op", and the
// GOMAXPROCS the operations ran with as "procs". It reports no CPU time on
// systems where [Now] cannot measure.
//
// The procs metric is there because the label can be wrong: go test runs
// every benchmark once before it sets the first value of -cpu, at the
// GOMAXPROCS its test phase left (the last value of -cpu), and for a
// benchmark that loops with b.Loop, or any benchmark run with -benchtime 1x,
// that run is the one reported under the first value. With -cpu 1,2 the
// line labelled 1 then ran on 2 procs; run each value on its own
// (-cpu 1, then -cpu 2) or read procs.
func Report(b *testing.B, start time.Duration) {
	if t := Now(); t > 0 && b.N > 0 {
		b.ReportMetric(float64(t-start)/float64(b.N), "cpu-ns/op")
	}
	b.ReportMetric(float64(runtime.GOMAXPROCS(0)), "procs")
}
