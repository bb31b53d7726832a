//go:build unix

package cputime

import (
	"syscall"
	"time"
)

// Now returns the user and system CPU time the process has used so far, or
// 0 when the system does not report it.
func Now() time.Duration {
	var ru syscall.Rusage
	if syscall.Getrusage(syscall.RUSAGE_SELF, &ru) != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
