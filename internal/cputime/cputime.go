// Package cputime measures the CPU time of the process for the benchmarks
// of the module. On a shared machine the CPU time per operation, reported
// beside the wall-clock ns/op, is the figure that does not depend on how
// busy the other cores are (run with GOMAXPROCS=1 for a single-core figure).
// It includes the garbage collector's work.
package cputime

import (
	"testing"
	"time"
)

// Report reports the process CPU time per operation since start (a value
// returned by [Now]) as the benchmark metric "cpu-ns/op". It reports nothing
// on systems where [Now] cannot measure.
func Report(b *testing.B, start time.Duration) {
	if t := Now(); t > 0 && b.N > 0 {
		b.ReportMetric(float64(t-start)/float64(b.N), "cpu-ns/op")
	}
}
