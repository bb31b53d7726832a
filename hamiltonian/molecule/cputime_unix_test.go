//go:build unix

package molecule

import (
	"syscall"
	"time"
)

// cpuTime returns the user and system CPU time of the process, so that
// benchmarks can report CPU time per operation beside wall-clock time on a
// busy machine.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
